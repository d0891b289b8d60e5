"""Verify a conformance record: its signature, and its result recomputed from its attachments.

A record passes when

1. it carries a PDF signature that is intact (the signed bytes hash to the signed digest) and
   covers the whole file (no incremental update appended after signing);
2. the signer is trusted when certificates are given with ``trust``; without them the signer's
   identity is shown but not vouched for, and a warning line says so;
3. the attached specification and profiles are the files the result names (SHA-256), and the
   result recomputed from them equals the recorded one.

Numbers are compared with a relative tolerance of 1e-9 (absolute 1e-12 near zero): the
computation is deterministic, but FFT and BLAS builds on other machines may round differently in
the last bits, and a verifier on another machine must still be able to confirm a genuine record.
Any verdict, zone or count that differs is a difference, so no decision can change unnoticed.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import json
import math
import tempfile
from collections.abc import Sequence
from dataclasses import asdict, dataclass, field
from pathlib import Path
from typing import Any

from speccheck._version import __version__
from speccheck.errors import ReportError
from speccheck.report.pdf import read_embedded_files
from speccheck.report.writer import CHAIN_KEY, MANIFEST_KIND, MANIFEST_NAME, RESULT_NAME

__all__ = [
    "RELATIVE_TOLERANCE",
    "SignatureCheck",
    "VerifyResult",
    "verify_report",
    "compare_results",
]

RELATIVE_TOLERANCE = 1e-9
ABSOLUTE_TOLERANCE = 1e-12
MAX_DIFFERENCES = 20
# Largest record read (1 GiB, the budget of one profile text file).
MAX_RECORD_BYTES = 1 << 30


@dataclass(frozen=True)
class SignatureCheck:
    """What the PDF signature says, and what it proves at the verification time."""

    present: bool
    intact: bool = False  # signed bytes unchanged and the cryptographic signature valid
    whole_file: bool = False  # no bytes after the signed range (no later incremental update)
    trusted: bool | None = None  # None: no trust anchors given, or nothing intact to trust
    signer: str | None = None
    signing_time: str | None = None  # UTC; from the timestamp token when there is one
    time_source: str | None = None  # "signer's clock" or "timestamp token (RFC 3161)"
    certificate_sha256: str | None = None
    valid_from: str | None = None  # the certificate's notBefore, UTC (RFC 5280 4.1.2.5)
    valid_until: str | None = None  # its notAfter, UTC
    time_in_validity: bool | None = None  # signing time within valid_from..valid_until
    time_in_future: bool = False  # signing time later than the verification time
    verified_at: str | None = None
    timestamp_authority: str | None = None  # subject of the TSA certificate
    timestamp_intact: bool | None = None  # None: no timestamp token
    signatures: int = 0
    problem: str | None = None


@dataclass
class VerifyResult:
    """The outcome of :func:`verify_report`; ``ok`` is True only when everything holds."""

    path: str
    signature: SignatureCheck
    recorded_verdict: str | None
    recomputed_verdict: str | None
    equal: bool
    differences: list[str] = field(default_factory=list)
    problems: list[str] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    attachments: list[str] = field(default_factory=list)

    @property
    def ok(self) -> bool:
        s = self.signature
        return (
            s.present
            and s.intact
            and s.whole_file
            and s.trusted is not False
            and self.equal
            and not self.problems
        )

    def to_dict(self) -> dict[str, Any]:
        d = asdict(self)
        d["ok"] = self.ok
        return d


def _close(a: float, b: float) -> bool:
    if a == b:
        return True
    if math.isnan(a) and math.isnan(b):
        return True
    return abs(a - b) <= max(RELATIVE_TOLERANCE * max(abs(a), abs(b)), ABSOLUTE_TOLERANCE)


def compare_results(recorded: Any, recomputed: Any, where: str = "") -> list[str]:
    """Differences between two JSON-like trees: ``"place: recorded X, recomputed Y"`` lines.

    Numbers compare within :data:`RELATIVE_TOLERANCE`; everything else exactly.
    """
    out: list[str] = []

    def walk(a: Any, b: Any, at: str) -> None:
        if len(out) >= MAX_DIFFERENCES:
            return
        if isinstance(a, dict) and isinstance(b, dict):
            for k in sorted(set(a) | set(b), key=str):
                place = f"{at}.{k}" if at else str(k)
                if k not in a:
                    out.append(f"{place}: not recorded, recomputed {b[k]!r}")
                elif k not in b:
                    out.append(f"{place}: recorded {a[k]!r}, missing on recomputation")
                else:
                    walk(a[k], b[k], place)
            return
        if isinstance(a, list) and isinstance(b, list):
            if len(a) != len(b):
                out.append(f"{at}: recorded {len(a)} entries, recomputed {len(b)}")
            for i, (x, y) in enumerate(zip(a, b, strict=False)):
                walk(x, y, f"{at}[{i}]")
            return
        if isinstance(a, bool) or isinstance(b, bool):  # True == 1 in Python; not here
            if type(a) is not type(b) or a != b:
                out.append(f"{at}: recorded {a!r}, recomputed {b!r}")
            return
        if isinstance(a, (int, float)) and isinstance(b, (int, float)):
            if not _close(float(a), float(b)):
                out.append(f"{at}: recorded {a!r}, recomputed {b!r}")
            return
        if a != b:
            out.append(f"{at}: recorded {a!r}, recomputed {b!r}")

    walk(recorded, recomputed, where)
    return out


def _normalised(result: dict[str, Any]) -> dict[str, Any]:
    """The result without what legitimately differs between runs: time, paths, software;
    one recorded in the earlier JSON form is renumbered as today's."""
    from speccheck.evaluation.result import in_current_form

    d = json.loads(json.dumps(in_current_form(result)))
    d.pop("created", None)
    d.pop("software", None)
    d.pop(CHAIN_KEY, None)  # the store's state when written: not part of the evaluation
    if isinstance(d.get("spec"), dict):
        d["spec"].pop("path", None)
    inst = (d.get("identity") or {}).get("instrument") or {}
    if isinstance(inst.get("file"), dict):
        inst["file"].pop("path", None)
    for m in d.get("measurements") or []:
        if isinstance(m, dict):
            m.pop("path", None)
    return d


