"""``uncertainty: estimate``: each measured value's expanded uncertainty U, with its budget.

The evaluator asks :class:`Estimator` for the U of a value it has computed; the estimate comes
from :func:`speccheck.uncertainty.estimate_values` on the same prepared trace and conditions,
once per measurement and conditions for all the parameters estimated under them.
"""

from __future__ import annotations

import hashlib
import math
from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

from speccheck.errors import SpecError

if TYPE_CHECKING:
    from speccheck.instrument.loader import LoadedInstrument
    from speccheck.parameters.compute import ParameterSet
    from speccheck.parameters.conditions import Conditions
    from speccheck.profile import Profile
    from speccheck.spec.requirement import LoadedSpec, Requirement
    from speccheck.uncertainty import Estimate, InstrumentErrors

__all__ = ["Estimator", "estimator_for"]


def estimator_for(
    spec: LoadedSpec,
    instrument: LoadedInstrument | None,
    reqs: Sequence[Requirement],
    conds: Sequence[Conditions],
) -> Estimator | None:
    """An :class:`Estimator` when the spec says ``uncertainty: estimate``; SpecError without an
    instrument file or without calibration data in it."""
    if not spec.uncertainty_estimate:
        return None
    if instrument is None:
        raise SpecError(
            "uncertainty: estimate needs the instrument file with the calibration data "
            "(check --instrument FILE)",
            path=spec.path,
        )
    from speccheck.instrument.calibration import instrument_errors

    errors = instrument_errors(instrument)
    if not (errors.u_a or errors.u_x or errors.noise_sigma_um or errors.repeatability):
        raise SpecError(
            "no calibration data to estimate U from (amplification, horizontal_scale, noise, "
            "repeatability)",
            path=instrument.path,
        )
    return Estimator(spec, errors, reqs, conds)


class Estimator:
    """U per (measurement, conditions, parameter), computed on first use."""

    def __init__(
        self,
        spec: LoadedSpec,
        errors: InstrumentErrors,
        reqs: Sequence[Requirement],
        conds: Sequence[Conditions],
    ):
        self.spec = spec
        self.errors = errors
        self.names: dict[Conditions, list[str]] = {}
        self.where: dict[Conditions, Requirement] = {}
        for req, cond in zip(reqs, conds, strict=True):
            if req.uncertainty_estimated:
                lst = self.names.setdefault(cond, [])
                if req.parameter not in lst:
                    lst.append(req.parameter)
                self.where.setdefault(cond, req)
        self.cache: dict[tuple[int, Conditions], dict[str, Estimate]] = {}

    def get(
        self, i: int, profile: Profile, cond: Conditions, ps: ParameterSet, name: str
    ) -> Estimate | None:
        """The estimate of ``name`` measured on profile ``i`` (None if it has no value)."""
        key = (i, cond)
        if key not in self.cache:
            self.cache[key] = self._estimate(profile, cond, ps)
        return self.cache[key].get(name)

    def _estimate(self, profile: Profile, cond: Conditions, ps: ParameterSet) -> dict[str, Any]:
        from speccheck.uncertainty import estimate_values

        values = {
            n: (ps.values[n].value, ps.values[n].unit)
            for n in self.names.get(cond, [])
            if n in ps.values and math.isfinite(ps.values[n].value)
        }
        if not values:
            return {}
        # a seed from the heights: the same files give the same U (the result is deterministic)
        seed = int(hashlib.sha256(profile.z_um.tobytes()).hexdigest()[:12], 16)
        try:
            return estimate_values(
                profile.z_um,
                dx_um=profile.dx_um,
                conditions=cond,
                values=values,
                errors=self.errors,
                seed=seed,
            )
        except ValueError as exc:
            req = self.where[cond]
            raise SpecError(f"{req.text}: {exc}", path=self.spec.path, where=req.location) from exc
