"""ISO 14253-1 decision rules and zones, tested exactly at the zone boundaries.

Sources: ISO 14253-1:2017 clause 5 (conformity proven when LSL + U ≤ y ≤ USL − U;
non-conformity proven when y > USL + U or y < LSL − U; in between the uncertainty range; the
clause numbers from memory); ILAC G8:2019 section 4 (simple acceptance, guarded acceptance,
guarded rejection). ISO 4288:1996 5.2 for the 70 % step and "exceeds" = strictly beyond.
The limits and U below are written as decimals so that e.g. 0.8 − 0.05 = 0.75 must hold exactly
(binary floating point gives 0.19999999999999998 for 0.3 - 0.1).
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from speccheck.evaluation.decision import (
    ILAC_G8_NAMES,
    at_most_70_percent,
    counts_as_exceeding,
    exact,
    limit_zone,
    zone,
)
from speccheck.evaluation.rules import apply_rule

USL, LSL, U = 0.8, 0.4, 0.05


def test_float_trap_is_real():
    # the reason for exact decimal comparison: naive binary arithmetic misplaces the boundaries
    assert 0.7 * 0.8 < 0.56  # so "0.56 <= 0.7 * 0.8" would wrongly deny the 70 % step
    assert 0.3 - 0.1 < 0.2  # so "0.2 <= 0.3 - 0.1" would wrongly deny conformity proven


# value -> (zone, simple, guarded-acceptance, guarded-rejection) for the upper limit 0.8, U 0.05
UPPER_TABLE = [
    (0.70, "within", False, False, False),
    (0.75, "within", False, False, False),  # = USL − U: conformity proven (inclusive)
    (0.7500001, "uncertain", False, True, False),
    (0.80, "uncertain", False, True, False),  # = USL: does not exceed under simple acceptance
    (0.8000001, "uncertain", True, True, False),
    (0.85, "uncertain", True, True, False),  # = USL + U: non-conformity not yet proven
    (0.8500001, "outside", True, True, True),
    (1.0, "outside", True, True, True),
]


@pytest.mark.parametrize(("y", "z", "simple", "g_acc", "g_rej"), UPPER_TABLE)
def test_upper_limit_boundaries(y, z, simple, g_acc, g_rej):
    assert limit_zone(y, limit=USL, side="upper", uncertainty=U) == z
    got = [
        counts_as_exceeding(y, limit=USL, side="upper", decision_rule=r, uncertainty=U)
        for r in ("simple", "guarded-acceptance", "guarded-rejection")
    ]
    assert got == [simple, g_acc, g_rej]


# lower limit 0.4, U 0.05: the mirror image
LOWER_TABLE = [
    (0.50, "within", False, False, False),
    (0.45, "within", False, False, False),  # = LSL + U
    (0.4499999, "uncertain", False, True, False),
    (0.40, "uncertain", False, True, False),  # = LSL
    (0.3999999, "uncertain", True, True, False),
    (0.35, "uncertain", True, True, False),  # = LSL − U
    (0.3499999, "outside", True, True, True),
]


@pytest.mark.parametrize(("y", "z", "simple", "g_acc", "g_rej"), LOWER_TABLE)
def test_lower_limit_boundaries(y, z, simple, g_acc, g_rej):
    assert limit_zone(y, limit=LSL, side="lower", uncertainty=U) == z
    got = [
        counts_as_exceeding(y, limit=LSL, side="lower", decision_rule=r, uncertainty=U)
        for r in ("simple", "guarded-acceptance", "guarded-rejection")
    ]
    assert got == [simple, g_acc, g_rej]


@pytest.mark.parametrize(
    ("y", "z", "g_acc", "g_rej"),
    [
        (0.2, "within", False, False),  # = 0.3 − 0.1 exactly (binary: 0.19999999999999998)
        (0.4, "uncertain", True, False),  # = 0.3 + 0.1 exactly (binary: 0.4 too, kept for symmetry)
    ],
)
def test_boundaries_where_binary_arithmetic_errs(y, z, g_acc, g_rej):
    assert limit_zone(y, limit=0.3, side="upper", uncertainty=0.1) == z
    assert (
        counts_as_exceeding(
            y, limit=0.3, side="upper", decision_rule="guarded-acceptance", uncertainty=0.1
        )
        is g_acc
    )
    assert (
        counts_as_exceeding(
            y, limit=0.3, side="upper", decision_rule="guarded-rejection", uncertainty=0.1
        )
        is g_rej
    )


def test_zone_of_two_sided_requirement_is_the_worst():
    assert zone(0.6, upper=USL, lower=LSL, uncertainty=U) == "within"
    assert zone(0.42, upper=USL, lower=LSL, uncertainty=U) == "uncertain"
    assert zone(0.9, upper=USL, lower=LSL, uncertainty=U) == "outside"
    assert zone(0.6, upper=USL, lower=LSL, uncertainty=None) is None  # U unknown: no zone
    assert zone(0.6, uncertainty=U) is None


def test_zero_uncertainty_has_no_uncertain_zone():
    # ISO 14253-1 with U = 0: the zones meet at the limit; at the limit is within
    assert limit_zone(0.8, limit=0.8, side="upper", uncertainty=0.0) == "within"
    assert limit_zone(0.8000001, limit=0.8, side="upper", uncertainty=0.0) == "outside"


# ISO 4288:1996 5.2: "not more than 70 % of the specified value" includes exactly 70 %
SEVENTY_TABLE = [
    # (value, limit, rule, U, expected)
    (0.56, 0.8, "simple", None, True),  # exactly 70 % (0.56/0.8 is not 0.7 in binary)
    (0.5600001, 0.8, "simple", None, False),
    (2.24, 3.2, "simple", None, True),  # exactly 70 %
    (2.2400000000000007, 3.2, "simple", None, False),  # next float above
    (4.41, 6.3, "simple", None, True),  # exactly 70 %
    (0.51, 0.8, "guarded-acceptance", 0.05, True),  # 0.51 + 0.05 = 0.56 exactly
    (0.5100001, 0.8, "guarded-acceptance", 0.05, False),
    (0.61, 0.8, "guarded-rejection", 0.05, True),  # 0.61 − 0.05 = 0.56 exactly
    (0.6100001, 0.8, "guarded-rejection", 0.05, False),
]


@pytest.mark.parametrize(("y", "limit", "rule", "u", "expected"), SEVENTY_TABLE)
def test_seventy_percent_boundary(y, limit, rule, u, expected):
    assert at_most_70_percent(y, limit=limit, decision_rule=rule, uncertainty=u) is expected


def test_exact_uses_the_printed_decimal():
    assert str(exact(0.1)) == "0.1"
    with pytest.raises(ValueError, match="finite"):
        exact(float("nan"))


def test_guarded_rules_need_uncertainty():
    with pytest.raises(ValueError, match="needs the expanded uncertainty"):
        counts_as_exceeding(
            0.5, limit=0.8, side="upper", decision_rule="guarded-acceptance", uncertainty=None
        )
    with pytest.raises(ValueError, match="decision rule must be one of"):
        counts_as_exceeding(0.5, limit=0.8, side="upper", decision_rule="lenient", uncertainty=None)  # type: ignore[arg-type]
    with pytest.raises(ValueError, match="must not be negative"):
        counts_as_exceeding(0.5, limit=0.8, side="upper", decision_rule="simple", uncertainty=-0.1)
    with pytest.raises(ValueError, match="side must be"):
        counts_as_exceeding(0.5, limit=0.8, side="middle", decision_rule="simple", uncertainty=None)  # type: ignore[arg-type]


def test_ilac_names():
    # ILAC G8:2019 section 4
    assert ILAC_G8_NAMES == {
        "simple": "simple acceptance",
        "guarded-acceptance": "guarded acceptance",
        "guarded-rejection": "guarded rejection",
    }


_RANK = {"nonconforming": 0, "undecided": 1, "conforming": 2}
_values = st.lists(
    st.floats(min_value=0.0, max_value=2.0, allow_nan=False), min_size=1, max_size=20
)


def _verdict(values, *, limit, side, rule, decision, u):
    flags = [
        counts_as_exceeding(v, limit=limit, side=side, decision_rule=decision, uncertainty=u)
        for v in values
    ]
    first = side == "upper" and at_most_70_percent(
        values[0], limit=limit, decision_rule=decision, uncertainty=u
    )
    return apply_rule(rule, flags, first_at_most_70pct=first, shortcut=side == "upper").verdict


@settings(derandomize=True, max_examples=300)
@given(
    values=_values,
    index=st.integers(min_value=0, max_value=19),
    step=st.floats(min_value=0.0, max_value=1.0),
    rule=st.sampled_from(["16%", "max"]),
    decision=st.sampled_from(["simple", "guarded-acceptance", "guarded-rejection"]),
    u=st.sampled_from([0.0, 0.02, 0.1]),
)
def test_raising_a_value_never_improves_an_upper_limit_verdict(
    values, index, step, rule, decision, u
):
    # raising a measured value never turns nonconforming into conforming (nor any verdict into a
    # better one) for an upper limit; consequence of ISO 4288 5.2 and ISO 14253-1 thresholds
    i = index % len(values)
    raised = list(values)
    raised[i] = values[i] + step
    kw = dict(limit=0.8, side="upper", rule=rule, decision=decision, u=u)
    before, after = _verdict(values, **kw), _verdict(raised, **kw)
    assert _RANK[after] <= _RANK[before]
    if before == "nonconforming":
        assert after != "conforming"


@settings(derandomize=True, max_examples=300)
@given(
    values=_values,
    index=st.integers(min_value=0, max_value=19),
    step=st.floats(min_value=0.0, max_value=1.0),
    rule=st.sampled_from(["16%", "max"]),
    decision=st.sampled_from(["simple", "guarded-acceptance", "guarded-rejection"]),
    u=st.sampled_from([0.0, 0.02, 0.1]),
)
def test_lowering_a_value_never_improves_a_lower_limit_verdict(
    values, index, step, rule, decision, u
):
    i = index % len(values)
    lowered = list(values)
    lowered[i] = values[i] - step
    kw = dict(limit=0.4, side="lower", rule=rule, decision=decision, u=u)
    before, after = _verdict(values, **kw), _verdict(lowered, **kw)
    assert _RANK[after] <= _RANK[before]
