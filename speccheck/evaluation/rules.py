"""Acceptance rules: the 16 % rule (ISO 4288 step procedure) and the max-rule (ISO 1302).

Pure functions on per-value flags, no numpy. Each measured value has already been classified by
a decision rule (:mod:`speccheck.evaluation.decision`) as *exceeding* its limit (True), *not
exceeding* (False), or *unknown* (None: the measurement could not be evaluated). "Exceeding" is
the side-neutral word: above an upper limit, below a lower limit.

The 16 % rule as applied here (ISO 4288:1996 clause 5.2, step procedure for an upper limit;
the clause numbers 5.2 and 5.3 are from memory):

====  =====================================================  ===================
step  the surface conforms when                              values needed
====  =====================================================  ===================
1     the first value is at most 70 % of the limit           1
3     none of the values exceeds                             3
6     at most 1 value exceeds                                6
12    at most 2 values exceed                                12
> 12  at most 16 % of all values exceed (100·e ≤ 16·n)       all of them, n > 12
====  =====================================================  ===================

Every measured value counts: a step is met only when the exceedances among *all* values given
are within that step's allowance (values measured beyond a step count towards the next one).
This is never more lenient than stopping at the first step met, and a technician who measured
more than required cannot have an exceeding value ignored. With at most 12 values the result is
*nonconforming* as soon as no further values could meet a step (more than 2 exceed), otherwise
*undecided* with the smallest number of further values that could still lead to conformity.
More than 12 values are judged as one sample by the 16 % criterion (ISO 4288:1996 5.2 allows a
larger sample, e.g. 25 values of which 4 may exceed: from memory) and are always decided.

The 70 % shortcut is used only for upper limits. For a lower limit ISO 4288 states the mirror
image of the rule; a mirrored 70 % shortcut (value ≥ limit / 0.7? ≥ 1.3 × limit?) is not
stated in any text we could check, so lower limits start at the 3-value step (conservative).

Unknown values: the rules are monotone (another exceeding value never improves the verdict), so
the verdict that holds with every unknown counted as exceeding *and* with every unknown counted
as not exceeding holds whatever the unknowns are; if the two differ the verdict is undecided
and the unknowns decide it.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Literal

from speccheck.evaluation.result import Verdict

__all__ = [
    "RuleOutcome",
    "SIXTEEN_PERCENT_STEPS",
    "sixteen_percent_rule",
    "max_rule",
    "apply_rule",
    "combine_limits",
]

# ISO 4288:1996 5.2: (number of values, largest number allowed to exceed)
SIXTEEN_PERCENT_STEPS: tuple[tuple[int, int], ...] = ((3, 0), (6, 1), (12, 2))

_RANK = {"nonconforming": 0, "undecided": 1, "conforming": 2}


@dataclass(frozen=True)
class RuleOutcome:
    """What an acceptance rule concluded from the values so far.

    Attributes
    ----------
    verdict:
        ``"conforming"``, ``"nonconforming"`` or ``"undecided"``.
    values:
        Number of values judged (unknown ones included).
    exceeding:
        Number of values counted as exceeding (unknown ones not included).
    unknown:
        Number of values that could not be evaluated.
    further:
        When undecided: the smallest number of further values that could still lead to
        conformity, with unknown values left unknown (counted as exceeding); None when decided,
        or when only re-measuring the unknown values could still lead to conformity.
    unknown_decisive:
        True when the unknown values alone keep the verdict open.
    step:
        In words, the step that decided (or the state of the procedure).
    """

    verdict: Verdict
    values: int
    exceeding: int
    unknown: int = 0
    further: int | None = None
    unknown_decisive: bool = False
    step: str = ""


def _sixteen_known(
    exceeding: Sequence[bool], first_at_most_70pct: bool, shortcut: bool
) -> RuleOutcome:
    n = len(exceeding)
    e = sum(1 for x in exceeding if x)
    if n > 12:
        # ISO 4288:1996 5.2, more than 12 values: at most 16 % of all exceed (exact integers)
        if 100 * e <= 16 * n:
            return RuleOutcome("conforming", n, e, step=f"{e} of {n} values exceed (at most 16 %)")
        return RuleOutcome("nonconforming", n, e, step=f"{e} of {n} values exceed (more than 16 %)")
    if shortcut and n >= 1 and first_at_most_70pct and e == 0:
        return RuleOutcome("conforming", n, e, step="first value at most 70 % of the limit")
    for k, allowed in SIXTEEN_PERCENT_STEPS:
        if n >= k and e <= allowed:
            return RuleOutcome(
                "conforming", n, e, step=f"{e} of {n} values exceed (step {k}: at most {allowed})"
            )
    candidates = [k - n for k, allowed in SIXTEEN_PERCENT_STEPS if k > n and e <= allowed]
    if shortcut and n == 0:
        candidates.append(1)
    if not candidates:
        return RuleOutcome(
            "nonconforming",
            n,
            e,
            step=f"{e} of {n} values exceed (more than 2 of 12 can never conform)",
        )
    further = min(candidates)
    return RuleOutcome(
        "undecided", n, e, further=further, step=f"{e} of {n} values exceed; {further} more needed"
    )


def _worst_best(
    judge, exceeding: Sequence[bool | None], first_at_most_70pct: bool | None
) -> RuleOutcome:
    unknown = sum(1 for x in exceeding if x is None)
    pess_flags = [True if x is None else bool(x) for x in exceeding]
    pess = judge(
        pess_flags, bool(first_at_most_70pct) if exceeding and exceeding[0] is not None else False
    )
    if unknown == 0:
        return pess
    opt_flags = [False if x is None else bool(x) for x in exceeding]
    first_opt = True if (exceeding and exceeding[0] is None) else bool(first_at_most_70pct)
    opt = judge(opt_flags, first_opt)
    if pess.verdict == opt.verdict:
        return RuleOutcome(
            pess.verdict, pess.values, opt.exceeding, unknown, pess.further, False, pess.step
        )
    return RuleOutcome(
        "undecided",
        pess.values,
        opt.exceeding,
        unknown,
        further=pess.further if pess.verdict == "undecided" else None,
        unknown_decisive=True,
        step=f"{unknown} value(s) could not be evaluated and decide the outcome",
    )


def sixteen_percent_rule(
    exceeding: Sequence[bool | None],
    *,
    first_at_most_70pct: bool | None = False,
    shortcut: bool = True,
) -> RuleOutcome:
    """The 16 % rule by the step procedure (ISO 4288:1996 5.2; ISO 1302:2002 default rule).

    Parameters
    ----------
    exceeding:
        Per value in measurement order: True exceeding, False not, None unknown.
    first_at_most_70pct:
        Whether the first value is at most 70 % of the limit (after the decision rule).
    shortcut:
        Whether the 70 % step applies (upper limits: yes; lower limits: no, see module notes).

    Returns
    -------
    RuleOutcome

    Notes
    -----
    See the module docstring for the table of steps and how all measured values count.

    References
    ----------
    ISO 4288:1996 clause 5.2 (rules for comparing measured values with tolerance limits).
    """
    return _worst_best(
        lambda flags, first: _sixteen_known(flags, first, shortcut), exceeding, first_at_most_70pct
    )


def _max_known(exceeding: Sequence[bool], _first: bool) -> RuleOutcome:
    n = len(exceeding)
    e = sum(1 for x in exceeding if x)
    if e:
        return RuleOutcome("nonconforming", n, e, step=f"{e} of {n} values exceed (none may)")
    if n == 0:
        return RuleOutcome("undecided", 0, 0, further=1, step="no values")
    return RuleOutcome("conforming", n, 0, step=f"none of {n} values exceeds")


def max_rule(exceeding: Sequence[bool | None]) -> RuleOutcome:
    """The max-rule: no measured value may exceed the limit (ISO 4288:1996 5.3; ISO 1302 "max").

    Parameters
    ----------
    exceeding:
        Per value: True exceeding, False not, None unknown.

    Returns
    -------
    RuleOutcome
        Conforming when at least one value was measured and none exceeds.

    References
    ----------
    ISO 4288:1996 clause 5.3; ISO 1302:2002 (suffix ``max``).
    """
    return _worst_best(_max_known, exceeding, False)


def apply_rule(
    rule: Literal["16%", "max"],
    exceeding: Sequence[bool | None],
    *,
    first_at_most_70pct: bool | None = False,
    shortcut: bool = True,
) -> RuleOutcome:
    """Apply ``rule`` ("16%" or "max") to per-value exceedance flags of one limit."""
    if rule == "16%":
        return sixteen_percent_rule(
            exceeding, first_at_most_70pct=first_at_most_70pct, shortcut=shortcut
        )
    if rule == "max":
        return max_rule(exceeding)
    raise ValueError(f"rule must be '16%' or 'max', got {rule!r}")


def combine_limits(outcomes: Sequence[RuleOutcome]) -> RuleOutcome:
    """Combine the outcomes of the limits of one requirement (upper and lower).

    Conforming only if every limit conforms; nonconforming if any limit is; otherwise
    undecided, needing as many further values as the most demanding limit (a further value that
    exceeds neither limit counts towards both).
    """
    if not outcomes:
        raise ValueError("no outcomes to combine")
    if len(outcomes) == 1:
        return outcomes[0]
    worst = min(outcomes, key=lambda o: _RANK[o.verdict])
    undecided = [o for o in outcomes if o.verdict == "undecided"]
    further: int | None = None
    if worst.verdict == "undecided":
        needs = [o.further for o in undecided]
        further = None if any(f is None for f in needs) else max(f for f in needs if f is not None)
    return RuleOutcome(
        worst.verdict,
        max(o.values for o in outcomes),
        sum(o.exceeding for o in outcomes),
        max(o.unknown for o in outcomes),
        further,
        any(o.unknown_decisive for o in undecided) if worst.verdict == "undecided" else False,
        "; ".join(o.step for o in outcomes),
    )
