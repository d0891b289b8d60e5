"""ISO 13565-2 (Rk family) and ISO 13565-3 (Rpq, Rvq, Rmq) on profiles built from a chosen
material ratio curve, with the expected values derived by hand below."""

from __future__ import annotations

import math

import numpy as np
import pytest

from speccheck.parameters import rk

N = 100_000


def heights_from_curve(curve, n: int = N, seed: int = 7) -> np.ndarray:
    """Heights whose material ratio curve is ``curve(mr_pct)``: the i-th highest height is
    curve(100·(i + ½)/n), then shuffled (the curve does not depend on the order)."""
    mr = (np.arange(n) + 0.5) * (100.0 / n)
    return np.random.default_rng(seed).permutation(curve(mr))


def plateau_core_valley(mr):
    """Piecewise-linear Abbott curve, heights in µm, material ratio m in %:

    * peaks   0 ≤ m ≤ 10:  h = 3 − 0.2 m          (3 → 1)
    * core   10 ≤ m ≤ 80:  h = 1 − (m − 10)/35    (1 → −1)
    * valleys 80 ≤ m ≤ 100: h = −1 − 0.2 (m − 80)  (−1 → −5)
    """
    return np.piecewise(
        mr,
        [mr < 10, (mr >= 10) & (mr <= 80), mr > 80],
        [lambda m: 3 - 0.2 * m, lambda m: 1 - (m - 10) / 35, lambda m: -1 - 0.2 * (m - 80)],
    )


def test_rk_family_on_piecewise_linear_curve():
    """Hand derivation (ISO 13565-2:1996 clause 4 definitions):

    Any 40 % secant inside the core (which spans 70 %) has gradient −1/35 µm/%; a secant that
    reaches into the peak or valley segment (gradient −0.2) is steeper, so the equivalent
    straight line is the core line h = 1 − (m − 10)/35.
    Its heights at 0 % and 100 %: 1 + 10/35 = 9/7 µm and 1 − 90/35 = −11/7 µm, so
    Rk = 9/7 + 11/7 = 20/7 = 2.857143 µm.
    Mr1: 3 − 0.2 m = 9/7 → m = 60/7 = 8.571429 %.
    Mr2: −1 − 0.2 (m − 80) = −11/7 → m = 80 + 20/7 = 82.857143 %.
    A1 = ½ (3 − 9/7)(60/7) = 360/49 µm·%; Rpk = 2 A1 / Mr1 = 12/7 = 1.714286 µm.
    A2 = ½ (−11/7 + 5)(100 − 580/7) = ½ (24/7)(120/7) = 1440/49 µm·%;
    Rvk = 2 A2 / (100 − Mr2) = 24/7 = 3.428571 µm.

    Tolerances: with 10⁵ samples the curve is resolved to 0.001 % in material ratio, 2e-4 µm in
    height on the steep segments; 1e-3 µm for heights, 2e-3 % for ratios, 0.01 µm·% for areas.
    """
    res = rk.rk_parameters(heights_from_curve(plateau_core_valley))
    assert res
    assert res.Rk == pytest.approx(20 / 7, abs=1e-3)
    assert res.core_top_um == pytest.approx(9 / 7, abs=1e-3)
    assert res.core_bottom_um == pytest.approx(-11 / 7, abs=1e-3)
    assert res.Mr1 == pytest.approx(60 / 7, abs=2e-3)
    assert res.Mr2 == pytest.approx(580 / 7, abs=2e-3)
    assert res.A1 == pytest.approx(360 / 49, abs=0.01)
    assert res.A2 == pytest.approx(1440 / 49, abs=0.01)
    assert res.Rpk == pytest.approx(12 / 7, abs=1e-3)
    assert res.Rvk == pytest.approx(24 / 7, abs=1e-3)
    lo, hi = res.window_pct
    assert 10 - 1e-3 <= lo and hi <= 80 + 1e-3 and hi - lo == pytest.approx(40, abs=2e-3)


