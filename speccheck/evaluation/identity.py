"""Who measured which part on which instrument, and whether that instrument was in calibration.

Three sources, one block on the record (``CheckResult.identity``):

- what the person at the bench states (:class:`Stated`: part serial, operator, order, note);
- what each profile file says of its instrument (X3P Record2, ``# key: value`` lines of
  delimited text, the SDF header: :class:`speccheck.profile.InstrumentMeta`);
- the instrument file (``--instrument FILE.yaml``), the owner's controlled record of the
  instrument and its calibration.

Merging: the instrument file wins field by field, and every field that the profile file states
differently is listed as a warning on the record. A different instrument **serial** is an error
(exit 2): the instrument file then describes another instrument than the one that measured, so
its calibration date and data would be evidence about the wrong instrument. Profiles of one check
that name different instrument serials are refused the same way.

Calibration age is counted in whole days from the calibration date to the measurement date (the
latest date the profile files state, when every one states one), else to the evaluation time.
The longest allowed age is the spec's ``record.max_calibration_age`` and the instrument file's
``calibration.interval_days``, whichever is shorter.
"""

from __future__ import annotations

import datetime as dt
import re
from collections.abc import Sequence
from dataclasses import asdict, dataclass
from typing import TYPE_CHECKING, Any

from speccheck.errors import InputError, SpecError

if TYPE_CHECKING:
    from speccheck.instrument.loader import LoadedInstrument
    from speccheck.profile import Profile
    from speccheck.spec.requirement import LoadedSpec

__all__ = [
    "Stated",
    "record_identity",
    "instrument_identity",
    "calibration_state",
    "instrument_label",
    "OUT_OF_CALIBRATION",
]

#: calibration states that leave every requirement undecided
OUT_OF_CALIBRATION = ("overdue", "no-date", "after-measurement")
_FIELDS = ("id", "manufacturer", "model", "serial", "version", "probing_system")
_DATE = re.compile(r"^(\d{4}-\d{2}-\d{2})")


@dataclass(frozen=True)
class Stated:
    """What the person at the bench states for the record (``check --serial ...``)."""

    serial: str | None = None
    operator: str | None = None
    order: str | None = None
    note: str | None = None

    def to_dict(self) -> dict[str, str | None]:
        return asdict(self)

    @classmethod
    def from_dict(cls, d: dict[str, Any] | None) -> Stated:
        d = d or {}
        return cls(**{k: d.get(k) for k in ("serial", "operator", "order", "note")})


def _profiles_meta(profiles: Sequence[Profile]) -> tuple[dict[str, str], dict[str, str], list]:
    """(merged fields, which file stated each, warnings) of the profiles' instrument fields."""
    merged: dict[str, str] = {}
    where: dict[str, str] = {}
    warnings: list[str] = []
    for p in profiles:
        name = p.source.path or "profile"
        for key, value in p.source.instrument_meta.stated().items():
            if key not in merged:
                merged[key], where[key] = value, name
            elif merged[key] != value and key == "serial":
                raise InputError(
                    f"measured on instrument serial {value}, but {where[key]} on serial "
                    f"{merged[key]}: check the profiles of each instrument separately",
                    path=name,
                )
            elif merged[key] != value:
                warnings.append(f"{key}: {where[key]} says {merged[key]!r}, {name} {value!r}")
    return merged, where, warnings


def _file_fields(inst: LoadedInstrument) -> dict[str, Any]:
    m = inst.model
    out: dict[str, Any] = {k: getattr(m, k) for k in _FIELDS if getattr(m, k)}
    if m.stylus_tip_radius is not None:
        out["stylus_tip_radius"] = str(m.stylus_tip_radius)
    if m.calibration is not None:
        out["calibration_date"] = m.calibration.date.isoformat()
        if m.calibration.interval_days is not None:
            out["calibration_interval_days"] = m.calibration.interval_days
        if m.calibration.certificate:
            out["calibration_certificate"] = m.calibration.certificate
    return out


def instrument_identity(
    profiles: Sequence[Profile], instrument: LoadedInstrument | None
) -> dict[str, Any] | None:
    """The instrument block of the record; None when neither a file nor the profiles say.

    Raises InputError when the profiles name different serials, SpecError when the instrument
    file's serial differs from the profiles'.
    """
    merged, where, warnings = _profiles_meta(profiles)
    sources = {k: "profile file" for k in merged}
    out: dict[str, Any] = dict(merged)
    if instrument is not None:
        theirs = _file_fields(instrument)
        serial = merged.get("serial")
        if serial and theirs.get("serial") and theirs["serial"] != serial:
            raise SpecError(
                f"instrument file is for serial {theirs['serial']}, but {where['serial']} was "
                f"measured on serial {serial}: give the instrument file of the instrument "
                "that measured",
                path=instrument.path,
            )
        for key, value in theirs.items():
            if key in merged and str(merged[key]) != str(value):
                warnings.append(
                    f"{key}: profile file {where[key]} says {merged[key]!r}, instrument file "
                    f"{value!r} (the instrument file is used)"
                )
            out[key], sources[key] = value, "instrument file"
        out["file"] = {"path": instrument.path, "sha256": instrument.sha256}
    if not out:
        return None
    out["label"] = instrument_label(out)
    out["sources"] = sources
    out["warnings"] = warnings
    return out


