"""Verify a lot record: its signature, and the lot recomputed from the inputs it attaches.

The lot record attaches the plan, every surface's spec and every sampled part's profiles as
read, with a manifest naming where each one lay (:func:`speccheck.lot.report.lot_inputs`).
Verification rebuilds that layout in a temporary folder, runs :func:`speccheck.lot.runner.
inspect_lot` on it and compares the result with the attached lot JSON, as
:func:`speccheck.report.verify.verify_report` does for a single record.
"""

from __future__ import annotations

import hashlib
import json
import tempfile
from collections.abc import Sequence
from pathlib import Path, PurePosixPath
from typing import Any

from speccheck.errors import ReportError
from speccheck.lot.result import lot_in_current_form
from speccheck.report.verify import VerifyResult, _check_signature, compare_results

__all__ = ["is_lot_record", "verify_lot_record", "verify_record"]

# what legitimately differs between the run that wrote the record and the recomputation
_VOLATILE = ("created", "software", "data_dir", "records_chain", "path")


def is_lot_record(files: dict[str, bytes]) -> bool:
    from speccheck.lot.report import LOT_MANIFEST_NAME

    return LOT_MANIFEST_NAME in files


def _normalised(d: Any) -> Any:
    if isinstance(d, dict):
        return {k: _normalised(v) for k, v in d.items() if k not in _VOLATILE}
    if isinstance(d, list):
        return [_normalised(v) for v in d]
    return d


def _stated(recorded: dict[str, Any]) -> dict[str, Any]:
    """Operator, order and note as the lot recorded them on its parts (the same on every part)."""
    for part in recorded.get("parts") or []:
        for check in (part.get("surfaces") or {}).values():
            ident = check.get("identity") or {}
            return {k: ident.get(k) for k in ("operator", "order", "note")}
    return {}


def _safe(rel: str) -> PurePosixPath:
    p = PurePosixPath(rel)
    if p.is_absolute() or not p.parts or any(part in ("", ".") for part in p.parts):
        raise ValueError(f"path {rel!r} cannot be rebuilt")
    return p


def _rebuild(root: Path, manifest: dict[str, Any], files: dict[str, bytes]) -> tuple[Path, Path]:
    """Lay the attached plan, specs and profiles out as they lay when the lot was inspected."""
    specs = [_safe(e["plan_path"]) for e in manifest["specs"]]
    depth = max([sum(part == ".." for part in s.parts) for s in specs] + [0])
    plan_dir = root.joinpath("plan", *(["d"] * depth))
    plan_dir.mkdir(parents=True)
    plan_path = plan_dir / _safe(manifest["plan"]["name"]).name
    plan_path.write_bytes(files[manifest["plan"]["name"]])
    for e, rel in zip(manifest["specs"], specs, strict=True):
        target = (plan_dir / rel).resolve()
        if root.resolve() not in target.parents:
            raise ValueError(f"spec path {e['plan_path']!r} lies outside the record")
        target.parent.mkdir(parents=True, exist_ok=True)
        target.write_bytes(files[e["name"]])
    data = root / "data"
    for e in manifest["profiles"]:
        rel = _safe(e["rel_path"])
        if ".." in rel.parts:
            raise ValueError(f"profile path {e['rel_path']!r} lies outside the data folder")
        (data / rel).parent.mkdir(parents=True, exist_ok=True)
        (data / rel).write_bytes(files[e["name"]])
    data.mkdir(exist_ok=True)
    return plan_path, data


def _changed_attachments(manifest: dict[str, Any], files: dict[str, bytes]) -> list[str]:
    entries = [manifest["plan"], *manifest["specs"], *manifest["profiles"]]
    out = []
    for e in entries:
        data = files.get(e["name"])
        if data is None:
            out.append(f"attachment {e['name']} missing")
        elif hashlib.sha256(data).hexdigest() != e["sha256"]:
            out.append(f"attachment {e['name']} is not the file inspected (SHA-256 differs)")
    return out


def verify_lot_record(
    path: Path, data: bytes, files: dict[str, bytes], *, trust: Sequence[Path] = ()
) -> VerifyResult:
    """Check a lot record's signature and recompute the lot from its attachments."""
    from speccheck.lot.plan import load_plan
    from speccheck.lot.report import LOT_MANIFEST_NAME, LOT_RESULT_NAME
    from speccheck.lot.runner import inspect_lot

    try:
        manifest = json.loads(files[LOT_MANIFEST_NAME])
        recorded = json.loads(files[LOT_RESULT_NAME])
    except (KeyError, ValueError) as exc:
        raise ReportError(
            f"the attached lot manifest or result is not valid: {exc}", path=str(path)
        ) from exc
    signature = _check_signature(data, trust)
    problems = [signature.problem] if signature.problem else []
    if signature.present and signature.trusted is False:
        problems.append(
            "signer not trusted: the certificate does not match any --trust certificate"
        )
    warnings = []
    if signature.present and signature.intact and not trust:
        warnings.append(
            "signer's identity unproven: no --trust given, and any self-made key can carry any "
            "name; compare the certificate's SHA-256 fingerprint with the one the signer's "
            "organisation publishes"
        )
    problems += _changed_attachments(manifest, files)
    fresh = None
    with tempfile.TemporaryDirectory(prefix="speccheck-verify-lot-") as tmp:
        try:
            plan_path, data_dir = _rebuild(Path(tmp), manifest, files)
            fresh = inspect_lot(
                load_plan(plan_path), data_dir, workers=1, stated=_stated(recorded)
            ).to_dict()
        except (KeyError, ValueError) as exc:
            problems.append(f"the attachments cannot be laid out again: {exc}")
        except Exception as exc:  # SpeccheckError from the attachments: the record is broken
            msg = getattr(exc, "message", None) or str(exc)
            problems.append(f"the attachments cannot be evaluated again: {' '.join(msg.split())}")
    if fresh:
        recorded = lot_in_current_form(recorded)
    differences = compare_results(_normalised(recorded), _normalised(fresh)) if fresh else []
    return VerifyResult(
        path=str(path),
        signature=signature,
        recorded_verdict=recorded.get("disposition"),
        recomputed_verdict=fresh.get("disposition") if fresh else None,
        equal=fresh is not None and not differences,
        differences=differences,
        problems=problems,
        warnings=warnings,
        attachments=sorted(files),
    )


def verify_record(path: Path, *, trust: Sequence[Path] = ()) -> VerifyResult:
    """Verify any speccheck record: a lot record here, a conformance record by
    :func:`speccheck.report.verify.verify_report`."""
    from speccheck._atomic import read_bounded
    from speccheck.report.pdf import read_embedded_files
    from speccheck.report.verify import MAX_RECORD_BYTES, verify_report

    path = Path(path)
    data = read_bounded(path, limit=MAX_RECORD_BYTES, role="record", error=ReportError)
    files = read_embedded_files(data, path=str(path))
    if is_lot_record(files):
        return verify_lot_record(path, data, files, trust=trust)
    return verify_report(path, trust=trust)
