"""The chain compared with anchors kept outside the database: checkpoints and signed records.

Plain ``audit`` recomputes every hash from the rows it reads, so a store rewritten wholesale
(triggers dropped, a verdict changed, every later hash recomputed) passes it. An anchor is a
statement the rewriter cannot change: a signed checkpoint (every record hash up to its head) or a
signed record written with ``--record`` (the head before it, and its own result). Each anchor
that disagrees with the store is a finding; the first record known to disagree is named.
"""

from __future__ import annotations

import json
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from speccheck.records.store import GENESIS_HASH, AuditFinding, AuditResult, Record

__all__ = ["Anchor", "check_anchors", "load_anchors"]

# result keys that a signed record adds to what the store keeps
_RECORD_ONLY_KEYS = ("records_chain", "software", "created")


@dataclass(frozen=True)
class Anchor:
    """What one outside file states about the store."""

    source: str  # the file it was read from
    records: int  # how many records the store held
    head_hash: str  # the hash of the last of them
    record_hashes: tuple[str, ...] = ()  # a checkpoint: the hash of every one of them
    own_sha256: str | None = None  # a signed record: its own SHA-256, as the store keeps it
    own_result: Mapping[str, Any] | None = None  # and the result it attaches


def _stripped(result: Mapping[str, Any]) -> dict[str, Any]:
    return {k: v for k, v in result.items() if k not in _RECORD_ONLY_KEYS}


def _chain_findings(rows: Sequence[Record], a: Anchor) -> list[AuditFinding]:
    """The stored hashes against the anchor's: the first record that differs, or a cut."""
    hashes = a.record_hashes
    for i, h in enumerate(hashes[: len(rows)]):
        if rows[i].record_hash != h:
            return [
                AuditFinding(
                    rows[i].id,
                    "anchor",
                    f"record {rows[i].id} disagrees with {a.source}: its hash differs, so the "
                    f"chain was rewritten from record {rows[i].id} on",
                )
            ]
    if a.records > len(rows):
        return [
            AuditFinding(
                len(rows) + 1,
                "anchor",
                f"{a.source} states {a.records} records, the store holds {len(rows)}: records "
                f"{len(rows) + 1}–{a.records} were removed",
            )
        ]
    if not hashes and a.records:
        stored = rows[a.records - 1].record_hash
        if stored != a.head_hash:
            return [
                AuditFinding(
                    rows[a.records - 1].id,
                    "anchor",
                    f"record {rows[a.records - 1].id} disagrees with {a.source}: it was the "
                    "head when that record was signed, and its hash differs (the chain up to it "
                    "was rewritten)",
                )
            ]
    return []


def _own_record_findings(rows: Sequence[Record], a: Anchor) -> list[AuditFinding]:
    if a.own_sha256 is None or a.own_result is None:
        return []
    mine = [r for r in rows if r.report_sha256 == a.own_sha256]
    if not mine:
        return [
            AuditFinding(
                a.records + 1,
                "anchor",
                f"no record in the store is {a.source} (none carries its SHA-256): its record "
                "was removed or rewritten",
            )
        ]
    r = mine[0]
    try:
        stored = json.loads(r.result_json)
    except ValueError:
        return []  # reported as corrupt by the chain audit
    if _stripped(stored) == _stripped(a.own_result):
        return []
    return [
        AuditFinding(
            r.id,
            "anchor",
            f"record {r.id} disagrees with {a.source}: the stored result differs from the "
            f"signed one (verdict stored {r.verdict!r}, signed {a.own_result.get('verdict')!r})",
        )
    ]


def check_anchors(rows: Sequence[Record], anchors: Sequence[Anchor], out: AuditResult) -> None:
    """Add a finding for every anchor that disagrees, then one naming the first record."""
    found: list[AuditFinding] = []
    for a in anchors:
        if a.records == 0 and a.head_hash != GENESIS_HASH:
            continue
        found += _chain_findings(rows, a)
        found += _own_record_findings(rows, a)
    out.findings.extend(found)
    out.anchors = len(anchors)
    if found:
        first = min(f.record_id for f in found)
        out.findings.append(
            AuditFinding(first, "anchor", f"first record that disagrees with an anchor: {first}")
        )


def _usable(source: str, signature: Any, trusted_needed: bool) -> str | None:
    """Why a file's signature keeps it from serving as an anchor, or None."""
    if not signature.present:
        return f"{source} is not signed: it cannot anchor anything"
    if signature.problem:
        return f"{source} cannot serve as an anchor: {signature.problem}"
    if trusted_needed and not signature.trusted:
        return f"{source} cannot serve as an anchor: its signer matches no --trust certificate"
    return None


def load_anchors(
    checkpoints: Sequence[Any], reports_dir: Any, *, trust: Sequence[Any] = ()
) -> tuple[list[Anchor], list[AuditFinding]]:
    """Anchors from checkpoint files and from the signed records in ``reports_dir``.

    A file whose signature is broken, or untrusted when ``trust`` is given, is not used and is
    itself a finding: an auditor was handed an anchor that proves nothing.
    """
    from pathlib import Path

    from speccheck.report.checkpoint import read_checkpoint, read_record_anchor

    anchors: list[Anchor] = []
    bad: list[AuditFinding] = []
    for p in checkpoints:
        cp = read_checkpoint(Path(p), trust=trust)
        why = _usable(str(p), cp.signature, bool(trust))
        if why:
            bad.append(AuditFinding(0, "anchor", why))
            continue
        st = cp.statement
        anchors.append(
            Anchor(str(p), int(st["records"]), str(st["head_hash"]), tuple(st["record_hashes"]))
        )
    if reports_dir is not None:
        folder = Path(reports_dir)
        if not folder.is_dir():
            from speccheck.errors import RecordsError

            raise RecordsError("the reports folder does not exist", path=str(folder))
        for p in sorted(folder.rglob("*.pdf")):
            got = read_record_anchor(p, trust=trust)
            if got is None:
                continue
            why = _usable(str(p), got["signature"], bool(trust))
            if why:
                bad.append(AuditFinding(0, "anchor", why))
                continue
            anchors.append(
                Anchor(
                    str(p),
                    got["records"],
                    got["head_hash"],
                    own_sha256=got["sha256"],
                    own_result=got["result"],
                )
            )
    return anchors, bad
