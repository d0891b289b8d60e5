"""Checkpoints: a signed statement of the records store's state, kept outside the database.

A checkpoint is a one-page PDF, signed like a conformance record (PAdES, pyHanko), that states
how many records the store held, the head hash, the time, and attaches the same as JSON
(``speccheck-checkpoint.json``) together with every record's hash, so that an audit against it
names the first record that no longer agrees. Whoever can rewrite the database cannot rewrite a
checkpoint someone else keeps without breaking its signature.
"""

from __future__ import annotations

import datetime as _dt
import json
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from speccheck._atomic import atomic_write_bytes, read_bounded
from speccheck.errors import ReportError

__all__ = [
    "CHECKPOINT_NAME",
    "CHECKPOINT_KIND",
    "Checkpoint",
    "write_checkpoint",
    "read_checkpoint",
]

CHECKPOINT_NAME = "speccheck-checkpoint.json"
CHECKPOINT_KIND = "speccheck records checkpoint"
MAX_CHECKPOINT_BYTES = 1 << 30
LOT_RESULT_NAME = "lot-result.json"  # the result a lot record attaches (speccheck.lot.report)


@dataclass(frozen=True)
class Checkpoint:
    """A checkpoint as read back: its statement and what its signature proves."""

    path: str
    statement: dict[str, Any]
    signature: Any  # speccheck.report.verify.SignatureCheck


def _html(statement: Mapping[str, Any], signer: str) -> str:
    from markupsafe import escape

    rows = [
        ("Records store", statement["store"]),
        ("Records", str(statement["records"])),
        ("Head hash", statement["head_hash"]),
        ("Time (UTC)", statement["time"]),
        ("Signed by", signer),
    ]
    body = "".join(f"<tr><th>{escape(k)}</th><td>{escape(v)}</td></tr>" for k, v in rows)
    return (
        "<html><head><meta charset='utf-8'><style>@page { size: A4; margin: 20mm; "
        "@bottom-center { content: 'speccheck records checkpoint, page ' counter(page); "
        "font-size: 8pt } } body { font-family: sans-serif; font-size: 10pt } "
        "td { font-family: monospace; word-break: break-all } th { text-align: left; "
        "padding-right: 8mm }</style></head><body><h1>Records checkpoint</h1>"
        f"<table>{body}</table><p>The attached {CHECKPOINT_NAME} lists the hash of every record "
        "up to the head. Keep this file outside the records store: <code>speccheck records "
        "audit --checkpoint FILE</code> compares the store with it.</p></body></html>"
    )


def write_checkpoint(
    out_path: Path,
    *,
    store: str,
    record_hashes: Sequence[str],
    sign_p12: Path,
    passphrase: bytes | None,
    tsa_url: str | None = None,
) -> dict[str, Any]:
    """Write a signed checkpoint of a store whose records have ``record_hashes`` (in id order).

    Returns
    -------
    dict
        The statement written: kind, store, records, head_hash, time, record_hashes.
    """
    from speccheck.report.pdf import EmbeddedFile, render_pdf
    from speccheck.report.signing import check_valid_at, open_key, sign_pdf

    key = open_key(Path(sign_p12), passphrase)
    now = _dt.datetime.now(_dt.UTC).replace(microsecond=0)
    check_valid_at(key.certificate, now, path=key.path)
    statement = {
        "kind": CHECKPOINT_KIND,
        "store": store,
        "records": len(record_hashes),
        "head_hash": record_hashes[-1] if record_hashes else "0" * 64,
        "time": now.isoformat().replace("+00:00", "Z"),
        "record_hashes": list(record_hashes),
    }
    who = key.identity.name + (
        f" ({key.identity.organisation})" if key.identity.organisation else ""
    )
    text = json.dumps(statement, indent=1).encode("utf-8")
    pdf = render_pdf(
        _html(statement, who), attachments=[EmbeddedFile(CHECKPOINT_NAME, text, "checkpoint")]
    )
    pdf = sign_pdf(pdf, key=key, reason="records checkpoint", signing_time=now, tsa_url=tsa_url)
    atomic_write_bytes(Path(out_path), pdf)
    return statement


def read_checkpoint(path: Path, *, trust: Sequence[Path] = ()) -> Checkpoint:
    """Read a checkpoint and check its signature; a file that is not one is a ReportError."""
    from speccheck.report.pdf import read_embedded_files
    from speccheck.report.verify import _check_signature

    path = Path(path)
    data = read_bounded(path, limit=MAX_CHECKPOINT_BYTES, role="checkpoint", error=ReportError)
    files = read_embedded_files(data, path=str(path))
    try:
        statement = json.loads(files[CHECKPOINT_NAME])
        if statement.get("kind") != CHECKPOINT_KIND:
            raise ValueError("not a checkpoint statement")
        hashes = statement["record_hashes"]
        if not isinstance(hashes, list) or len(hashes) != int(statement["records"]):
            raise ValueError("the record hashes do not match the record count")
    except (KeyError, ValueError, TypeError, AttributeError) as exc:
        raise ReportError(
            f"not a speccheck records checkpoint ({exc})",
            path=str(path),
            where=f"attachment {CHECKPOINT_NAME}",
        ) from exc
    return Checkpoint(str(path), statement, _check_signature(data, trust))


def read_record_anchor(path: Path, *, trust: Sequence[Path] = ()) -> dict[str, Any] | None:
    """What a signed conformance record states about the store, or None if it states nothing.

    Returns ``{"path", "sha256", "records", "head_hash", "result", "signature"}`` for a record
    written with ``--record`` while signing; None for a PDF that is not such a record.
    """
    import hashlib

    from speccheck.report.pdf import read_embedded_files
    from speccheck.report.verify import _check_signature
    from speccheck.report.writer import CHAIN_KEY, RESULT_NAME

    path = Path(path)
    data = read_bounded(path, limit=MAX_CHECKPOINT_BYTES, role="record", error=ReportError)
    try:
        files = read_embedded_files(data, path=str(path))
        name = RESULT_NAME if RESULT_NAME in files else LOT_RESULT_NAME
        result = json.loads(files[name])
        chain = result[CHAIN_KEY]
        records, head = int(chain["records"]), str(chain["head_hash"])
    except (ReportError, KeyError, ValueError, TypeError):
        return None
    return {
        "path": str(path),
        "sha256": hashlib.sha256(data).hexdigest(),
        "records": records,
        "head_hash": head,
        "result": result,
        "signature": _check_signature(data, trust),
    }
