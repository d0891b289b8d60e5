"""Sampling plans: ISO 2859-1 code letters, sample sizes and the operating characteristic."""

from __future__ import annotations

import math

import numpy as np
import pytest

from speccheck.lot.sampling import (
    acceptance_probability,
    code_letter,
    fraction_at_probability,
    oc_curve,
    oc_model,
    plan_for_level,
    plan_for_sample_size,
    sample_size_for_letter,
)

# ISO 2859-1:1999 Table 1 (general inspection level II) and Table 2-A (sample size per code
# letter): (lot size, code letter, sample size). Boundaries on both sides of each row limit.
ISO_2859_1_LEVEL_II = [
    (2, "A", 2),
    (8, "A", 2),
    (9, "B", 3),
    (15, "B", 3),
    (16, "C", 5),
    (25, "C", 5),
    (26, "D", 8),
    (50, "D", 8),
    (51, "E", 13),
    (90, "E", 13),
    (91, "F", 20),
    (150, "F", 20),
    (151, "G", 32),
    (280, "G", 32),
    (281, "H", 50),
    (500, "H", 50),
    (501, "J", 80),
    (1200, "J", 80),
    (1201, "K", 125),
    (3200, "K", 125),
    (3201, "L", 200),
    (10000, "L", 200),
    (10001, "M", 315),
    (35000, "M", 315),
    (35001, "N", 500),
    (150000, "N", 500),
    (150001, "P", 800),
    (500000, "P", 800),
    (500001, "Q", 1250),
    (10_000_000, "Q", 1250),
]


@pytest.mark.parametrize(("lot_size", "letter", "n"), ISO_2859_1_LEVEL_II)
def test_code_letter_and_sample_size_iso_2859_1(lot_size, letter, n):
    # ISO 2859-1:1999 Table 1 (level II) and Table 2-A
    assert code_letter(lot_size) == letter
    assert sample_size_for_letter(letter) == n
    plan = plan_for_level(lot_size, 1)
    assert plan.code_letter == letter
    assert plan.sample_size == min(n, lot_size)


def test_letter_r_sample_size():
    # ISO 2859-1:1999 Table 2-A: R -> 2000 (reached only through arrows of the master table)
    assert sample_size_for_letter("R") == 2000


def test_every_part_flag_at_boundary():
    # A lot of 2 with letter A (n = 2): n == N, every part; a lot of 3: n = 2 < 3.
    assert plan_for_level(2, 0).every_part is True
    assert plan_for_level(3, 0).every_part is False
    p = plan_for_sample_size(10, 12, 1)
    assert (p.sample_size, p.every_part) == (10, True)


@pytest.mark.parametrize(
    ("call", "match"),
    [
        (lambda: code_letter(1), "lot_size must be an integer ≥ 2"),
        (lambda: code_letter(10, level="III"), "only general inspection level II"),
        (lambda: sample_size_for_letter("I"), "unknown code letter 'I'"),
        (lambda: plan_for_level(100, -1), "acceptance_number must be an integer ≥ 0"),
        (lambda: acceptance_probability(1.5, sample_size=5, acceptance_number=0), r"\[0, 1\]"),
    ],
)
def test_bad_arguments(call, match):
    with pytest.raises(ValueError, match=match):
        call()


def binomial_pa_by_hand(p: float, n: int, c: int) -> float:
    """Σ_{d≤c} C(n,d) p^d (1−p)^(n−d), summed with math.comb (independent of scipy)."""
    return sum(math.comb(n, d) * p**d * (1 - p) ** (n - d) for d in range(c + 1))


def hypergeometric_pa_by_hand(defectives: int, big_n: int, n: int, c: int) -> float:
    """Σ_{d≤c} C(D,d) C(N−D,n−d) / C(N,n), exact integers (independent of scipy)."""
    total = math.comb(big_n, n)
    return (
        sum(math.comb(defectives, d) * math.comb(big_n - defectives, n - d) for d in range(c + 1))
        / total
    )