def _trust_roots(trust: Sequence[Path]) -> list[Any]:
    from pyhanko.keys import load_cert_from_pemder

    roots = []
    for p in trust:
        try:
            cert = load_cert_from_pemder(str(p))
            _ = cert.native  # asn1crypto parses lazily: a key or garbage fails here, not later
            roots.append(cert)
        except Exception as exc:  # OSError or a parse error from asn1crypto
            raise ReportError(
                f"cannot read the certificate: {' '.join(str(exc).split()) or type(exc).__name__}",
                path=str(p),
            ) from exc
    return roots


def _utc(t: Any) -> str:
    return t.astimezone(_dt.UTC).strftime("%Y-%m-%d %H:%M:%S UTC")


def _validate(sig: Any, roots: list[Any], moment: Any = None) -> Any:
    """pyHanko's validation of one embedded signature, its log noise silenced."""
    import logging

    from pyhanko.sign.validation import validate_pdf_signature
    from pyhanko_certvalidator import ValidationContext

    vc = ValidationContext(trust_roots=roots, allow_fetching=False, moment=moment)
    # pyHanko logs a full traceback for every untrusted certificate; the result says it in words
    quiet = [logging.getLogger(n) for n in ("pyhanko", "pyhanko_certvalidator")]
    levels = [q.level for q in quiet]
    for q in quiet:
        q.setLevel(logging.CRITICAL)
    try:
        return validate_pdf_signature(sig, vc)
    finally:
        for q, lv in zip(quiet, levels, strict=True):
            q.setLevel(lv)


def _check_signature(data: bytes, trust: Sequence[Path]) -> SignatureCheck:
    from io import BytesIO

    from pyhanko.pdf_utils.reader import PdfFileReader
    from pyhanko.sign.validation.errors import SignatureValidationError

    roots = _trust_roots(trust)
    try:
        reader = PdfFileReader(BytesIO(data), strict=False)
        sigs = list(reader.embedded_signatures)
    except Exception as exc:  # damaged file: the signature cannot be checked
        return SignatureCheck(present=False, problem=f"the PDF structure is damaged ({exc})")
    if not sigs:
        return SignatureCheck(present=False, problem="the record is not signed")
    try:
        status = _validate(sigs[0], [])
    except (SignatureValidationError, ValueError, KeyError, TypeError) as exc:
        return SignatureCheck(
            present=True,
            signatures=len(sigs),
            problem=f"the signature cannot be validated ({exc})",
        )
    except Exception as exc:  # zlib and parser errors from a damaged signed range
        return SignatureCheck(
            present=True,
            signatures=len(sigs),
            problem=f"the signed content is damaged ({type(exc).__name__}: {exc})",
        )
    return _judge(sigs, status, roots)


