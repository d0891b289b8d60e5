"""Law of propagation of uncertainty for uncorrelated inputs (JCGM 100:2008, the GUM).

uc² = Σ (cᵢ u(xᵢ))² (5.1.2), effective degrees of freedom by the Welch-Satterthwaite formula
(G.4.1), coverage factor k from the t-distribution with ν_eff degrees of freedom for coverage
probability p (G.3, G.4; the normal distribution when ν_eff is infinite). Clause numbers from
memory.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

__all__ = ["Contribution", "GumResult", "coverage_factor", "combine"]


@dataclass(frozen=True)
class Contribution:
    """One input quantity: its standard uncertainty, sensitivity and contribution |cᵢ|·u(xᵢ).

    ``u_input`` is in ``input_unit``; ``sensitivity`` in output unit per input unit;
    ``u_output`` in the output's unit; ``dof`` is math.inf for type B inputs.
    """

    name: str
    source: str  # e.g. "type B: calibration certificate C-17, 2026-03-01"
    u_input: float
    input_unit: str
    sensitivity: float
    dof: float = math.inf

    @property
    def u_output(self) -> float:
        return abs(self.sensitivity) * self.u_input


@dataclass(frozen=True)
class GumResult:
    """Combined and expanded uncertainty of one output quantity."""

    combined: float  # uc, output unit
    dof: float  # ν_eff (math.inf when every input is type B)
    coverage_factor: float  # k
    expanded: float  # U = k·uc
    probability: float
    contributions: tuple[Contribution, ...]

    def share(self, c: Contribution) -> float:
        """Fraction of uc² from one contribution (0 when uc = 0)."""
        return (c.u_output / self.combined) ** 2 if self.combined > 0 else 0.0

    @property
    def dominant(self) -> Contribution | None:
        """The contribution with the largest |cᵢ|·u(xᵢ); None when all are zero."""
        best = max(self.contributions, key=lambda c: c.u_output, default=None)
        return best if best is not None and best.u_output > 0 else None


def coverage_factor(probability: float, dof: float) -> float:
    """k such that ±k covers ``probability`` of a t-distribution with ``dof`` (JCGM 100 G.3.4).

    Normal quantile (statistics.NormalDist) for infinite ``dof``; scipy's t quantile otherwise.
    """
    if not 0.0 < probability < 1.0:
        raise ValueError(f"probability must lie in (0, 1), got {probability!r}")
    tail = 0.5 + probability / 2.0
    if math.isinf(dof):
        from statistics import NormalDist

        return NormalDist().inv_cdf(tail)
    if not dof > 0:
        raise ValueError(f"degrees of freedom must be positive, got {dof!r}")
    from scipy.stats import t

    return float(t.ppf(tail, dof))


def _welch_satterthwaite(uc: float, contributions: Sequence[Contribution]) -> float:
    """ν_eff = uc⁴ / Σ (cᵢu(xᵢ))⁴/νᵢ (JCGM 100:2008 G.4.1)."""
    den = sum(c.u_output**4 / c.dof for c in contributions if not math.isinf(c.dof))
    if den == 0.0 or uc == 0.0:
        return math.inf
    return uc**4 / den


def combine(contributions: Sequence[Contribution], *, probability: float = 0.95) -> GumResult:
    """uc, ν_eff, k and U = k·uc of uncorrelated contributions (JCGM 100:2008 5.1.2, G.4.1)."""
    uc = math.sqrt(sum(c.u_output**2 for c in contributions))
    dof = _welch_satterthwaite(uc, contributions)
    k = coverage_factor(probability, dof)
    return GumResult(uc, dof, k, k * uc, probability, tuple(contributions))
