"""What a spec asks of every record: the identity it must carry and the calibration age allowed.

``record.require`` names the identity a check must state (part serial, operator, order, note,
instrument); ``record.max_calibration_age`` is the longest time, in days, since the instrument's
last calibration. Both are resolved here once, with the place in the file, for the evaluator
and for ``lint``.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from typing import TYPE_CHECKING, Any

from speccheck.errors import SpecError
from speccheck.spec._yaml import Document, where

if TYPE_CHECKING:
    from speccheck.spec.models import SpecFile
    from speccheck.spec.requirement import LoadedSpec

__all__ = ["resolve_record", "missing_identity", "parse_days", "OPTION_OF"]

#: The command-line option that states each identity field.
OPTION_OF = {
    "serial": "--serial",
    "operator": "--operator",
    "order": "--order",
    "note": "--note",
    "instrument": "--instrument FILE.yaml, or a profile file that names its instrument",
}
_DAYS = re.compile(r"^\s*([0-9]+(?:\.[0-9]*)?)\s*(d|day|days)\s*$")


def parse_days(text: Any, *, path: str, where_: str) -> float:
    """A duration written in days with its unit (``'365 d'``, ``'90 days'``) → days (> 0)."""
    m = _DAYS.match(str(text)) if not isinstance(text, bool) else None
    if m is None:
        bare = isinstance(text, (int, float)) or re.fullmatch(r"\s*[0-9.]+\s*", str(text))
        hint = "no unit: write days with the unit d" if bare else "write days with the unit d"
        raise SpecError(
            f"record.max_calibration_age {text!r}: {hint}, e.g. '365 d'", path=path, where=where_
        )
    days = float(m.group(1))
    if days <= 0:
        raise SpecError(
            f"record.max_calibration_age must be more than 0 d, got {text!r}",
            path=path,
            where=where_,
        )
    return days


def _at(doc: Document, *keys: str) -> str:
    return where(*doc.position(tuple(keys)))


def resolve_record(model: SpecFile, doc: Document, path: str) -> tuple[dict[str, Any], list]:
    """The ``LoadedSpec`` fields of the ``record`` section, and the errors found in it."""
    rec = model.record
    out: dict[str, Any] = {
        "record_require": tuple(dict.fromkeys(rec.require)),
        "record_require_where": _at(doc, "record", "require"),
        "max_calibration_age_days": None,
        "max_calibration_age_where": _at(doc, "record", "max_calibration_age"),
    }
    errors = []
    if rec.max_calibration_age is not None:
        try:
            out["max_calibration_age_days"] = parse_days(
                rec.max_calibration_age, path=path, where_=out["max_calibration_age_where"]
            )
        except SpecError as exc:
            errors.append(exc)
    return out, errors


def missing_identity(
    spec: LoadedSpec, stated: Mapping[str, Any], *, fields: tuple[str, ...] | None = None
) -> SpecError | None:
    """The error for identity the spec requires and ``stated`` lacks (None: nothing missing).

    ``fields`` limits the check (the instrument is known only once the profiles are read).
    """
    wanted = [f for f in spec.record_require if fields is None or f in fields]
    missing = [f for f in wanted if not stated.get(f)]
    if not missing:
        return None
    how = "; ".join(f"{f}: {OPTION_OF[f]}" for f in missing)
    return SpecError(
        f"record.require: this spec requires {', '.join(missing)} on every record, not given "
        f"({how})",
        path=spec.path,
        where=spec.record_require_where,
    )
