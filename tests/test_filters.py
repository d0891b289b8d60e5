"""Filters: ISO 16610-21 Gaussian, ISO 16610-31 robust regression, ISO 13565-1, form removal.

Profiles are built from closed forms (sines, polynomials, arcs) or seeded noise.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from speccheck.errors import SpeccheckError
from speccheck.filters import (
    ALPHA,
    gaussian_kernel,
    gaussian_lowpass,
    gaussian_mean_line,
    mean_line_transmission,
    regression_mean_line,
    remove_form,
    robust_mean_line,
    valley_suppressed_mean_line,
)
from speccheck.filters._blockconv import BlockConvolver

DX_UM = 0.5  # ISO 3274:1996 Table 1 largest spacing for λc 0.8 mm (domain notes: from memory)
LC_UM = 800.0


def _amplitude(y: np.ndarray, x_um: np.ndarray, wavelength_um: float) -> float:
    """Amplitude of the component of y at one wavelength (least squares on sin and cos)."""
    a = np.column_stack(
        [np.sin(2 * np.pi * x_um / wavelength_um), np.cos(2 * np.pi * x_um / wavelength_um)]
    )
    coef, *_ = np.linalg.lstsq(a, y, rcond=None)
    return float(np.hypot(*coef))


def _interior(n: int, cutoff_um: float = LC_UM, dx_um: float = DX_UM, factor: float = 1.6) -> slice:
    """Drop factor × λc at both ends (beyond the kernel reach, ±λc for the Gaussian)."""
    m = int(math.ceil(factor * cutoff_um / dx_um))
    return slice(m, n - m)


# --- ISO 16610-21 Gaussian ------------------------------------------------------------------


def test_alpha_value():
    # ISO 16610-21 clause 4.2: α = √(ln 2 / π) = 0.4697 (domain notes [pub/calc])
    assert ALPHA == pytest.approx(0.469719, abs=5e-7)


@pytest.mark.parametrize(
    ("ratio", "published"),
    [(0.5, 0.9375), (1.0, 0.5000), (2.0, 0.1591), (3.0, 0.0741)],
)
def test_roughness_transmission_on_sinusoids(ratio, published):
    """Roughness transmission of the discrete filter at λ/λc = 0.5, 1, 2, 3.

    ISO 16610-21 mean-line transmission a1/a0 = exp(-π (α λc / λ)²). With α² = ln 2 / π the
    exponent is ln 2 · (λc/λ)², so the mean line passes 2^-(λc/λ)² and the roughness profile
    1 − 2^-(λc/λ)²: 1 − 1/16 = 0.9375, 1/2, 1 − 2^-1/4 = 0.15910, 1 − 2^-1/9 = 0.07412
    (domain notes §3, [calc]; published to 4 decimals).
    """
    lam = ratio * LC_UM
    n = int(round(12 * LC_UM / DX_UM))
    x = np.arange(n) * DX_UM
    z = np.sin(2 * np.pi * x / lam)
    rough = z - gaussian_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM)
    inner = _interior(n)
    measured = _amplitude(rough[inner], x[inner], lam)
    closed_form = 1.0 - 2.0 ** (-((1.0 / ratio) ** 2))
    assert measured == pytest.approx(published, abs=5e-5)  # published value, 4 decimals
    # truncation at ±λc leaves out 9.5e-8 of the kernel mass: agreement to 1e-6
    assert measured == pytest.approx(closed_form, abs=1e-6)


def test_mean_line_passes_half_at_cutoff():
    # ISO 16610-21 clause 4.2: 50 % transmission of the mean line at λ = λc
    n = int(round(12 * LC_UM / DX_UM))
    x = np.arange(n) * DX_UM
    line = gaussian_mean_line(np.sin(2 * np.pi * x / LC_UM), dx_um=DX_UM, cutoff_um=LC_UM)
    inner = _interior(n)
    assert _amplitude(line[inner], x[inner], LC_UM) == pytest.approx(0.5, abs=1e-6)
    # zero phase: the mean line is in phase with the sine (no cosine component)
    a = np.column_stack(
        [np.sin(2 * np.pi * x[inner] / LC_UM), np.cos(2 * np.pi * x[inner] / LC_UM)]
    )
    (s, c), *_ = np.linalg.lstsq(a, line[inner], rcond=None)
    assert abs(c) < 1e-9 and s > 0


def test_transmission_formula_helper():
    # closed form exp(-π(αλc/λ)²) = 2^-(λc/λ)², derived above
    lam = np.array([400.0, 800.0, 1600.0])
    np.testing.assert_allclose(
        mean_line_transmission(lam, cutoff_um=800.0), 2.0 ** -((800.0 / lam) ** 2), rtol=1e-12
    )


def test_kernel_sums_to_one_symmetric_truncated_at_cutoff():
    k = gaussian_kernel(dx_um=DX_UM, cutoff_um=LC_UM)
    assert k.sum() == pytest.approx(1.0, abs=1e-14)
    np.testing.assert_array_equal(k, k[::-1])
    assert k.size == 2 * int(LC_UM / DX_UM) + 1  # |x| ≤ λc (module docstring of gaussian.py)
    # the weight at ±λc relative to the centre is exp(-π/α²) = exp(-π²/ln 2) = 6.5e-7
    assert k[0] / k[k.size // 2] == pytest.approx(math.exp(-(math.pi**2) / math.log(2)), rel=1e-9)


def test_kernel_frequency_response_matches_continuous():
    """DFT of the discrete kernel at 1/λc equals exp(-π α²) = 0.5 (ISO 16610-21 clause 4.2)."""
    k = gaussian_kernel(dx_um=DX_UM, cutoff_um=LC_UM)
    x = (np.arange(k.size) - k.size // 2) * DX_UM
    h = float(np.sum(k * np.cos(2 * np.pi * x / LC_UM)))
    assert h == pytest.approx(0.5, abs=1e-6)


def test_agrees_with_scipy_gaussian_filter1d_away_from_ends():
    """Reference library: scipy.ndimage.gaussian_filter1d.

    s(x) ∝ exp(-π x² / (αλc)²) = exp(-x² / (2σ²)) with σ = αλc / √(2π), in samples σ/dx.
    scipy's kernel is truncated at ``truncate`` σ; ours at λc = √(2π)/α σ = 5.34 σ, so scipy is
    given that truncation and both kernels are the same normalised samples.
    """
    from scipy.ndimage import gaussian_filter1d

    rng = np.random.default_rng(20261202)
    n = 20000
    z = np.cumsum(rng.normal(size=n)) * 0.01 + rng.normal(size=n)
    sigma_samples = ALPHA * LC_UM / math.sqrt(2 * math.pi) / DX_UM
    trunc = (LC_UM / DX_UM) / sigma_samples
    ref = gaussian_filter1d(z, sigma_samples, truncate=trunc)
    ours = gaussian_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM)
    inner = _interior(n, factor=1.0)
    np.testing.assert_allclose(ours[inner], ref[inner], rtol=0, atol=1e-10)


def test_ends_are_weighted_means_of_existing_points():
    """At the ends the mean line is Σ s z / Σ s over the points present (gaussian.py docstring).

    A constant profile therefore stays constant right to the ends, and the first point equals
    the one-sided weighted mean computed directly.
    """
    z = np.full(5000, 3.25)
    np.testing.assert_allclose(
        gaussian_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM), 3.25, rtol=1e-12
    )
    rng = np.random.default_rng(7)
    z = rng.normal(size=5000)
    k = gaussian_kernel(dx_um=DX_UM, cutoff_um=LC_UM)
    r = k.size // 2
    first = np.sum(k[r:] * z[: r + 1]) / np.sum(k[r:])
    assert gaussian_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM)[0] == pytest.approx(first, rel=1e-10)


def test_short_profile_and_lowpass():
    # a profile shorter than the kernel still filters (both ends truncated)
    z = np.linspace(0.0, 1.0, 11)
    line = gaussian_mean_line(z, dx_um=1.0, cutoff_um=800.0)
    assert line.shape == z.shape and np.all(np.isfinite(line))
    # λs low-pass at 2.5 µm passes a 250 µm sine: 2^-(2.5/250)² = 0.99993 (closed form above)
    n = 20000
    x = np.arange(n) * DX_UM
    p = gaussian_lowpass(np.sin(2 * np.pi * x / 250.0), dx_um=DX_UM, lambda_s_um=2.5)
    inner = _interior(n, cutoff_um=2.5)
    assert _amplitude(p[inner], x[inner], 250.0) == pytest.approx(
        2.0 ** -((2.5 / 250.0) ** 2), abs=1e-9
    )


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"dx_um": 0.0, "cutoff_um": 800.0}, "dx_um must be a positive length, got 0.0"),
        ({"dx_um": 0.5, "cutoff_um": -1.0}, "cutoff_um must be a positive length, got -1.0"),
        ({"dx_um": 0.5, "cutoff_um": float("nan")}, "cutoff_um must be a positive length"),
    ],
)
def test_gaussian_rejects_bad_lengths(kwargs, match):
    with pytest.raises(SpeccheckError, match=match):
        gaussian_mean_line(np.zeros(10), **kwargs)


def test_rejects_non_finite_heights():
    z = np.zeros(10)
    z[4] = np.nan
    with pytest.raises(SpeccheckError, match="non-finite height at index 4"):
        gaussian_mean_line(z, dx_um=0.5, cutoff_um=800.0)


# --- block convolution (internal) -----------------------------------------------------------


@pytest.mark.parametrize(("n", "k"), [(100, 31), (10, 31), (50000, 4981), (7, 3), (40000, 20001)])
def test_block_convolution_equals_numpy_convolve(n, k):
    # reference library: numpy.convolve (direct sum), 'same' = full[r : r + n]
    rng = np.random.default_rng(n + k)
    z, kern = rng.normal(size=n), rng.normal(size=k)
    bc = BlockConvolver(n, [kern])
    r = (k - 1) // 2
    np.testing.assert_allclose(
        bc.convolve(bc.transform(z), 0), np.convolve(z, kern)[r : r + n], atol=1e-11
    )


# --- ISO 16610-31 regression and robust filters -------------------------------------------


def test_order0_regression_with_unit_weights_is_the_gaussian():
    # Gaussian regression of order 0, δ = 1: Σ s z / Σ s, which is gaussian_mean_line everywhere
    rng = np.random.default_rng(3)
    z = np.cumsum(rng.normal(size=12000)) * 0.05
    a = regression_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM, order=0)
    b = gaussian_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM)
    np.testing.assert_allclose(a, b, rtol=0, atol=1e-10)


def test_order2_regression_reproduces_a_quadratic_exactly():
    # polynomial reproduction: a local quadratic fit returns any quadratic unchanged, ends included
    x = np.arange(9000) * DX_UM
    z = 3.0 - 2e-3 * x + 4e-7 * x**2
    line = regression_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM, order=2)
    np.testing.assert_allclose(line, z, rtol=0, atol=1e-8)
    fit = robust_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM, order=2)
    np.testing.assert_allclose(fit.mean_line_um, z, rtol=0, atol=1e-8)
    assert fit.converged


def test_order2_regression_half_transmission_at_cutoff():
    """Order-2 Gaussian regression: H(ω) = (1 + t) e^-t with t = σ²ω²/2.

    Local quadratic fit with Gaussian weight g of variance σ² (moments μ2 = σ², μ4 = 3σ⁴):
    equivalent kernel K(u) = g(u)(3 − u²/σ²)/2, whose transform is G(1 + σ²ω²/2) with
    G = e^(-σ²ω²/2). With σ = γλc/√(2π) and ω = 2π/λc, t = πγ²; 50 % needs (1 + t)e^-t = 1/2,
    t = 1.67835, γ = 0.7309 (domain notes §3 [calc]). Checked on a sine at λc away from the ends.
    """
    n = int(round(14 * LC_UM / DX_UM))
    x = np.arange(n) * DX_UM
    line = regression_mean_line(
        np.sin(2 * np.pi * x / LC_UM), dx_um=DX_UM, cutoff_um=LC_UM, order=2
    )
    inner = _interior(n, factor=2.0)
    # kernel cut at ±1.95 λc (robust.py docstring): transmission error 8e-9
    assert _amplitude(line[inner], x[inner], LC_UM) == pytest.approx(0.5, abs=1e-7)


def test_robust_order0_matches_gaussian_on_clean_symmetric_profile():
    """On a clean profile the biweight keeps every point (r < c) and, the roughness being
    symmetric about the mean line, the robust order-0 line stays on the Gaussian one.

    Profile: a 20 mm wave (passed: 2^-(0.8/20)² = 0.9989) plus an 80 µm roughness sine of
    amplitude 1 µm; all weights stay ≥ 0.8 (|r| ≤ 1 µm, c = 4.4478 · median|r| ≈ 3.1 µm).
    The weights modulate the kernel at twice the roughness frequency; where the mean line is
    curved this shifts it by a term of the order of the curvature × kernel width², here
    < 1e-3 µm (0.1 % of the roughness amplitude). Measured 5.8e-4 µm; a line pulled by
    asymmetric weights would move by a sizeable fraction of the amplitude.
    """
    n = int(round(12 * LC_UM / DX_UM))
    x = np.arange(n) * DX_UM
    z = 2.0 * np.sin(2 * np.pi * x / 20000.0) + np.sin(2 * np.pi * x / 80.0)
    fit = robust_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM, order=0)
    g = gaussian_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM)
    inner = _interior(n)
    assert fit.converged
    assert np.min(fit.weights[inner]) > 0.8
    assert np.max(np.abs(fit.mean_line_um[inner] - g[inner])) < 1e-3


def _scratched_profile():
    n = int(round(10 * LC_UM / DX_UM))
    x = np.arange(n) * DX_UM
    clean = 0.5 * np.sin(2 * np.pi * x / 60.0)
    z = clean.copy()
    centre = n // 2
    half = int(25.0 / DX_UM)  # 50 µm wide, 20 µm deep scratch (40 × the roughness amplitude)
    z[centre - half : centre + half + 1] -= 20.0
    return x, clean, z, centre


@pytest.mark.parametrize("order", [0, 2])
def test_robust_mean_line_does_not_dip_into_a_scratch(order):
    """ISO 16610-31 purpose: outliers (a deep scratch) do not pull the mean line.

    The Gaussian line dips by about depth × width × s(0) = 20 µm · 50 µm / (α · 800 µm) ≈ 2.7 µm
    at the scratch; the robust line must dip by less than 5 % of that.
    """
    x, clean, z, centre = _scratched_profile()
    g_dip = (
        gaussian_mean_line(clean, dx_um=DX_UM, cutoff_um=LC_UM)
        - gaussian_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM)
    )[centre]
    assert g_dip == pytest.approx(20.0 * 50.0 / (ALPHA * LC_UM), rel=0.02)
    fit = robust_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM, order=order)
    ref = robust_mean_line(clean, dx_um=DX_UM, cutoff_um=LC_UM, order=order)
    r_dip = (ref.mean_line_um - fit.mean_line_um)[centre]
    assert fit.converged
    assert abs(r_dip) < 0.05 * g_dip
    assert np.all(fit.weights[centre - 40 : centre + 41] == 0.0)  # the scratch is weighted out


def test_robust_reports_iterations_and_cap():
    _, _, z, _ = _scratched_profile()
    capped = robust_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM, max_iterations=1)
    assert capped.iterations == 1 and not capped.converged
    assert "did not converge after 1 iterations" in capped.message
    full = robust_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM)
    assert full.converged and 1 < full.iterations < 50
    assert full.change_um <= 1e-4 * np.median(np.abs(z - full.mean_line_um)) * 1.5


def test_robust_rejects_bad_order():
    with pytest.raises(SpeccheckError, match="order must be 0 or 2, got 1"):
        robust_mean_line(np.zeros(100), dx_um=DX_UM, cutoff_um=LC_UM, order=1)


# --- ISO 13565-1 --------------------------------------------------------------------------


def test_valley_suppression_keeps_reference_near_the_plateau():
    """ISO 13565-1 purpose: deep valleys pull the Gaussian line down; the suppressed reference
    line stays near the plateau's own mean line.

    Plateau: 0.3 µm sine at 50 µm. Valleys: 6 µm deep, 20 µm wide, every 200 µm (a honed bore
    in closed form). Plain Gaussian dip ≈ 6 · 20/200 = 0.6 µm (mean of the valleys); the
    reference line must lie within 25 % of that dip from the plateau line.
    """
    n = int(round(10 * LC_UM / DX_UM))
    x = np.arange(n) * DX_UM
    plateau = 0.3 * np.sin(2 * np.pi * x / 50.0)
    z = plateau - np.where((x % 200.0) < 20.0, 6.0, 0.0)
    inner = _interior(n)
    base = gaussian_mean_line(plateau, dx_um=DX_UM, cutoff_um=LC_UM)[inner]
    g_pull = float(np.mean(base - gaussian_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM)[inner]))
    assert g_pull == pytest.approx(0.6, rel=0.02)
    ref = valley_suppressed_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM)[inner]
    assert float(np.max(np.abs(ref - base))) < 0.25 * g_pull


# --- form removal -------------------------------------------------------------------------


def test_line_removal_recovers_slope_and_offset():
    x_mm = np.arange(4000) * DX_UM / 1000.0
    z = 1.5 + 12.0 * x_mm + 0.2 * np.sin(2 * np.pi * x_mm / 0.08)
    fit = remove_form(z, dx_um=DX_UM, form="line")
    # a whole number of sine periods is (nearly) orthogonal to the line: small leakage only
    assert fit.coefficients["a1_um_per_mm"] == pytest.approx(12.0, abs=0.01)
    assert fit.coefficients["a0_um"] == pytest.approx(1.5, abs=0.01)
    exact = remove_form(1.5 + 12.0 * x_mm, dx_um=DX_UM)
    assert exact.coefficients["a1_um_per_mm"] == pytest.approx(12.0, rel=1e-12)
    np.testing.assert_allclose(exact.residual_um, 0.0, atol=1e-10)


@pytest.mark.parametrize("convex", [True, False])
def test_arc_removal_recovers_radius(convex):
    # a 40 mm radius shaft section over 4 mm, in µm: z = ±(√(R² − (x − xc)²)) + offset
    r_um, xc_um = 40000.0, 1700.0
    x = np.arange(8000) * DX_UM
    sign = 1.0 if convex else -1.0
    z = sign * (np.sqrt(r_um**2 - (x - xc_um) ** 2) - r_um) + 3.0
    fit = remove_form(z, dx_um=DX_UM, form="arc")
    assert fit.coefficients["radius_mm"] == pytest.approx(40.0, rel=1e-6)
    assert fit.coefficients["centre_x_mm"] == pytest.approx(1.7, rel=1e-6)
    assert fit.coefficients["convex"] == (1.0 if convex else 0.0)
    np.testing.assert_allclose(fit.residual_um, 0.0, atol=1e-6)


def test_polynomial_removal_recovers_coefficients():
    x_mm = np.arange(6000) * DX_UM / 1000.0
    z = 2.0 - 1.0 * x_mm + 0.5 * x_mm**2 - 0.25 * x_mm**3 + 0.05 * x_mm**4
    fit = remove_form(z, dx_um=DX_UM, form="poly4")
    got = [
        fit.coefficients[k]
        for k in ("a0_um", "a1_um_per_mm", "a2_um_per_mm2", "a3_um_per_mm3", "a4_um_per_mm4")
    ]
    np.testing.assert_allclose(got, [2.0, -1.0, 0.5, -0.25, 0.05], rtol=1e-8, atol=1e-9)
    np.testing.assert_allclose(fit.residual_um, 0.0, atol=1e-9)


def test_form_none_and_unknown():
    z = np.arange(10.0)
    fit = remove_form(z, dx_um=1.0, form="none")
    np.testing.assert_array_equal(fit.residual_um, z)
    assert fit.coefficients == {}
    with pytest.raises(SpeccheckError, match="unknown form 'spline'"):
        remove_form(z, dx_um=1.0, form="spline")
    with pytest.raises(SpeccheckError, match="form 'arc': the profile is not curved enough"):
        remove_form(np.zeros(50), dx_um=1.0, form="arc")


@pytest.mark.parametrize("order", [0, 2])
def test_regression_without_weight_under_the_kernel_is_nan(order):
    # no point under the kernel carries weight: the local fit is undetermined -> NaN, never a guess
    n = 12000
    x = np.arange(n) * DX_UM
    z = np.sin(2 * np.pi * x / 100.0)
    w = np.ones(n)
    w[2000:10000] = 0.0  # 4 mm without weight; the kernel reaches ±1.95 λc = ±1.56 mm at most
    line = regression_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM, order=order, weights=w)
    assert np.all(np.isnan(line[5900:6100]))
    assert np.all(np.isfinite(line[:2000])) and np.all(np.isfinite(line[-2000:]))
    with pytest.raises(SpeccheckError, match="weights must be finite and ≥ 0"):
        regression_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM, weights=-w)


@pytest.mark.parametrize("n", [11, 1601, 3000, 5000, 60000])
def test_gaussian_equals_direct_weighted_mean_everywhere(n):
    # reference: numpy.convolve (direct sum) of z and of ones with the same kernel; the ratio is
    # the weighted mean of the heights under the kernel (gaussian.py docstring). Covers the
    # single-FFT path (kernel long against the profile) and the block path (n = 60000).
    rng = np.random.default_rng(n)
    z = rng.normal(size=n) + 5.0
    k = gaussian_kernel(dx_um=DX_UM, cutoff_um=LC_UM)
    r = k.size // 2
    ref = np.convolve(z, k)[r : r + n] / np.convolve(np.ones(n), k)[r : r + n]
    got = gaussian_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM)
    np.testing.assert_allclose(got, ref, rtol=0, atol=1e-11)


def test_valley_suppression_reuses_a_given_first_mean_line():
    # the step-1 line passed in must give the same reference line as computing it (valley.py)
    n = 8000
    x = np.arange(n) * DX_UM
    z = 0.3 * np.sin(2 * np.pi * x / 50.0) - np.where((x % 200.0) < 20.0, 6.0, 0.0)
    first = gaussian_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM)
    a = valley_suppressed_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM)
    b = valley_suppressed_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM, mean_line_um=first)
    np.testing.assert_array_equal(a, b)
    with pytest.raises(SpeccheckError, match=r"mean_line_um must have the shape of z_um \(8000,\)"):
        valley_suppressed_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM, mean_line_um=first[:-1])


@pytest.mark.parametrize("order", [0, 2])
def test_unit_weights_shortcut_equals_explicit_weights(order):
    # δ = 1 moments come from cumulative sums (robust.py), explicit weights from FFTs: same line
    rng = np.random.default_rng(11 + order)
    z = np.cumsum(rng.normal(size=9000)) * 0.05 + rng.normal(size=9000)
    a = regression_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM, order=order)
    b = regression_mean_line(z, dx_um=DX_UM, cutoff_um=LC_UM, order=order, weights=np.ones(9000))
    np.testing.assert_allclose(a, b, rtol=0, atol=1e-9)


@pytest.mark.parametrize(("n", "k"), [(50, 7), (5, 7), (3000, 1001)])
def test_ones_response_equals_numpy_convolve(n, k):
    from speccheck.filters._blockconv import ones_response

    # reference: numpy.convolve of ones with an asymmetric kernel, 'same' = full[r : r + n]
    kern = np.random.default_rng(k).normal(size=k)
    r = (k - 1) // 2
    np.testing.assert_allclose(
        ones_response(kern, n), np.convolve(np.ones(n), kern)[r : r + n], atol=1e-12
    )


def test_fast_length_is_scipys_next_fast_len():
    # Reference: scipy.fft.next_fast_len(n, real=True), the 5-smooth sizes of pocketfft.
    import scipy.fft

    from speccheck.filters._blockconv import fast_length

    sizes = [*range(1, 3000), 11_201 * 2 - 1, 999_983, 1_048_577, 10**7 + 1]
    assert [fast_length(n) for n in sizes] == [scipy.fft.next_fast_len(n, real=True) for n in sizes]
