"""Calibration studies recorded in an instrument file: noise on an optical flat, repeatability.

Each function takes the loaded instrument file and the profiles as read, and returns the new
file text (the section replaced, everything else kept) with the study's numbers.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

from speccheck.errors import InputError, SpeccheckError
from speccheck.instrument.loader import LoadedInstrument
from speccheck.instrument.update import updated_instrument_text

if TYPE_CHECKING:
    from speccheck.profile import Profile
    from speccheck.uncertainty.repeat import NoiseStudy, RepeatStudy

__all__ = ["record_noise", "record_repeatability", "study_conditions", "DEFAULT_PARAMETERS"]

#: Parameters a repeatability study records by default: those the uncertainty model covers.
DEFAULT_PARAMETERS = ("Ra", "Rq", "Rsk", "Rku", "Rp", "Rv", "Rz", "Rt")


def study_conditions(lambda_c_mm: float, lambda_s_um: float | None) -> Any:
    """Roughness profile, Gaussian filter, 5 sections, line form; λs by ISO 3274 when None."""
    from speccheck.parameters.conditions import Conditions

    if lambda_s_um is None:
        return Conditions.standard(lambda_c_mm)
    return Conditions.standard(lambda_c_mm, lambda_s_um=lambda_s_um)


def _heights(profiles: Sequence[Profile]) -> tuple[list[Any], float]:
    from speccheck.profile import fill_dropouts

    if not profiles:
        raise SpeccheckError("no profiles given")
    dx = profiles[0].dx_um
    out = []
    for p in profiles:
        if abs(p.dx_um - dx) > 1e-9 * dx:
            raise InputError(
                f"sampling spacing {p.dx_um:g} µm differs from the first trace's {dx:g} µm",
                path=p.source.path,
            )
        filled = fill_dropouts(p)
        if not filled.dropouts.usable:
            raise InputError("gaps of invalid points too wide to bridge", path=p.source.path)
        out.append(filled.z_um)
    return out, dx


def _study_error(exc: ValueError, profiles: Sequence[Profile]) -> SpeccheckError:
    text = str(exc)
    if text.startswith("trace "):
        number, _, rest = text[6:].partition(": ")
        if number.isdigit() and 0 < int(number) <= len(profiles):
            return InputError(rest, path=profiles[int(number) - 1].source.path)
    return SpeccheckError(text)


def _length(um: float) -> str:
    return f"{um / 1000.0:g}mm" if um >= 100 else f"{um:g}um"


def record_noise(
    loaded: LoadedInstrument,
    profiles: Sequence[Profile],
    *,
    lambda_c_mm: float = 0.8,
    lambda_s_um: float | None = None,
    date: dt.date | None = None,
    certificate: str | None = None,
) -> tuple[str, NoiseStudy]:
    """Rq0 and σ of traces on an optical flat into the ``noise`` section (ISO 12179 practice)."""
    from speccheck.uncertainty.repeat import noise_study

    cond = study_conditions(lambda_c_mm, lambda_s_um)
    z, dx = _heights(profiles)
    try:
        study = noise_study(z, dx_um=dx, conditions=cond)
    except ValueError as exc:
        raise _study_error(exc, profiles) from None
    data: dict[str, Any] = {
        "rq0": f"{study.rq0_um:.4g}um",
        "sigma": f"{study.sigma_um:.4g}um",
        "lambda_c": _length(cond.lambda_c_mm * 1000.0),
        "lambda_s": _length(cond.lambda_s_um) if cond.lambda_s_um else None,
        "spacing": f"{dx:g}um",
        "date": date or dt.date.today(),
    }
    if certificate:
        data["certificate"] = certificate
    data["profiles"] = [p.source.sha256 for p in profiles]
    data = {k: v for k, v in data.items() if v is not None}
    return updated_instrument_text(loaded, "noise", data), study


def record_repeatability(
    loaded: LoadedInstrument,
    profiles: Sequence[Profile],
    *,
    names: Sequence[str] = DEFAULT_PARAMETERS,
    lambda_c_mm: float = 0.8,
    lambda_s_um: float | None = None,
    date: dt.date | None = None,
) -> tuple[str, RepeatStudy]:
    """Type A sd and ν per parameter of repeated traces into ``repeatability`` (JCGM 100 4.2)."""
    from speccheck.uncertainty.repeat import repeatability_study

    unknown = [n for n in names if n not in DEFAULT_PARAMETERS]
    if unknown:
        raise SpeccheckError(
            f"no uncertainty model for {', '.join(unknown)} (a repeatability study records "
            f"{', '.join(DEFAULT_PARAMETERS)})",
            where="option --parameter",
        )
    cond = study_conditions(lambda_c_mm, lambda_s_um)
    z, dx = _heights(profiles)
    try:
        study = repeatability_study(z, dx_um=dx, conditions=cond, names=list(names))
    except ValueError as exc:
        raise _study_error(exc, profiles) from None
    params = {
        n: {"sd": f"{study.sd[n]:.4g}{'um' if study.units[n] == 'µm' else ''}", "dof": study.dof}
        for n in names
    }
    data: dict[str, Any] = {
        "date": date or dt.date.today(),
        "lambda_c": _length(cond.lambda_c_mm * 1000.0),
        "lambda_s": _length(cond.lambda_s_um) if cond.lambda_s_um else None,
        "profiles": [p.source.sha256 for p in profiles],
        "parameters": params,
    }
    data = {k: v for k, v in data.items() if v is not None}
    return updated_instrument_text(loaded, "repeatability", data), study
