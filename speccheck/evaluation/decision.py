"""Decision rules with measurement uncertainty (ISO 14253-1:2017; ILAC G8:2019 names).

A measured value y of a requirement with limits LSL / USL and expanded uncertainty U (k = 2)
lies in one of three zones (ISO 14253-1:2017 clause 5, from memory for the clause number):

- ``"within"``: conformity proven, LSL + U ≤ y ≤ USL − U;
- ``"outside"``: non-conformity proven, y > USL + U or y < LSL − U;
- ``"uncertain"``: in between, within ±U of a limit (neither is proven).

How a value counts for the acceptance rule (:mod:`speccheck.evaluation.rules`) depends on who
must prove what (ILAC G8:2019 section 4):

- ``simple`` (simple acceptance): compared with the limit itself; exceeding when y > USL
  (y < LSL). A value exactly at the limit does not exceed. The zone is still recorded when U is
  given.
- ``guarded-acceptance`` (a supplier proving conformity): exceeding unless conformity is proven,
  i.e. when y > USL − U (y < LSL + U). A value in the uncertainty range counts as exceeding.
- ``guarded-rejection`` (a customer proving non-conformity): exceeding only when
  non-conformity is proven, y > USL + U (y < LSL − U). A value in the uncertainty range counts as
  within.

The 70 % shortcut of the 16 % rule is moved by the same guard band (our reading, common
practice, no source): simple y ≤ 0.7·USL; guarded acceptance y + U ≤ 0.7·USL (proven at most
70 %); guarded rejection y − U ≤ 0.7·USL (not proven above 70 %).

Exact arithmetic: every number is compared as the shortest decimal that prints as it
(``repr(float(x))``), using :class:`decimal.Decimal`. So a value printed as 0.56 is exactly 70 %
of a limit of 0.8, and 0.75 is exactly at 0.8 − 0.05, whatever binary floating point would say.
"""

from __future__ import annotations

import math
from decimal import Decimal, localcontext
from typing import Literal

from speccheck.evaluation.result import Zone

__all__ = [
    "DecisionRule",
    "Side",
    "DECISION_RULES",
    "ILAC_G8_NAMES",
    "exact",
    "zone",
    "limit_zone",
    "counts_as_exceeding",
    "at_most_70_percent",
]

DecisionRule = Literal["simple", "guarded-acceptance", "guarded-rejection"]
Side = Literal["upper", "lower"]

DECISION_RULES: tuple[str, ...] = ("simple", "guarded-acceptance", "guarded-rejection")
# ILAC G8:2019 section 4 names of the same rules
ILAC_G8_NAMES = {
    "simple": "simple acceptance",
    "guarded-acceptance": "guarded acceptance",
    "guarded-rejection": "guarded rejection",
}

_PREC = 60  # digits; repr() of a float has at most 17 significant digits


def exact(x: float) -> Decimal:
    """``x`` as the exact decimal it prints as (``repr``); raises ValueError if not finite."""
    f = float(x)
    if not math.isfinite(f):
        raise ValueError(f"value must be a finite number, got {x!r}")
    return Decimal(repr(f))


def _u(uncertainty: float | None) -> Decimal:
    if uncertainty is None:
        return Decimal(0)
    u = exact(uncertainty)
    if u < 0:
        raise ValueError(f"uncertainty must not be negative, got {uncertainty!r}")
    return u


def _check_rule(decision_rule: str, uncertainty: float | None) -> None:
    if decision_rule not in DECISION_RULES:
        raise ValueError(
            f"decision rule must be one of {', '.join(DECISION_RULES)}, got {decision_rule!r}"
        )
    if decision_rule != "simple" and uncertainty is None:
        raise ValueError(f"decision rule {decision_rule!r} needs the expanded uncertainty U")


