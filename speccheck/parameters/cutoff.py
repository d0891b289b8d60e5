"""Choosing λc for a measured trace when none is given (ISO 4288:1996 clause 7).

The procedure itself is :func:`speccheck.parameters.conditions.select_lambda_c`; this module
supplies the two things it needs from a real trace: a first estimate and a function that
measures with a trial λc. A non-periodic profile is judged by Ra (ISO 4288:1996 7.2.2,
Table 1), a periodic one by RSm (7.2.1, Table 3). ``periodic="auto"`` decides which by the
autocorrelation test of :mod:`speccheck.parameters.periodicity`, run on the roughness profile of
the first estimate, and reports its evidence.

* Estimate: Ra (or RSm) measured with λc 0.8 mm if the trace is long enough for it, otherwise
  with the longest standard cut-off the trace can hold (common practice, no source: 0.8 mm is the
  cut-off most machined surfaces end up with).
* λs for each trial: ISO 3274:1996 Table 1 for that λc (``lambda_s_um="table"``), a fixed
  value, or none.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

from speccheck.parameters.compute import InsufficientData, compute_parameters
from speccheck.parameters.conditions import (
    STANDARD_CUTOFFS_MM,
    Conditions,
    CutoffSelection,
    default_lambda_s_um,
    select_lambda_c,
)
from speccheck.parameters.periodicity import Periodicity, periodicity

__all__ = ["START_LAMBDA_C_MM", "TrialTooShort", "DefaultCutoff", "lambda_s_for", "choose_lambda_c"]

#: First trial cut-off when the trace holds it.
START_LAMBDA_C_MM = 0.8


@dataclass(frozen=True)
class DefaultCutoff:
    """λc chosen for a trace: the procedure's result and the first estimate it started from."""

    selection: CutoffSelection
    estimate_lambda_c_mm: float  # λc the estimate was measured with
    estimate_um: float  # that Ra or RSm, µm
    parameter: str = "Ra"  # "Ra" (non-periodic) or "RSm" (periodic)
    periodic: bool = False
    periodicity: Periodicity | None = None  # the evidence when periodic="auto"

    @property
    def lambda_c_mm(self) -> float:
        return self.selection.lambda_c_mm


class TrialTooShort(Exception):
    """A trial cut-off of the procedure needs a longer trace (carries the lengths)."""

    def __init__(self, lambda_c_mm: float, shortage: InsufficientData):
        super().__init__(shortage.reason)
        self.lambda_c_mm = lambda_c_mm
        self.shortage = shortage


def lambda_s_for(lambda_c_mm: float, lambda_s_um: float | None | Literal["table"]) -> float | None:
    """λs to use with ``lambda_c_mm``: from ISO 3274:1996 Table 1 when ``"table"``."""
    if lambda_s_um == "table":
        return default_lambda_s_um(lambda_c_mm)
    return lambda_s_um


def choose_lambda_c(
    z_um,
    *,
    dx_um: float,
    lambda_s_um: float | None | Literal["table"] = "table",
    sections: int = 5,
    filter: str = "gaussian",
    form: str = "line",
    table: str = "iso4288",
    periodic: bool | Literal["auto"] = False,
    ends: str = "run-in",
) -> DefaultCutoff | InsufficientData:
    """Default λc for a trace by the ISO 4288:1996 procedure (ISO 4288:1996 7.2.1, 7.2.2).

    Parameters
    ----------
    z_um : array_like
        Heights in µm, finite.
    dx_um : float
        Sampling spacing in µm.
    lambda_s_um : float, None or "table"
        λs for every trial; ``"table"`` follows ISO 3274:1996 Table 1 for each trial λc.
    sections, filter, form, ends : as :class:`Conditions`.
    table : str
        Cut-off table, ``"iso4288"`` or ``"iso21920-3"``.
    periodic : bool or "auto"
        True: by RSm (ISO 4288:1996 Table 3); False: by Ra (Table 1); "auto": by the
        autocorrelation test (:func:`speccheck.parameters.periodicity.periodicity`).

    Returns
    -------
    DefaultCutoff or InsufficientData
        InsufficientData when the trace is too short for the first estimate or for a cut-off
        the procedure moves to (then ``reason`` names that cut-off).
    """
    z = np.asarray(z_um, dtype=np.float64)

    def conditions(lc: float) -> Conditions:
        return Conditions(
            lc,
            lambda_s_for(lc, lambda_s_um),
            sections=sections,
            filter=filter,
            form=form,
            ends=ends,
        )

    def compute(lc: float):
        res = compute_parameters(z, dx_um=dx_um, conditions=conditions(lc))
        if isinstance(res, InsufficientData):
            raise TrialTooShort(lc, res)
        return res

    fitting = [
        lc
        for lc in STANDARD_CUTOFFS_MM
        if conditions(lc).evaluation_slice(z.size, dx_um) is not None
    ]
    if not fitting:
        shortest = compute_parameters(z, dx_um=dx_um, conditions=conditions(STANDARD_CUTOFFS_MM[0]))
        assert isinstance(shortest, InsufficientData)
        return shortest
    start = START_LAMBDA_C_MM if START_LAMBDA_C_MM in fitting else fitting[-1]
    try:
        first = compute(start)
        evidence = None
        if periodic == "auto":
            evidence = periodicity(first.profiles.roughness_um, dx_um=dx_um)
        is_periodic = bool(evidence) if periodic == "auto" else bool(periodic)
        name = "RSm" if is_periodic else "Ra"
        scale = 1000.0 if is_periodic else 1.0  # RSm is in mm; the tables read µm

        def measure(lc: float) -> float:
            return compute(lc).values[name].value * scale

        estimate = first.values[name].value * scale
        sel = select_lambda_c(name, estimate, measure, table=table, periodic=is_periodic)
        return DefaultCutoff(sel, start, estimate, name, is_periodic, evidence)
    except TrialTooShort as exc:
        s = exc.shortage
        return InsufficientData(
            f"the ISO 4288 procedure moves to λc {exc.lambda_c_mm:g} mm: {s.reason}",
            required_mm=s.required_mm,
            available_mm=s.available_mm,
        )
