"""Acceptance rules: the 16 % rule (ISO 4288 step procedure) and the max-rule (ISO 1302).

Pure functions on per-value flags, no numpy. Each measured value has already been classified by
a decision rule (:mod:`speccheck.evaluation.decision`) as *exceeding* its limit (True), *not
exceeding* (False), or *unknown* (None: the measurement could not be evaluated). "Exceeding" is
the side-neutral word: above an upper limit, below a lower limit.

The 16 % rule has two forms, chosen by the specification (``sampling``):

**sequential** (the default): the step procedure of ISO 4288:1996 5.2 (the clause numbers 5.2
and 5.3 are from memory). Values are taken in measurement order and the verdict is taken at the
first step that decides:

====  =================================================  ===================================
step  conforming when                                    nonconforming when
====  =================================================  ===================================
1     the first value is at most 70 % of the limit       —
3     none of the first 3 values exceeds                 —
6     at most 1 of the first 6 values exceeds            —
12    at most 2 of the first 12 values exceed            more than 2 of the first 12 exceed
====  =================================================  ===================================

More than 2 exceeding values among the first 12 can meet no step, so the procedure is decided
*nonconforming* at the value that makes the third exceedance, whatever follows. Values after the
deciding one are *after the decision*: they are reported but cannot reverse it (3 of 3 over the
limit followed by 16 within stays nonconforming). Before a decision the result is *undecided*,
with the smallest number of further values that could still lead to conformity.

**fixed**: a sample fixed in advance, judged at once by the 16 % criterion: at most 16 % of all
values exceed (100·e ≤ 16·n, exact integers). Only for 12 or more values; fewer are undecided.

The 70 % shortcut is used only for upper limits. For a lower limit ISO 4288 states the mirror
image of the rule; a mirrored 70 % shortcut (value ≥ limit / 0.7? ≥ 1.3 × limit?) is not
stated in any text we could check, so lower limits start at the 3-value step (conservative).

Unknown values (measurements that could not be evaluated) are not steps of the sequential
procedure: they gave no value, and measuring again adds a value at the end of the sequence; it
cannot take an earlier place. For the max-rule and a fixed sample every member counts: those
rules are monotone (another exceeding value never improves the verdict), so the verdict that
holds with every unknown counted as exceeding *and* with every unknown counted as not exceeding
holds whatever the unknowns are; if the two differ the verdict is undecided and the unknowns
decide it.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Literal

from speccheck.evaluation.result import Verdict

__all__ = [
    "RuleOutcome",
    "Sampling",
    "SIXTEEN_PERCENT_STEPS",
    "FIXED_SAMPLE_MIN",
    "sixteen_percent_rule",
    "max_rule",
    "apply_rule",
    "combine_limits",
]

Sampling = Literal["sequential", "fixed"]

# ISO 4288:1996 5.2: (number of values, largest number allowed to exceed)
SIXTEEN_PERCENT_STEPS: tuple[tuple[int, int], ...] = ((3, 0), (6, 1), (12, 2))
# the last step of the procedure: more exceedances than this among its values never conform
_LAST_STEP, _LAST_ALLOWED = SIXTEEN_PERCENT_STEPS[-1]
# a fixed sample is judged by the 16 % proportion only from this many values on
FIXED_SAMPLE_MIN = 12

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
    decided_at:
        Sequential procedure only: how many values (from the first) the decision rests on; the
        values after them are *after the decision* and did not count. None when every value
        counts (max-rule, fixed sample) or nothing is decided yet.
    """

    verdict: Verdict
    values: int
    exceeding: int
    unknown: int = 0
    further: int | None = None
    unknown_decisive: bool = False
    step: str = ""
    decided_at: int | None = None


def _sequential_known(
    exceeding: Sequence[bool], first_at_most_70pct: bool, shortcut: bool
) -> RuleOutcome:
    n = len(exceeding)
    allowed_at = dict(SIXTEEN_PERCENT_STEPS)
    e = 0
    for m in range(1, min(n, _LAST_STEP) + 1):
        e += bool(exceeding[m - 1])
        if m == 1 and shortcut and first_at_most_70pct and not exceeding[0]:
            return RuleOutcome(
                "conforming", n, e, step="first value at most 70 % of the limit", decided_at=1
            )
        allowed = allowed_at.get(m)
        if allowed is not None and e <= allowed:
            step = f"{e} of the first {m} values exceed (step {m}: at most {allowed})"
            return RuleOutcome("conforming", n, e, step=step, decided_at=m)
        if e > _LAST_ALLOWED:
            step = (
                f"{e} of the first {m} values exceed (more than {_LAST_ALLOWED} of "
                f"{_LAST_STEP} can never conform)"
            )
            return RuleOutcome("nonconforming", n, e, step=step, decided_at=m)
    # fewer values than the last step and nothing decided yet (then e <= _LAST_ALLOWED)
    candidates = [k - n for k, allowed in SIXTEEN_PERCENT_STEPS if k > n and e <= allowed]
    if shortcut and n == 0:
        candidates.append(1)
    further = min(candidates)
    return RuleOutcome(
        "undecided", n, e, further=further, step=f"{e} of {n} values exceed; {further} more needed"
    )


