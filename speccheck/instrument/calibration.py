"""From an instrument file's calibration data to the uncertainty model's error model.

Every number leaves here with the unit its name says (relative, µm); the text of each value
keeps its certificate and date, for the budget on the record.
"""

from __future__ import annotations

import math
from typing import Any

from speccheck.errors import SpecError
from speccheck.instrument.loader import LoadedInstrument
from speccheck.uncertainty.model import InstrumentErrors, Repeat

__all__ = ["instrument_errors", "noise_sigma_um", "source_text"]


def source_text(kind: str, section: Any) -> str:
    """ "type B: certificate C-17 of 2026-03-01" from a section's certificate and date."""
    parts = []
    if getattr(section, "certificate", None):
        parts.append(f"certificate {section.certificate}")
    if getattr(section, "date", None):
        parts.append(f"of {section.date.isoformat()}")
    return f"{kind}: " + (" ".join(parts) if parts else "no certificate or date stated")


def _um(text: Any, loaded: LoadedInstrument, key: str, default_unit: str | None = None) -> float:
    from speccheck.units import parse_length

    return parse_length(text, default_unit=default_unit, path=loaded.path, where=f"key {key}").um


def noise_sigma_um(loaded: LoadedInstrument) -> float:
    """σ per sampled point, µm: ``noise.sigma``, else Rq0/√g at the stated conditions."""
    from speccheck.uncertainty.noise import noise_bandwidth

    n = loaded.model.noise
    if n is None:
        return 0.0
    if n.sigma is not None:
        return _um(n.sigma, loaded, "noise.sigma")
    missing = [k for k in ("lambda_c", "lambda_s", "spacing") if getattr(n, k) is None]
    if missing:
        raise SpecError(
            "noise needs 'sigma', or the conditions Rq0 was taken under: "
            + ", ".join(f"noise.{k}" for k in missing),
            path=loaded.path,
            where="key noise",
        )
    g = noise_bandwidth(
        dx_um=_um(n.spacing, loaded, "noise.spacing"),
        lambda_c_um=_um(n.lambda_c, loaded, "noise.lambda_c"),
        lambda_s_um=_um(n.lambda_s, loaded, "noise.lambda_s"),
    )
    return _um(n.rq0, loaded, "noise.rq0") / math.sqrt(g)


def _repeats(loaded: LoadedInstrument) -> dict[str, Repeat]:
    from speccheck.parameters.names import PARAMETERS, parse_parameter_name

    rep = loaded.model.repeatability
    if rep is None:
        return {}
    out = {}
    source = "type A: repeated traces" + (f" of {rep.date.isoformat()}" if rep.date else "")
    for name, entry in rep.parameters.items():
        key = f"key repeatability.parameters.{name}.sd"
        parsed = parse_parameter_name(name)
        if parsed is None:
            raise SpecError(f"unknown parameter '{name}'", path=loaded.path, where=key)
        if PARAMETERS[parsed.base].unit == "µm":
            sd = _um(entry.sd, loaded, key[4:])
        else:
            try:
                sd = float(entry.sd)
            except ValueError:
                raise SpecError(
                    f"{name} has no unit: write a number", path=loaded.path, where=key
                ) from None
        out[parsed.name] = Repeat(sd, entry.dof, source)
    return out


def instrument_errors(loaded: LoadedInstrument) -> InstrumentErrors:
    """The error model of :mod:`speccheck.uncertainty.model` from an instrument file."""
    m = loaded.model
    a, x = m.amplification, m.horizontal_scale
    return InstrumentErrors(
        amplification_u_rel=a.standard_uncertainty if a else 0.0,
        amplification_deviation_rel=(a.coefficient - 1.0) if a else 0.0,
        amplification_source=source_text("type B", a) if a else "not stated (taken as 0)",
        scale_u_rel=x.standard_uncertainty if x else 0.0,
        scale_deviation_rel=(x.coefficient - 1.0) if x else 0.0,
        scale_source=source_text("type B", x) if x else "not stated (taken as 0)",
        noise_sigma_um=noise_sigma_um(loaded),
        noise_source=source_text("type B", m.noise) if m.noise else "not stated (taken as 0)",
        repeatability=_repeats(loaded),
    )