def _judge(sigs: list[Any], status: Any, roots: list[Any]) -> SignatureCheck:
    """Integrity, coverage, time and trust of the record's (first) signature, in that order."""
    from pyhanko.sign.validation.status import SignatureCoverageLevel

    now = _dt.datetime.now(_dt.UTC)
    cert = status.signing_cert
    intact = bool(status.intact and status.valid)
    ts = status.timestamp_validity
    when = ts.timestamp if ts is not None else status.signer_reported_dt
    start = cert.not_valid_before if cert is not None else None
    end = cert.not_valid_after if cert is not None else None
    in_window = None if when is None or start is None else bool(start <= when <= end)
    future = bool(when is not None and when > now)
    whole = status.coverage == SignatureCoverageLevel.ENTIRE_FILE and len(sigs) == 1
    trusted = None
    if roots and intact:
        # trust is judged at the signing time, so that a record outlives its certificate
        moment = when if (when is not None and in_window and not future) else None
        trusted = bool(_validate(sigs[0], roots, moment).trusted)
    problem = _signature_problem(status, intact, whole, len(sigs), ts, in_window, future)
    return SignatureCheck(
        present=True,
        intact=intact,
        whole_file=whole,
        trusted=trusted,
        signer=cert.subject.human_friendly if cert is not None else None,
        signing_time=_utc(when) if when is not None else None,
        time_source=_time_source(when, ts),
        certificate_sha256=cert.sha256.hex(":").upper() if cert is not None else None,
        valid_from=_utc(start) if start is not None else None,
        valid_until=_utc(end) if end is not None else None,
        time_in_validity=in_window,
        time_in_future=future,
        verified_at=_utc(now),
        timestamp_authority=ts.signing_cert.subject.human_friendly if ts is not None else None,
        timestamp_intact=bool(ts.intact and ts.valid) if ts is not None else None,
        signatures=len(sigs),
        problem=problem,
    )


def _time_source(when: Any, ts: Any) -> str | None:
    if when is None:
        return None
    return "timestamp token (RFC 3161)" if ts is not None else "signer's clock"


def _signature_problem(
    status: Any, intact: bool, whole: bool, count: int, ts: Any, in_window: Any, future: bool
) -> str | None:
    """The first thing that keeps the signature from proving the record, in words."""
    from pyhanko.sign.validation.status import SignatureCoverageLevel

    if not status.intact:
        return "the signed bytes were changed after signing (their hash no longer matches)"
    if not intact:
        return "the signature value does not match the signed bytes (signature broken)"
    if count > 1:
        return (
            f"the file carries {count} signatures; a record is signed once, so something was "
            "signed into it after it was made"
        )
    if status.coverage != SignatureCoverageLevel.ENTIRE_FILE:
        return "bytes were added after the signature (incremental update): they are not signed"
    if ts is not None and not (ts.intact and ts.valid):
        return "the timestamp token is broken: the signing time is not vouched for"
    if in_window is False:
        return "the signing time lies outside the certificate's validity period"
    if future:
        return "the signing time is later than the verification time: the signer's clock is wrong"
    return None