def instrument_label(inst: dict[str, Any] | None) -> str | None:
    """How the records store names the instrument: its id, else its serial, else its make."""
    if not inst:
        return None
    if inst.get("id") or inst.get("serial"):
        return str(inst.get("id") or inst.get("serial"))
    make = " ".join(str(inst[k]) for k in ("manufacturer", "model") if inst.get(k))
    return make or None


def _measured_on(profiles: Sequence[Profile]) -> dt.date | None:
    """The latest measurement date, when every profile file states one (ISO 8601)."""
    dates = []
    for p in profiles:
        m = _DATE.match(p.source.date or "")
        try:
            dates.append(dt.date.fromisoformat(m.group(1)) if m else None)
        except ValueError:
            dates.append(None)
    if not dates or any(d is None for d in dates):
        return None
    return max(d for d in dates if d is not None)


def _max_age(spec: LoadedSpec, inst: dict[str, Any] | None) -> tuple[float | None, str | None]:
    limits = []
    if spec.max_calibration_age_days is not None:
        limits.append((spec.max_calibration_age_days, "spec record.max_calibration_age"))
    if inst and inst.get("calibration_interval_days"):
        limits.append(
            (float(inst["calibration_interval_days"]), "instrument file calibration.interval_days")
        )
    return min(limits) if limits else (None, None)


def calibration_state(
    spec: LoadedSpec,
    inst: dict[str, Any] | None,
    profiles: Sequence[Profile],
    evaluated_at: dt.datetime | None,
) -> dict[str, Any]:
    """The instrument's calibration state at the measurement, with one sentence saying it.

    ``status``: "in-calibration", "overdue" (older than the allowed age), "no-date" (an age
    limit applies and no calibration date is known), "after-measurement" (calibrated after
    the measurement: the calibration in force then is not stated), or "not-checked".
    """
    max_days, max_source = _max_age(spec, inst)
    measured = _measured_on(profiles)
    if measured is None and evaluated_at is None:
        if max_days is not None:
            raise SpecError("the evaluation time is not ISO 8601: no calibration age to count")
        return {
            "status": "not-checked",
            "date": (inst or {}).get("calibration_date"),
            "as_of": None,
            "as_of_source": None,
            "age_days": None,
            "max_age_days": None,
            "max_age_source": None,
            "text": "Calibration age not counted.",
        }
    as_of = measured or evaluated_at.date()  # type: ignore[union-attr]
    out: dict[str, Any] = {
        "date": (inst or {}).get("calibration_date"),
        "as_of": as_of.isoformat(),
        "as_of_source": "measurement date" if measured else "evaluation time",
        "age_days": None,
        "max_age_days": max_days,
        "max_age_source": max_source,
    }
    if out["date"] is None:
        status = "no-date" if max_days is not None else "not-checked"
        out.update(status=status, text=_text(status, out))
        return out
    age = (as_of - dt.date.fromisoformat(out["date"])).days
    out["age_days"] = age
    if age < 0:
        status = "after-measurement" if max_days is not None else "not-checked"
    elif max_days is None:
        status = "not-checked"
    else:
        status = "overdue" if age > max_days else "in-calibration"
    out.update(status=status, text=_text(status, out))
    return out


def _text(status: str, c: dict[str, Any]) -> str:
    limit = f"{c['max_age_days']:g} d ({c['max_age_source']})" if c["max_age_days"] else ""
    at = f"at the {c['as_of_source']} {c['as_of']}"
    if status == "no-date":
        return f"No calibration date of the instrument is known, and at most {limit} is allowed."
    if status == "after-measurement":
        return (
            f"The instrument was calibrated on {c['date']}, after the measurement ({c['as_of']}); "
            "the calibration in force when it measured is not stated."
        )
    if c["date"] is None:
        return "No calibration date of the instrument is known; none is required."
    age = f"calibrated on {c['date']}, {c['age_days']} d before, {at}"
    if status == "overdue":
        return f"The instrument is past its calibration: {age}; at most {limit} is allowed."
    if status == "in-calibration":
        return f"The instrument is in calibration: {age}; at most {limit} is allowed."
    return f"The instrument was {age}; no calibration age limit applies."


def record_identity(
    spec: LoadedSpec,
    profiles: Sequence[Profile],
    instrument: LoadedInstrument | None,
    stated: Stated | None,
    evaluated_at: dt.datetime | None,
) -> dict[str, Any]:
    """``CheckResult.identity``: stated fields, the instrument, its calibration state.

    Raises SpecError (at ``record.require``) when the spec requires an instrument and none is
    known; the stated fields are checked by :func:`speccheck.spec.record.missing_identity`.
    """
    from speccheck.spec.record import missing_identity

    st = stated or Stated()
    inst = instrument_identity(profiles, instrument)
    error = missing_identity(spec, {**st.to_dict(), "instrument": inst})
    if error is not None:
        raise error
    return {
        **st.to_dict(),
        "instrument": inst,
        "calibration": calibration_state(spec, inst, profiles, evaluated_at),
    }