def _fixed_known(exceeding: Sequence[bool], _first: bool) -> RuleOutcome:
    n = len(exceeding)
    e = sum(1 for x in exceeding if x)
    if n < FIXED_SAMPLE_MIN:
        more = FIXED_SAMPLE_MIN - n
        step = f"fixed sample of {n} values, at least {FIXED_SAMPLE_MIN} needed; {more} more"
        return RuleOutcome("undecided", n, e, further=more, step=step)
    # ISO 4288:1996 5.2: at most 16 % of all values exceed (exact integers)
    if 100 * e <= 16 * n:
        return RuleOutcome("conforming", n, e, step=f"{e} of {n} values exceed (at most 16 %)")
    return RuleOutcome("nonconforming", n, e, step=f"{e} of {n} values exceed (more than 16 %)")


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
        # decided whatever the unknowns are once both extremes are decided
        both = (pess.decided_at, opt.decided_at)
        decided_at = None if None in both else max(pess.decided_at or 0, opt.decided_at or 0)
        return RuleOutcome(
            pess.verdict,
            pess.values,
            opt.exceeding,
            unknown,
            pess.further,
            False,
            pess.step,
            decided_at,
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
    sampling: Sampling = "sequential",
) -> RuleOutcome:
    """The 16 % rule, by the step procedure or on a fixed sample (ISO 4288:1996 5.2).

    Parameters
    ----------
    exceeding:
        Per value in measurement order: True exceeding, False not, None unknown.
    first_at_most_70pct:
        Whether the first value is at most 70 % of the limit (after the decision rule); in the
        sequential procedure, the first value that could be evaluated.
    shortcut:
        Whether the 70 % step applies (upper limits: yes; lower limits: no, see module notes).
    sampling:
        ``"sequential"``: decided at the first decisive step, later values do not count;
        ``"fixed"``: the 16 % proportion over all values (12 or more).

    Returns
    -------
    RuleOutcome

    Notes
    -----
    See the module docstring for the table of steps.

    References
    ----------
    ISO 4288:1996 clause 5.2 (rules for comparing measured values with tolerance limits);
    ISO 1302:2002 (the 16 % rule is the default rule of a drawing indication).
    """
    if sampling == "fixed":
        return _worst_best(_fixed_known, exceeding, first_at_most_70pct)
    if sampling != "sequential":
        raise ValueError(f"sampling must be 'sequential' or 'fixed', got {sampling!r}")
    return _sequential(exceeding, bool(first_at_most_70pct), shortcut)


def _sequential(
    exceeding: Sequence[bool | None], first_at_most_70pct: bool, shortcut: bool
) -> RuleOutcome:
    """The step procedure on the values that could be evaluated, in measurement order.

    A measurement that could not be evaluated gave no value: it is not a step of the procedure
    (measuring again adds a value at the end, it cannot replace an earlier one). ``decided_at``
    is translated back to a position in ``exceeding``.
    """
    positions = [i for i, x in enumerate(exceeding) if x is not None]
    known = [bool(exceeding[i]) for i in positions]
    out = _sequential_known(known, first_at_most_70pct, shortcut)
    unknown = len(exceeding) - len(known)
    decided_at = None if out.decided_at is None else positions[out.decided_at - 1] + 1
    step = out.step
    if unknown:
        step += f"; {unknown} measurement(s) gave no value"
    return RuleOutcome(
        out.verdict,
        len(exceeding),
        out.exceeding,
        unknown,
        out.further,
        False,
        step,
        decided_at,
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
    sampling: Sampling = "sequential",
) -> RuleOutcome:
    """Apply ``rule`` ("16%" or "max") to per-value exceedance flags of one limit."""
    if rule == "16%":
        return sixteen_percent_rule(
            exceeding,
            first_at_most_70pct=first_at_most_70pct,
            shortcut=shortcut,
            sampling=sampling,
        )
    if rule == "max":
        return max_rule(exceeding)
    raise ValueError(f"rule must be '16%' or 'max', got {rule!r}")


def combine_limits(outcomes: Sequence[RuleOutcome]) -> RuleOutcome:
    """Combine the outcomes of the limits of one requirement (upper and lower).

    Conforming only if every limit conforms; nonconforming if any limit is; otherwise
    undecided, needing as many further values as the most demanding limit (a further value that
    exceeds neither limit counts towards both). A conforming requirement is decided once every
    limit is; a nonconforming one at the first limit that decided so.
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
        _combined_decision_point(worst.verdict, outcomes),
    )


def _combined_decision_point(verdict: Verdict, outcomes: Sequence[RuleOutcome]) -> int | None:
    if verdict == "nonconforming":
        points = [o.decided_at for o in outcomes if o.verdict == "nonconforming"]
        return None if None in points else min(p for p in points if p is not None)
    if verdict == "conforming":
        points = [o.decided_at for o in outcomes]
        return None if None in points else max(p for p in points if p is not None)
    return None