def _sha256(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def _safe_name(name: str, fallback: str) -> str:
    base = name.replace("\\", "/").rsplit("/", 1)[-1]
    return base if base not in ("", ".", "..") else fallback


def _json_object(files: dict[str, bytes], name: str, path: Path) -> dict[str, Any]:
    """The attachment ``name`` read as one JSON object, else an error naming file and attachment."""
    try:
        value = json.loads(files[name])
        if not isinstance(value, dict):
            raise TypeError(f"a JSON object is expected, not {type(value).__name__}")
    except (ValueError, TypeError) as exc:
        raise ReportError(
            f"the attachment is not valid: {exc}", path=str(path), where=f"attachment {name}"
        ) from exc
    return value


def verify_report(path: Path, *, trust: Sequence[Path] = ()) -> VerifyResult:
    """Check a conformance record's signature and recompute its result from its attachments.

    Parameters
    ----------
    path:
        The PDF written by :func:`speccheck.report.write_report`.
    trust:
        PEM or DER certificates the signer must chain to; empty: the signer is shown, not
        vouched for.

    Returns
    -------
    VerifyResult
        ``ok`` True only when the signature is present, intact, covers the whole file, is
        trusted (when ``trust`` is given), and the recomputed result equals the recorded one.

    Raises
    ------
    ReportError
        The file is not a PDF, or not a speccheck record (no attached result).
    """
    path = Path(path)
    from speccheck._atomic import read_bounded

    data = read_bounded(path, limit=MAX_RECORD_BYTES, role="record", error=ReportError)
    files = read_embedded_files(data, path=str(path))
    if RESULT_NAME not in files or MANIFEST_NAME not in files:
        raise ReportError(
            "not a speccheck conformance record (no attached result and manifest)", path=str(path)
        )
    manifest = _json_object(files, MANIFEST_NAME, path)
    recorded = _json_object(files, RESULT_NAME, path)
    try:
        if manifest.get("kind") != MANIFEST_KIND:
            raise ValueError(f"unknown manifest kind {manifest.get('kind')!r}")
        spec_entry = manifest["spec"]
        profile_entries = list(manifest["profiles"])
        read_options = dict(manifest.get("read_options") or {})
    except (ValueError, KeyError, TypeError) as exc:
        raise ReportError(
            f"the attached manifest is not valid: {exc}",
            path=str(path),
            where=f"attachment {MANIFEST_NAME}",
        ) from exc

    signature = _check_signature(data, trust)
    problems: list[str] = []
    warnings: list[str] = []
    if signature.problem:
        problems.append(signature.problem)
    if signature.present and signature.trusted is False:
        problems.append(
            "signer not trusted: the certificate does not match any --trust certificate"
        )
    if signature.present and signature.intact and not trust:
        warnings.append(
            "signer's identity unproven: no --trust given, and any self-made key can carry any "
            "name; compare the certificate's SHA-256 fingerprint with the one the signer's "
            "organisation publishes"
        )

    # the attachments must be the files the result was computed from
    names = [spec_entry["name"]] + [e["name"] for e in profile_entries]
    missing = [n for n in names if n not in files]
    if missing:
        problems.append(f"attachments missing: {', '.join(missing)}")
        return VerifyResult(
            str(path),
            signature,
            recorded.get("verdict"),
            None,
            False,
            [],
            problems,
            warnings,
            sorted(files),
        )
    spec_bytes = files[spec_entry["name"]]
    if _sha256(spec_bytes) != (recorded.get("spec") or {}).get("sha256"):
        problems.append(
            f"the attached specification {spec_entry['name']} is not the one evaluated "
            "(SHA-256 differs from the result)"
        )
    rec_meas = recorded.get("measurements") or []
    for i, e in enumerate(profile_entries):
        want = rec_meas[i].get("sha256") if i < len(rec_meas) else None
        if want and _sha256(files[e["name"]]) != want:
            problems.append(
                f"the attached profile {e['name']} (measurement {i + 1}) is not the one "
                "evaluated (SHA-256 differs from the result)"
            )

    recomputed_verdict = None
    differences: list[str] = []
    from speccheck.evaluation.evaluator import evaluate_files

    with tempfile.TemporaryDirectory(prefix="speccheck-verify-") as tmp:
        root = Path(tmp)
        spec_dir = root / "spec"
        spec_dir.mkdir()
        spec_path = spec_dir / _safe_name(
            spec_entry.get("original_path") or spec_entry["name"], "spec.yaml"
        )
        spec_path.write_bytes(spec_bytes)
        profile_paths = []
        for i, e in enumerate(profile_entries):
            d = root / f"m{i + 1}"
            d.mkdir()
            p = d / _safe_name(e.get("original_path") or e["name"], f"profile{i + 1}")
            p.write_bytes(files[e["name"]])
            profile_paths.append(p)
        from speccheck.evaluation.identity import Stated

        inst_entry = manifest.get("instrument") or {}
        inst_path = None
        if inst_entry.get("name") in files:
            inst_path = root / "instrument.yaml"
            inst_path.write_bytes(files[inst_entry["name"]])
        try:
            again = evaluate_files(
                spec_path,
                profile_paths,
                created=recorded.get("created"),
                instrument_path=inst_path,
                stated=Stated.from_dict(recorded.get("identity")),
                **{k: read_options[k] for k in ("fmt", "dx", "decimal") if k in read_options},
            )
        except ReportError:
            raise
        except Exception as exc:  # SpeccheckError from the attachments: the record is broken
            msg = getattr(exc, "message", None) or str(exc)
            problems.append(f"the attachments cannot be evaluated again: {' '.join(msg.split())}")
            again = None
    if again is not None:
        fresh = again.to_dict()
        recomputed_verdict = fresh.get("verdict")
        if "identity" not in recorded:  # written before records carried their identity
            fresh.pop("identity", None)
        differences = compare_results(_normalised(recorded), _normalised(fresh))
        recorded_version = (recorded.get("software") or {}).get("version")
        if recorded_version and recorded_version != __version__:
            warnings.append(
                f"recorded with speccheck {recorded_version}, recomputed with {__version__}"
            )
    equal = again is not None and not differences
    return VerifyResult(
        path=str(path),
        signature=signature,
        recorded_verdict=recorded.get("verdict"),
        recomputed_verdict=recomputed_verdict,
        equal=equal,
        differences=differences,
        problems=problems,
        warnings=warnings,
        attachments=sorted(files),
    )