def limit_zone(value: float, *, limit: float, side: Side, uncertainty: float | None) -> Zone | None:
    """Zone of ``value`` relative to one limit (ISO 14253-1:2017); None when U is not known.

    Parameters
    ----------
    value, limit, uncertainty:
        In the same unit; ``uncertainty`` is the expanded uncertainty U (k = 2).
    side:
        ``"upper"`` or ``"lower"``.

    Returns
    -------
    "within" | "uncertain" | "outside" | None
    """
    if uncertainty is None:
        return None
    y, lim, u = exact(value), exact(limit), _u(uncertainty)
    with localcontext() as ctx:
        ctx.prec = _PREC
        if side == "upper":
            if y <= lim - u:
                return "within"
            return "outside" if y > lim + u else "uncertain"
        if side == "lower":
            if y >= lim + u:
                return "within"
            return "outside" if y < lim - u else "uncertain"
    raise ValueError(f"side must be 'upper' or 'lower', got {side!r}")


def zone(
    value: float,
    *,
    upper: float | None = None,
    lower: float | None = None,
    uncertainty: float | None,
) -> Zone | None:
    """Zone of ``value`` relative to all limits given: the worst of the limits' zones.

    References
    ----------
    ISO 14253-1:2017 clause 5 (conformity and non-conformity zones; from memory).
    """
    zones: list[Zone | None] = []
    if upper is not None:
        zones.append(limit_zone(value, limit=upper, side="upper", uncertainty=uncertainty))
    if lower is not None:
        zones.append(limit_zone(value, limit=lower, side="lower", uncertainty=uncertainty))
    if not zones or zones[0] is None:
        return None
    for z in ("outside", "uncertain"):
        if z in zones:
            return z  # type: ignore[return-value]
    return "within"


def _threshold(limit: Decimal, u: Decimal, side: Side, decision_rule: str) -> Decimal:
    # the guard band moves the limit inward (acceptance) or outward (rejection)
    shift = {"simple": Decimal(0), "guarded-acceptance": -u, "guarded-rejection": u}[decision_rule]
    return limit + shift if side == "upper" else limit - shift


def counts_as_exceeding(
    value: float,
    *,
    limit: float,
    side: Side,
    decision_rule: DecisionRule,
    uncertainty: float | None,
) -> bool:
    """Whether ``value`` counts as exceeding ``limit`` under the decision rule.

    Parameters
    ----------
    value, limit, uncertainty:
        In the same unit; U (k = 2) is required by the guarded rules.
    side:
        ``"upper"``: exceeding means above; ``"lower"``: below.
    decision_rule:
        ``"simple"``, ``"guarded-acceptance"`` or ``"guarded-rejection"``.

    Returns
    -------
    bool

    References
    ----------
    ISO 14253-1:2017 clauses 5.2, 5.3 (from memory); ILAC G8:2019 section 4.
    """
    _check_rule(decision_rule, uncertainty)
    y, lim, u = exact(value), exact(limit), _u(uncertainty)
    with localcontext() as ctx:
        ctx.prec = _PREC
        t = _threshold(lim, u, side, decision_rule)
        if side == "upper":
            return y > t
        if side == "lower":
            return y < t
    raise ValueError(f"side must be 'upper' or 'lower', got {side!r}")


def at_most_70_percent(
    value: float, *, limit: float, decision_rule: DecisionRule, uncertainty: float | None
) -> bool:
    """Whether ``value`` meets the first step of the 16 % rule: at most 70 % of an upper limit.

    Exactly 70 % meets it. The guarded rules move the 70 % level by U (see module notes).

    References
    ----------
    ISO 4288:1996 5.2 (70 % of the specified value); guard band: common practice, no source.
    """
    _check_rule(decision_rule, uncertainty)
    y, lim, u = exact(value), exact(limit), _u(uncertainty)
    with localcontext() as ctx:
        ctx.prec = _PREC
        level = lim * Decimal(7) / Decimal(10)
        shift = {"simple": Decimal(0), "guarded-acceptance": u, "guarded-rejection": -u}[
            decision_rule
        ]
        return y + shift <= level