def test_triangle_wave_has_no_peak_or_valley_zone():
    """A symmetric triangle of amplitude A has uniformly distributed heights: a straight
    material ratio curve from A to −A. The equivalent line is the curve itself, so Rk = 2A and
    Rpk = Rvk = 0 (domain notes, [calc]); Mr1 = 0 %, Mr2 = 100 %."""
    a = 2.0
    t = (np.arange(N) + 0.5) / 1000 % 1.0
    z = a * (4 * np.abs(t - 0.5) - 1)
    res = rk.rk_parameters(z)
    assert res.Rk == pytest.approx(2 * a, abs=1e-3)
    assert res.Rpk == pytest.approx(0.0, abs=1e-3)
    assert res.Rvk == pytest.approx(0.0, abs=1e-3)
    assert res.Mr1 == pytest.approx(0.0, abs=0.05)
    assert res.Mr2 == pytest.approx(100.0, abs=0.05)


def test_flat_profile_has_no_core():
    res = rk.rk_parameters(np.full(1000, 0.25))
    assert not res
    assert isinstance(res, rk.NoCore)
    assert res.reason.startswith("no core found for Rk")
    assert not rk.rk_parameters(np.arange(5.0))  # too few points


def two_line_probability_curve(sigma_p: float, sigma_v: float, x0: float):
    """Heights whose material ratio, on a normal-probability scale x = Φ⁻¹(Mr), is two lines:
    h = −σp·x for x ≤ x0 (plateau) and h = −σp·x0 − σv·(x − x0) for x > x0 (valleys)."""
    from scipy.special import ndtri

    def curve(mr):
        x = ndtri(mr / 100.0)
        return np.where(x <= x0, -sigma_p * x, -sigma_p * x0 - sigma_v * (x - x0))

    return curve


def test_probability_parameters_on_two_line_curve():
    """ISO 13565-3:1998: on the normal-probability material ratio curve the plateau and valley
    lines have slopes −Rpq and −Rvq (µm per standard deviation) and meet at Rmq. Built with
    σp = 0.3 µm, σv = 1.5 µm, break at x0 = 1 (Mr = Φ(1) = 84.134 %, scipy.special.ndtr).
    The fit runs on a 400-point grid of x; the break lies between grid points, which costs the
    line containing it a few points of misfit: tolerances 1 % for slopes, 0.2 % for Rmq."""
    from scipy.special import ndtr

    z = heights_from_curve(two_line_probability_curve(0.3, 1.5, 1.0))
    res = rk.probability_parameters(z)
    assert res
    assert res.Rpq == pytest.approx(0.3, rel=0.01)
    assert res.Rvq == pytest.approx(1.5, rel=0.01)
    assert res.Rmq == pytest.approx(float(ndtr(1.0)) * 100, abs=0.2)


def test_probability_parameters_of_gaussian_equal_rq():
    """Gaussian heights of σ: the probability curve is one line of slope −σ, so Rpq = Rvq = σ
    = Rq (ISO 13565-3 reduces to Rq for an unstratified surface). Seed fixed, N = 10⁵; the tails
    of a finite sample scatter, tolerance 3 %."""
    z = np.random.default_rng(11).normal(0.0, 0.8, N)
    res = rk.probability_parameters(z)
    assert res.Rpq == pytest.approx(0.8, rel=0.03)
    assert res.Rvq == pytest.approx(0.8, rel=0.03)
    assert not math.isnan(res.Rmq)


def test_standard_normal_matches_scipy():
    # Reference: scipy.special.ndtr / ndtri (Cephes), used here only to check the stdlib forms
    # that the probability grid uses (statistics.NormalDist, math.erfc).
    from scipy.special import ndtr, ndtri

    x = np.linspace(-2.6, 2.6, 400)
    assert np.allclose(rk._normal_cdf(x), ndtr(x), rtol=1e-14, atol=0)
    for p in (0.005, 0.16, 0.5, 0.995):
        assert rk._STD_NORMAL.inv_cdf(p) == pytest.approx(ndtri(p), rel=1e-14)
