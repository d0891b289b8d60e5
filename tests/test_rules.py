"""Acceptance rules: the ISO 4288 16 % step procedure and the max-rule.

Sources: ISO 4288:1996 clause 5.2 and its step procedure (16 % rule: first value ≤ 70 % of the
limit; none of the first 3; at most 1 of the first 6; at most 2 of the first 12; the procedure
is sequential: decided at the first decisive step, later values never reverse it) and clause
5.3 / ISO 1302:2002 (max-rule: no value may exceed). The proportion form (at most 16 % of all
values) for a sample fixed in advance: ISO 4288:1996 5.2 (4 of 25 from memory). "No 70 %
shortcut for lower limits" and "a fixed sample needs 12 values" are documented choices of
speccheck.evaluation.rules, tested here as such.
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from speccheck.evaluation.rules import (
    RuleOutcome,
    apply_rule,
    combine_limits,
    max_rule,
    sixteen_percent_rule,
)

X, o = True, False  # exceeding, not exceeding


# (flags, first value at most 70 %, verdict, further values, values the decision rests on)
# -- ISO 4288:1996 5.2 step procedure, taken in measurement order
SIXTEEN_CASES = [
    # nothing measured yet: one value could already decide (step 1)
    ([], False, "undecided", 1, None),
    # step 1: first value at most 70 % of the limit
    ([o], True, "conforming", None, 1),
    ([o], False, "undecided", 2, None),  # above 70 %, not exceeding: 2 more for step 3
    ([X], False, "undecided", 5, None),  # exceeds: step 3 impossible, step 6 needs 5 more
    ([o, o], False, "undecided", 1, None),
    ([o, o], True, "conforming", None, 1),  # step 1 met, the second value is after it
    ([o, X], True, "conforming", None, 1),  # decided at step 1: the later value cannot reverse
    # step 3: none of the first 3 exceeds
    ([o, o, o], False, "conforming", None, 3),
    ([o, o, X], False, "undecided", 3, None),
    ([X, X, o], False, "undecided", 9, None),  # 2 exceed: only step 12 remains
    ([X, X, X], False, "nonconforming", None, 3),  # 3 exceed: no step can be met any more
    ([o, o, o, X], False, "conforming", None, 3),  # decided at step 3, the 4th is after it
    ([o, o, o, X, X, X], False, "conforming", None, 3),
    # step 6: at most 1 of the first 6
    ([o, o, X, o, o, o], False, "conforming", None, 6),
    ([o, o, X, o, o, X], False, "undecided", 6, None),
    ([o, X, X, o, X], False, "nonconforming", None, 5),  # 3 of 5: decided before the 6th
    ([X, o, o, o, o, o, X, X], False, "conforming", None, 6),  # 1 of 6; 7th, 8th after it
    # step 12: at most 2 of the first 12
    ([X, X] + [o] * 10, False, "conforming", None, 12),
    ([X, X] + [o] * 9, False, "undecided", 1, None),
    ([X, X, X] + [o] * 9, False, "nonconforming", None, 3),
    ([o, X, o, o, X, o, o, o, o, o, o, o], False, "conforming", None, 12),
    ([o, X, o, o, X, o, o, o, o, o, o, X], False, "nonconforming", None, 12),
    # beyond 12 values: decided at step 12 at the latest; later values are after the decision
    ([X, X] + [o] * 10 + [X] * 5, False, "conforming", None, 12),
    ([X, o, X, o, X] + [o] * 20, False, "nonconforming", None, 5),
    ([o] * 25, False, "conforming", None, 3),
]


@pytest.mark.parametrize(("flags", "first_low", "verdict", "further", "at"), SIXTEEN_CASES)
def test_sixteen_percent_steps(flags, first_low, verdict, further, at):
    out = sixteen_percent_rule(flags, first_at_most_70pct=first_low)
    assert (out.verdict, out.further, out.decided_at) == (verdict, further, at)
    assert out.values == len(flags)
    assert out.exceeding == sum(flags[: at or len(flags)])


def test_three_of_three_over_the_limit_stays_nonconforming():
    # ISO 4288:1996 5.2 step procedure: decided at the third value; sixteen values within the
    # limit afterwards do not reverse it (as a fixed sample 3 of 19 = 15.8 % would conform)
    flags = [X, X, X] + [o] * 16
    out = sixteen_percent_rule(flags)
    assert (out.verdict, out.decided_at) == ("nonconforming", 3)
    assert sixteen_percent_rule(flags, sampling="fixed").verdict == "conforming"


def test_every_step_of_the_procedure_in_turn():
    # ISO 4288:1996 5.2: one measurement at a time, the verdict after each, for a surface whose
    # 1st value is above 70 %, 2nd and 5th exceed: steps 1, 3 and 6 are not met, step 12 is
    seq = [o, X, o, o, X, o, o, o, o, o, o, o]
    verdicts = [sixteen_percent_rule(seq[:i]).verdict for i in range(1, 13)]
    assert verdicts == ["undecided"] * 11 + ["conforming"]
    further = [sixteen_percent_rule(seq[:i]).further for i in range(1, 12)]
    assert further == [2, 4, 3, 2, 7, 6, 5, 4, 3, 2, 1]


# (flags, verdict, further) -- a sample fixed in advance, ISO 4288:1996 5.2: at most 16 % of all
FIXED_CASES = [
    ([], "undecided", 12),
    ([o] * 11, "undecided", 1),  # fewer than 12 values: not judged as a fixed sample
    ([X] + [o] * 11, "conforming", None),  # 1 of 12 = 8.3 %
    ([X, X] + [o] * 10, "nonconforming", None),  # 2 of 12 = 16.7 % (step 12 would accept)
    ([X] * 4 + [o] * 21, "conforming", None),  # 16 % exactly: 100*4 = 16*25 (from memory)
    ([X] * 5 + [o] * 20, "nonconforming", None),  # 20 %
    ([X] * 2 + [o] * 11, "conforming", None),  # 2 of 13 = 15.4 %
    ([X] * 3 + [o] * 10, "nonconforming", None),  # 3 of 13 = 23 %
    ([o] * 16 + [X] * 3, "conforming", None),  # 3 of 19 = 15.8 %
    ([X] * 3 + [o] * 15, "nonconforming", None),  # 3 of 18 = 16.7 %
]


@pytest.mark.parametrize(("flags", "verdict", "further"), FIXED_CASES)
def test_fixed_sample(flags, verdict, further):
    out = sixteen_percent_rule(flags, first_at_most_70pct=True, sampling="fixed")
    assert (out.verdict, out.further, out.decided_at) == (verdict, further, None)
    assert out.exceeding == sum(flags)


def test_unknown_sampling_is_refused():
    with pytest.raises(ValueError, match="sampling must be"):
        sixteen_percent_rule([o], sampling="adaptive")  # type: ignore[arg-type]


@settings(derandomize=True, max_examples=300)
@given(
    flags=st.lists(st.booleans(), min_size=1, max_size=14),
    later=st.lists(st.booleans(), min_size=1, max_size=20),
    first_low=st.booleans(),
)
def test_a_decision_is_never_reversed(flags, later, first_low):
    # ISO 4288:1996 5.2 step procedure: once decided, further values change neither the
    # verdict nor the value the decision was taken at
    first = first_low and not flags[0]
    out = sixteen_percent_rule(flags, first_at_most_70pct=first)
    if out.verdict == "undecided":
        return
    more = sixteen_percent_rule(flags + later, first_at_most_70pct=first)
    assert (more.verdict, more.decided_at) == (out.verdict, out.decided_at)


def test_70_percent_flag_is_ignored_when_first_value_exceeds():
    # inconsistent input (a first value cannot be both ≤ 70 % and exceeding): the exceedance wins
    assert sixteen_percent_rule([X], first_at_most_70pct=True).verdict == "undecided"


@pytest.mark.parametrize(
    ("flags", "verdict", "further"),
    [
        # lower limits: no 70 % shortcut, the procedure starts at the 3-value step
        ([], "undecided", 3),
        ([o], "undecided", 2),
        ([o, o, o], "conforming", None),
        ([X, X, X], "nonconforming", None),
    ],
)
def test_no_shortcut_for_lower_limits(flags, verdict, further):
    out = sixteen_percent_rule(flags, first_at_most_70pct=True, shortcut=False)
    assert (out.verdict, out.further) == (verdict, further)


def test_nonconforming_as_soon_as_certain():
    # ISO 4288:1996 5.2: more than 2 of 12 can never conform; decided at the 3rd exceeding value
    seq = [X, o, X, o, X]
    verdicts = [sixteen_percent_rule(seq[:i]).verdict for i in range(1, len(seq) + 1)]
    assert verdicts == ["undecided", "undecided", "undecided", "undecided", "nonconforming"]
    assert sixteen_percent_rule(seq).decided_at == 5


@pytest.mark.parametrize(
    ("flags", "verdict"),
    [
        ([], "undecided"),
        ([o], "conforming"),  # ISO 1302 "max": no value exceeds
        ([o, o, o], "conforming"),
        ([o, X, o], "nonconforming"),
        ([X], "nonconforming"),
    ],
)
def test_max_rule(flags, verdict):
    assert max_rule(flags).verdict == verdict
    assert apply_rule("max", flags).verdict == verdict


def test_unknown_values_in_the_step_procedure_are_not_steps():
    # a measurement that gave no value is not a value of the ISO 4288 5.2 sequence: the
    # procedure runs on the values evaluated, in order (documented choice of rules.py)
    out = sixteen_percent_rule([o, None, o, o, o, o])
    assert (out.verdict, out.unknown, out.decided_at) == ("conforming", 1, 4)  # step 3 at the 4th
    out = sixteen_percent_rule([X, X, X, None])
    assert (out.verdict, out.decided_at) == ("nonconforming", 3)
    # an unknown first measurement cannot later become the "first value" of step 1
    out = sixteen_percent_rule([None, X, X, X], first_at_most_70pct=False)
    assert (out.verdict, out.decided_at) == ("nonconforming", 4)
    out = sixteen_percent_rule([None, o, o])
    assert (out.verdict, out.further, out.unknown_decisive) == ("undecided", 1, False)
    out = sixteen_percent_rule([None])
    assert (out.verdict, out.further) == ("undecided", 1)


def test_unknown_values_of_a_whole_sample_decide_only_when_they_matter():
    # max-rule and fixed sample: every member counts, an unknown one decides only if it could
    out = max_rule([o, None])
    assert out.verdict == "undecided" and out.unknown_decisive and out.further is None
    assert max_rule([X, None]).verdict == "nonconforming"
    # fixed sample of 12: 1 exceeds, the unknown one decides (1 or 2 of 12)
    out = sixteen_percent_rule([X, None] + [o] * 10, sampling="fixed")
    assert out.verdict == "undecided" and out.unknown_decisive
    # 3 of 12 exceed whatever the unknown is
    out = sixteen_percent_rule([X, X, X, None] + [o] * 8, sampling="fixed")
    assert out.verdict == "nonconforming" and not out.unknown_decisive


def test_two_sided_combination():
    up = sixteen_percent_rule([o, o, o])
    low_ok = sixteen_percent_rule([o, o, o], shortcut=False)
    low_bad = sixteen_percent_rule([X, X, X], shortcut=False)
    low_open = sixteen_percent_rule([o], shortcut=False)
    assert combine_limits([up, low_ok]).verdict == "conforming"
    assert combine_limits([up, low_bad]).verdict == "nonconforming"
    both_open = combine_limits([sixteen_percent_rule([o], first_at_most_70pct=False), low_open])
    assert (both_open.verdict, both_open.further) == ("undecided", 2)
    # the more demanding limit sets the number of further values
    a = sixteen_percent_rule([X])  # needs 5
    b = sixteen_percent_rule([o], shortcut=False)  # needs 2
    assert combine_limits([a, b]).further == 5
    assert combine_limits([up]) is up
    with pytest.raises(ValueError, match="no outcomes"):
        combine_limits([])


def test_apply_rule_rejects_unknown_rule():
    with pytest.raises(ValueError, match="rule must be"):
        apply_rule("median", [o])  # type: ignore[arg-type]


_RANK = {"nonconforming": 0, "undecided": 1, "conforming": 2}


@settings(derandomize=True, max_examples=300)
@given(
    flags=st.lists(st.booleans(), min_size=0, max_size=30),
    first_low=st.booleans(),
    index=st.integers(min_value=0, max_value=29),
    rule=st.sampled_from(["16%", "max"]),
)
def test_more_exceeding_never_improves(flags, first_low, index, rule):
    # Monotonicity: turning one value into an exceeding one (raising it above an upper limit, or
    # lowering it below a lower limit) never turns a verdict into a better one, in particular
    # never nonconforming into conforming. Follows from ISO 4288 5.2 counting exceedances.
    before = apply_rule(rule, flags, first_at_most_70pct=first_low and bool(flags) and not flags[0])
    if not flags:
        return
    i = index % len(flags)
    worse = list(flags)
    worse[i] = True
    first_low_after = first_low and not worse[0]
    after = apply_rule(rule, worse, first_at_most_70pct=first_low_after)
    assert _RANK[after.verdict] <= _RANK[before.verdict]


@settings(derandomize=True, max_examples=300)
@given(flags=st.lists(st.booleans(), max_size=12))
def test_undecided_further_is_the_smallest_that_can_conform(flags):
    # the stated number of further values, all not exceeding, conforms; one fewer does not
    out = sixteen_percent_rule(flags)
    if out.verdict != "undecided":
        return
    assert isinstance(out, RuleOutcome) and out.further is not None and out.further >= 1
    # with no values yet, the one further value may meet step 1 (at most 70 % of the limit)
    low = not flags
    assert (
        sixteen_percent_rule(flags + [o] * out.further, first_at_most_70pct=low).verdict
        == "conforming"
    )
    # with one fewer it is not yet conforming
    assert sixteen_percent_rule(flags + [o] * (out.further - 1)).verdict != "conforming"
