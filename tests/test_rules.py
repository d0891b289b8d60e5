"""Acceptance rules: the ISO 4288 16 % step procedure and the max-rule.

Sources: ISO 4288:1996 clause 5.2 (16 % rule, step procedure: first value ≤ 70 % of the limit;
none of the first 3; at most 1 of the first 6; at most 2 of the first 12; a larger sample by the
16 % criterion, e.g. 4 of 25: from memory) and clause 5.3 / ISO 1302:2002 (max-rule: no value may
exceed). "All measured values count" and "no 70 % shortcut for lower limits" are documented
choices of speccheck.evaluation.rules, tested here as such.
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


# (flags, first value at most 70 %, expected verdict, expected further values) -- ISO 4288:1996 5.2
SIXTEEN_CASES = [
    # nothing measured yet: one value could already decide (step 1)
    ([], False, "undecided", 1),
    # step 1: first value at most 70 % of the limit
    ([o], True, "conforming", None),
    ([o], False, "undecided", 2),  # above 70 %, not exceeding: 2 more for step 3
    ([X], False, "undecided", 5),  # exceeds: step 3 impossible, step 6 needs 5 more
    ([o, o], False, "undecided", 1),
    ([o, o], True, "conforming", None),  # step 1 met, second value consistent
    ([o, X], True, "undecided", 4),  # step 1 spoilt by an exceeding value: every value counts
    # step 3: none of the first 3 exceeds
    ([o, o, o], False, "conforming", None),
    ([o, o, X], False, "undecided", 3),
    ([X, X, o], False, "undecided", 9),  # 2 exceed: only step 12 remains
    ([X, X, X], False, "nonconforming", None),  # 3 exceed: no step can be met any more
    # step 6: at most 1 of the first 6
    ([o, o, X, o, o, o], False, "conforming", None),
    ([o, o, X, o, o, X], False, "undecided", 6),
    ([o, X, X, o, X], False, "nonconforming", None),  # 3 of 5: nonconforming before the 6th
    ([o, o, o, o], False, "conforming", None),  # more than needed, none exceeds
    ([o, o, o, X], False, "undecided", 2),  # the 4th counts: step 3 not met with all values
    # step 12: at most 2 of the first 12
    ([X, X] + [o] * 10, False, "conforming", None),
    ([X, X] + [o] * 9, False, "undecided", 1),
    ([X, X, X] + [o] * 9, False, "nonconforming", None),
    ([o] * 11 + [X], False, "conforming", None),  # 1 of 12 (step 6 not met with all, step 12 is)
    # more than 12 values: at most 16 % of all (ISO 4288:1996 5.2, 4 of 25 from memory)
    ([X] * 4 + [o] * 21, False, "conforming", None),  # 16 % exactly: 100*4 = 16*25
    ([X] * 5 + [o] * 20, False, "nonconforming", None),  # 20 %
    ([X] * 2 + [o] * 11, False, "conforming", None),  # 2 of 13 = 15.4 %
    ([X] * 3 + [o] * 10, False, "nonconforming", None),  # 3 of 13 = 23 %
    ([X] * 3 + [o] * 16, False, "conforming", None),  # 3 of 19 = 15.8 %
    ([X] * 3 + [o] * 15, False, "nonconforming", None),  # 3 of 18 = 16.7 %
]


@pytest.mark.parametrize(("flags", "first_low", "verdict", "further"), SIXTEEN_CASES)
def test_sixteen_percent_steps(flags, first_low, verdict, further):
    out = sixteen_percent_rule(flags, first_at_most_70pct=first_low)
    assert (out.verdict, out.further) == (verdict, further)
    assert out.values == len(flags)
    assert out.exceeding == sum(flags)


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


def test_unknown_values_decide_only_when_they_matter():
    # one unknown among values that conform anyway (step 6: at most 1 of 6 whatever it is)
    out = sixteen_percent_rule([o, None, o, o, o, o])
    assert out.verdict == "conforming" and out.unknown == 1 and not out.unknown_decisive
    # nonconforming whatever the unknown is
    assert sixteen_percent_rule([X, X, X, None]).verdict == "nonconforming"
    # the unknown decides: counted exceeding -> undecided (3 more), counted within -> conforming
    out = sixteen_percent_rule([None, o, o])
    assert out.verdict == "undecided" and out.unknown_decisive and out.further == 3
    # max-rule: the unknown could exceed
    out = max_rule([o, None])
    assert out.verdict == "undecided" and out.unknown_decisive and out.further is None
    assert max_rule([X, None]).verdict == "nonconforming"


def test_unknown_first_value_may_meet_step_1():
    # optimistic: an unknown first value could be ≤ 70 %; pessimistic: exceeding -> 5 more
    out = sixteen_percent_rule([None])
    assert out.verdict == "undecided" and out.unknown_decisive and out.further == 5


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
