"""``periodic: auto``: the cut-off of a periodic profile follows its RSm (ISO 4288:1996 7.2.1).

A requirement whose λc came from the Ra or Rz table under ``periodic: auto``
(``Requirement.periodic_test``) is tested on the first measurement before anything is
evaluated: the roughness profile at the table λc goes through the autocorrelation test of
:mod:`speccheck.parameters.periodicity`. Non-periodic: the table λc stays. Periodic: RSm is
measured and the ISO 4288 procedure (:func:`speccheck.parameters.conditions.select_lambda_c`,
Table 3) moves λc to the RSm row; λs follows ISO 3274:1996 Table 1 when it was a default. Every
measurement of the requirement is then evaluated at that λc, and ``lambda_c_source`` carries the
evidence. A trace too short for a cut-off the procedure moves to leaves the requirement at that
cut-off, so its values are *insufficient data* naming the trace length needed, never evaluated
at the wrong cut-off.
"""

from __future__ import annotations

from dataclasses import replace
from typing import TYPE_CHECKING

from speccheck.errors import SpeccheckError

if TYPE_CHECKING:
    from speccheck.profile import Profile
    from speccheck.spec.requirement import Requirement

__all__ = ["apply_periodic_test"]

_ISO3274 = "ISO 3274:1996 Table 1"


class _TooShort(Exception):
    def __init__(self, lambda_c_mm: float):
        super().__init__(lambda_c_mm)
        self.lambda_c_mm = lambda_c_mm


def apply_periodic_test(
    requirements: list[Requirement], profiles: list[Profile]
) -> list[Requirement]:
    """The requirements with λc settled by the periodic test where they ask for it."""
    done: dict[tuple, tuple[float, float | None, str]] = {}
    out = []
    for req in requirements:
        if not req.periodic_test or not profiles:
            out.append(req)
            continue
        key = (req.lambda_c_mm, req.lambda_s_um, req.sections, req.filter, req.form, req.ends)
        if key not in done:
            done[key] = _settle(req, profiles[0])
        lc, ls, source = done[key]
        out.append(replace(req, lambda_c_mm=lc, lambda_s_um=ls, lambda_c_source=source))
    return out


def _conditions(req: Requirement, lambda_c_mm: float):
    from speccheck.parameters.conditions import Conditions

    return Conditions(
        lambda_c_mm,
        _lambda_s(req, lambda_c_mm),
        sections=req.sections,
        filter=req.filter,
        form=req.form,
        ends=req.ends,
        definitions=req.definitions,
    )


def _lambda_s(req: Requirement, lambda_c_mm: float) -> float | None:
    from speccheck.parameters.conditions import default_lambda_s_um

    if req.lambda_s_source.startswith(_ISO3274):
        return default_lambda_s_um(lambda_c_mm)
    return req.lambda_s_um


def _settle(req: Requirement, profile: Profile) -> tuple[float, float | None, str]:
    """(λc, λs, source) for ``req`` from the test on ``profile`` (module docstring)."""
    import numpy as np

    from speccheck.parameters.compute import (
        InsufficientData,
        compute_parameters,
        evaluated_profile,
    )
    from speccheck.parameters.conditions import select_lambda_c
    from speccheck.parameters.periodicity import periodicity

    table_source = req.lambda_c_source.split("; periodic: auto")[0]
    z, dx = np.asarray(profile.z_um, dtype=np.float64), profile.dx_um
    cond = _conditions(req, req.lambda_c_mm)
    ev = cond.evaluation_slice(z.size, dx)
    if ev is None or not np.all(np.isfinite(z)):
        why = "trace too short for the test" if ev is None else "heights not all finite"
        return req.lambda_c_mm, req.lambda_s_um, f"{table_source}; periodic test not run: {why}"
    rough = evaluated_profile(z, dx_um=dx, conditions=cond)[2][ev]
    test = periodicity(rough, dx_um=dx)
    if not test:
        return (
            req.lambda_c_mm,
            req.lambda_s_um,
            f"{table_source}; periodic test on measurement 1: {test.evidence}",
        )

    def measure(lc: float) -> float:
        res = compute_parameters(z, dx_um=dx, conditions=_conditions(req, lc))
        if isinstance(res, InsufficientData):
            raise _TooShort(lc)
        return res.values["RSm"].value * 1000.0  # the table reads µm

    try:
        sel = select_lambda_c("RSm", measure(req.lambda_c_mm), measure, periodic=True)
    except SpeccheckError as exc:  # RSm outside Table 3, or no profile elements
        return (
            req.lambda_c_mm,
            req.lambda_s_um,
            f"{table_source}; periodic on measurement 1 ({test.evidence}) but Table 3 gives "
            f"no cut-off: {exc.message}",
        )
    except _TooShort as short:
        lc = short.lambda_c_mm
        return (
            lc,
            _lambda_s(req, lc),
            f"ISO 4288:1996 Table 3 (periodic profile): the procedure moves to λc {lc:g} mm, "
            f"for which the trace is too short; periodic test on measurement 1: {test.evidence}",
        )
    lc = sel.lambda_c_mm
    return (
        lc,
        _lambda_s(req, lc),
        f"ISO 4288:1996 Table 3 (periodic profile): {sel.message}; "
        f"periodic test on measurement 1: {test.evidence}",
    )