@pytest.mark.parametrize(("n", "c"), [(13, 0), (50, 1), (80, 2), (125, 3), (200, 5)])
@pytest.mark.parametrize("p", [0.0, 0.001, 0.01, 0.025, 0.04, 0.1, 0.3, 1.0])
def test_binomial_oc_against_hand_sum(n, c, p):
    # Binomial OC (NIST/SEMATECH e-Handbook 6.2.3.2), summed by hand with math.comb.
    got = acceptance_probability(p, sample_size=n, acceptance_number=c, lot_size=None)
    assert got == pytest.approx(binomial_pa_by_hand(p, n, c), rel=1e-10, abs=1e-15)


def test_binomial_textbook_value():
    # n = 52, c = 3, p = 0.01: P(accept) = 0.998 (NIST/SEMATECH e-Handbook 6.2.3.2 worked
    # OC table; from memory, 3 decimals) — and the hand sum agrees.
    got = acceptance_probability(0.01, sample_size=52, acceptance_number=3)
    assert round(got, 3) == 0.998
    assert got == pytest.approx(binomial_pa_by_hand(0.01, 52, 3), rel=1e-12)


@pytest.mark.parametrize(("big_n", "n", "c"), [(20, 5, 0), (20, 5, 1), (40, 8, 1), (100, 20, 2)])
def test_hypergeometric_oc_against_hand_sum(big_n, n, c):
    # n/N > 0.1 -> hypergeometric with D = round(p N); exact integer sums by hand.
    assert oc_model(n, big_n) == "hypergeometric"
    for defectives in range(big_n + 1):
        p = defectives / big_n
        got = acceptance_probability(p, sample_size=n, acceptance_number=c, lot_size=big_n)
        assert got == pytest.approx(
            hypergeometric_pa_by_hand(defectives, big_n, n, c), rel=1e-9, abs=1e-15
        )


def test_model_switch_at_one_tenth():
    # Sampling fraction exactly 0.1 stays binomial; above it, hypergeometric (documented rule).
    assert oc_model(50, 500) == "binomial"
    assert oc_model(50, 499) == "hypergeometric"
    assert oc_model(50, None) == "binomial"
    # Lot of 500 (code letter H, n = 50) -> binomial; scipy.stats.binom agrees with the hand sum
    plan = plan_for_level(500, 1)
    pts = oc_curve(plan, [0.01, 0.05])
    for pt in pts:
        assert pt.probability_accept == pytest.approx(
            binomial_pa_by_hand(pt.fraction_nonconforming, 50, 1), rel=1e-10
        )


def test_oc_is_monotone_decreasing():
    # P(accept) cannot rise as the lot gets worse (a property of both models).
    for plan in (plan_for_level(1000, 2), plan_for_level(20, 1)):
        pa = [pt.probability_accept for pt in oc_curve(plan, np.linspace(0, 1, 101))]
        assert all(a >= b - 1e-15 for a, b in zip(pa, pa[1:], strict=False))
        assert pa[0] == 1.0 and pa[-1] == 0.0


def test_fraction_at_probability_binomial():
    # n = 80, c = 2 (lot 1000, letter J). At the solved p, the hand sum gives the probability.
    plan = plan_for_level(1000, 2)
    p95 = fraction_at_probability(plan, 0.95)
    p10 = fraction_at_probability(plan, 0.10)
    assert p95 is not None and p10 is not None and p95 < p10
    assert binomial_pa_by_hand(p95, 80, 2) == pytest.approx(0.95, abs=1e-9)
    assert binomial_pa_by_hand(p10, 80, 2) == pytest.approx(0.10, abs=1e-9)
    # c = 0: closed form (1 − p)^n = P  ->  p = 1 − P^(1/n)
    plan0 = plan_for_level(1000, 0)
    assert fraction_at_probability(plan0, 0.5) == pytest.approx(1 - 0.5 ** (1 / 80), abs=1e-10)


def test_fraction_at_probability_hypergeometric_step():
    # N = 20, n = 5, c = 0: smallest D/N with C(N−D,5)/C(N,5) <= 0.10, searched by hand.
    plan = plan_for_level(20, 0)
    expected = next(d / 20 for d in range(21) if hypergeometric_pa_by_hand(d, 20, 5, 0) <= 0.10)
    assert fraction_at_probability(plan, 0.10) == expected
