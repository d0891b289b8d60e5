"""Profile parameter functions against closed forms (derived in each docstring).

Profiles here are built from closed forms; no invented measurement data.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from speccheck.parameters import amplitude, asme, material, spacing

A_UM = 1.5  # amplitude used by the periodic waveforms
DX_UM = 0.5


def sine(periods: int, points_per_period: int, amplitude_um: float = A_UM, phase: float = 0.0):
    """A·sin(2πx/λ) sampled at x = i·dx, i < periods·points_per_period."""
    i = np.arange(periods * points_per_period)
    return amplitude_um * np.sin(2 * np.pi * i / points_per_period + phase)


# --- sine ------------------------------------------------------------------------------------


def test_sine_amplitude_parameters():
    """Sine z = A sin θ, θ uniform over whole periods.

    Ra = A·mean|sin θ| = A·(1/π)∫₀^π sin θ dθ = 2A/π.
    Rq = A·√(mean sin²θ) = A/√2.
    Rsk = mean sin³θ / (1/√2)³ = 0 (odd function over a period).
    Rku = mean sin⁴θ / (1/2)² = (3/8)/(1/4) = 1.5.
    Rp = Rv = A (sin reaches ±1 at samples when points per period is a multiple of 4), Rz = Rt = 2A.

    Tolerances: for N samples per period the discrete means of sin², sin³, sin⁴ are exact
    (discrete orthogonality, N > 4), so 1e-12; mean|sin| is a rectangle rule on a function with
    kinks at its zeros, error O(1/N²) ≈ 1e-6 relative at N = 1000: tolerance 1e-5.
    """
    z = sine(8, 1000)
    assert amplitude.arithmetic_mean_height(z) == pytest.approx(2 * A_UM / math.pi, rel=1e-5)
    assert amplitude.root_mean_square_height(z) == pytest.approx(A_UM / math.sqrt(2), rel=1e-12)
    assert amplitude.skewness(z) == pytest.approx(0.0, abs=1e-12)
    assert amplitude.kurtosis(z) == pytest.approx(1.5, rel=1e-12)
    assert amplitude.max_peak_height(z) == pytest.approx(A_UM, rel=1e-12)
    assert amplitude.max_valley_depth(z) == pytest.approx(A_UM, rel=1e-12)
    assert amplitude.max_height(z) == pytest.approx(2 * A_UM, rel=1e-12)
    assert amplitude.total_height(z) == pytest.approx(2 * A_UM, rel=1e-12)


def test_sine_rms_slope():
    """RΔq of z = A sin(2πx/λ): dz/dx = (2πA/λ) cos(2πx/λ), RMS over periods = 2πA/(λ√2).

    The seven-point stencil differentiates a sine with relative error ≈ θ⁶/140 for
    θ = 2π·dx/λ (Taylor remainder of the sixth-order central difference): θ = 2π/1000 gives
    ~1e-16, so 1e-9 covers rounding. Margins: 3 points each side are neighbours only, so the
    input is one period plus 6 points and the RMS runs over exactly one period.
    """
    n = 1000
    lam_um = n * DX_UM
    i = np.arange(-3, 2 * n + 3)
    z = A_UM * np.sin(2 * np.pi * i / n)
    expected = 2 * math.pi * A_UM / (lam_um * math.sqrt(2))
    assert spacing.rms_slope(z, dx_um=DX_UM) == pytest.approx(expected, rel=1e-9)


def test_sine_elements_give_wavelength():
    """RSm of a sine is its wavelength λ (one peak + one valley per period); Rc = 2A."""
    n = 400
    z = sine(10, n, phase=0.3)  # crossings fall between samples
    assert spacing.mean_width_of_elements_mm(z, dx_um=DX_UM) == pytest.approx(
        n * DX_UM / 1000, rel=1e-6
    )
    # Rc: peak height + valley depth of each element; samples miss the crest by at most
    # A(1 − cos(π/n)) = 3e-5 A
    assert spacing.mean_height_of_elements(z, dx_um=DX_UM) == pytest.approx(2 * A_UM, rel=1e-4)


def test_small_ripple_is_merged_by_height_discrimination():
    """Sine of amplitude A plus a ripple of amplitude 0.08A and wavelength λ/30.

    The ripple's largest slope (0.08A·2π·30/λ = 2.4 × the sine's slope at its zeros) makes
    extra mean-line crossings near the sine's zeros; the pieces between them rise at most
    2 × 0.08A = 0.16A, below 10 % of Rz ≈ 0.2A (ISO 4287:1997 3.2.9 height discrimination), so
    they merge into the neighbouring peak or valley and RSm = λ. The ripple repeats identically
    every period (λ/λr = 30 is whole), so every element is exactly one period wide.
    Without discrimination the extra crossings give a much smaller RSm: the check can fail.
    """
    n = 900
    i = np.arange(6 * n)
    z = A_UM * np.sin(2 * np.pi * i / n + 0.1) + 0.08 * A_UM * np.sin(2 * np.pi * 30 * i / n + 0.1)
    above = z > 0
    assert np.count_nonzero(above[1:] != above[:-1]) > 12  # more crossings than 2 per period
    lam_mm = n * DX_UM / 1000
    assert spacing.mean_width_of_elements_mm(z, dx_um=DX_UM) == pytest.approx(lam_mm, rel=1e-9)
    raw = spacing.profile_elements(z, dx_um=DX_UM, height_fraction=0.0, width_fraction=0.0)
    assert np.mean(raw.widths_um) / 1000 < 0.6 * lam_mm


def test_narrow_spike_is_merged_by_width_discrimination():
    """Sine of amplitude A, 10 periods of 400 samples in the section (1 % of the section = 40
    samples); in every valley a 10-sample pulse rises to +0.5A, crossing the mean line.

    The pulse is a peak of height 0.5A ≥ 10 % of Rz = 2A but only 10 samples wide, < 1 % of the
    section (ISO 4287:1997 3.2.9 width discrimination), so it is no peak of its own and
    RSm = λ; the pulses repeat every period, so every element is one period wide. Without
    discrimination each pulse adds an element and RSm drops to about λ/2.
    """
    n = 400
    z = sine(10, n, phase=0.05)
    i = np.arange(z.size) % n
    z[(i >= 295) & (i < 305)] = 0.5 * A_UM  # centred on the valley at 3/4 of each period
    lam_mm = n * DX_UM / 1000
    assert spacing.mean_width_of_elements_mm(z, dx_um=DX_UM) == pytest.approx(lam_mm, rel=1e-9)
    raw = spacing.profile_elements(z, dx_um=DX_UM, height_fraction=0.0, width_fraction=0.0)
    assert np.mean(raw.widths_um) / 1000 < 0.6 * lam_mm


def test_sine_material_ratio_arccos():
    """Rmr(c) of a sine: level A − c is reached where sin θ ≥ 1 − c/A, a phase range of
    π − 2 arcsin(1 − c/A) per period, so Rmr(c) = arccos(1 − c/A)/π · 100 %.

    Linear interpolation between samples: error O(dx²), below 1e-3 % at 1000 points per period.
    The trace closes its last period (5·1000 + 1 points) so that it spans whole periods.
    """
    i = np.arange(5 * 1000 + 1)
    z = A_UM * np.sin(2 * np.pi * i / 1000 + 0.01)
    for c in (0.1, 0.5, 1.0, 1.5, 2.5):
        expected = math.degrees(math.acos(1 - c / A_UM)) / 180 * 100
        assert material.material_ratio_at_depth(z, depth_um=c) == pytest.approx(expected, abs=1e-3)
    assert material.material_ratio_at_depth(z, depth_um=0.0) == pytest.approx(0.0, abs=1e-3)
    assert material.material_ratio_at_depth(z, depth_um=3.0) == pytest.approx(100.0)


def test_sine_section_height_difference():
    """Rδc(a-b) of a sine: the level with material ratio p % is A·cos(π p/100) (inverse of the
    arccos law above), so Rδc(20-80) = A(cos 0.2π − cos 0.8π) = 2A cos 0.2π.

    Read on the sampled curve: error O(1/N²) for 5000 samples; tolerance 1e-4 µm.
    """
    z = sine(5, 1000, phase=0.01)
    expected = 2 * A_UM * math.cos(0.2 * math.pi)
    got = material.section_height_difference(z, mr1_pct=20, mr2_pct=80)
    assert got == pytest.approx(expected, abs=1e-4)


def test_amplitude_distribution_of_sine_integrates_to_one():
    """The amplitude density (ISO 4287:1997 4.5.5) of a sine is 1/(π√(A² − z²)), symmetric;
    the histogram must integrate to 1 and have its mass at the extremes (arcsine law)."""
    centres, dens = material.amplitude_distribution(sine(5, 20000, phase=0.123), bins=20)
    width = centres[1] - centres[0]
    assert np.sum(dens) * width == pytest.approx(1.0, rel=1e-12)
    assert dens[0] > 3 * dens[10] and dens[-1] > 3 * dens[10]
    # a central bin against the closed form ∫ over the bin of 1/(π√(A²−z²)), / width;
    # about 3000 samples fall in it, so counting is good to ~1e-3: tolerance 1 %
    lo, hi = centres[10] - width / 2, centres[10] + width / 2
    expected = (math.asin(hi / A_UM) - math.asin(lo / A_UM)) / math.pi / width
    assert dens[10] == pytest.approx(expected, rel=0.01)


# --- triangle and square waves ---------------------------------------------------------------


def test_triangle_wave():
    """Symmetric triangle of amplitude A: heights are uniform on [−A, A], so
    Ra = ∫|z|dz/(2A) = A/2, Rq = √(A²/3) = A/√3, Rku = (A⁴/5)/(A⁴/9) = 1.8, Rsk = 0.

    Sampled at phase midpoints the heights are an evenly spaced grid on (−A, A): the discrete
    moments differ from the continuous ones by O(1/N²), N = 1000 per period: tolerance 1e-5.
    """
    n = 1000
    t = (np.arange(4 * n) + 0.5) / n % 1.0
    z = A_UM * (4 * np.abs(t - 0.5) - 1)
    assert amplitude.arithmetic_mean_height(z) == pytest.approx(A_UM / 2, rel=1e-5)
    assert amplitude.root_mean_square_height(z) == pytest.approx(A_UM / math.sqrt(3), rel=1e-5)
    assert amplitude.kurtosis(z) == pytest.approx(1.8, rel=1e-5)
    assert amplitude.skewness(z) == pytest.approx(0.0, abs=1e-9)


def test_square_wave():
    """Square wave ±A: |z| = A everywhere, so Ra = Rq = A and Rku = A⁴/A⁴ = 1 (exact)."""
    n = 100
    t = (np.arange(5 * n) + 0.5) / n % 1.0
    z = np.where(t < 0.5, A_UM, -A_UM)
    assert amplitude.arithmetic_mean_height(z) == pytest.approx(A_UM, rel=1e-14)
    assert amplitude.root_mean_square_height(z) == pytest.approx(A_UM, rel=1e-14)
    assert amplitude.kurtosis(z) == pytest.approx(1.0, rel=1e-14)


# --- sections --------------------------------------------------------------------------------


def five_sections_with_peak(peak_um: float = 4.0) -> np.ndarray:
    """5 sections of a unit sine (4 periods each), one sample of section 3 raised to peak_um."""
    rows = np.tile(sine(4, 200, amplitude_um=1.0), (5, 1))
    rows[2, 333] = peak_um
    return rows


def test_section_averaging_against_total_height():
    """One tall peak (4 µm) in section 3 of a unit sine, sections as rows (ISO 4287 section
    averaging). Per section Rp = [1, 1, 4, 1, 1] µm, Rv = 1 µm, Rz = [2, 2, 5, 2, 2] µm, so
    mean Rp = 8/5 = 1.6 µm, mean Rz = 13/5 = 2.6 µm, while Rt over the evaluation length =
    4 + 1 = 5 µm and Rz1max = 5 µm (exact arithmetic on samples that hit ±1)."""
    rows = five_sections_with_peak()
    rp = amplitude.max_peak_height(rows)
    np.testing.assert_allclose(rp, [1, 1, 4, 1, 1], rtol=1e-12)
    assert float(np.mean(rp)) == pytest.approx(1.6, rel=1e-12)
    assert float(np.mean(amplitude.max_height(rows))) == pytest.approx(2.6, rel=1e-12)
    assert amplitude.total_height(rows) == pytest.approx(5.0, rel=1e-12)
    assert amplitude.largest_section_max_height(rows) == pytest.approx(5.0, rel=1e-12)
    assert float(np.mean(rp)) < amplitude.total_height(rows)


def test_asme_section_means_equal_iso_means():
    """ASME B46.1 Rpm, Rvm are the means of the section Rp, Rv (domain notes [pub/mem]); Rmax is
    the largest section peak-to-valley. On the profile above: Rpm = 1.6, Rvm = 1, Rmax = 5 µm."""
    rows = five_sections_with_peak()
    assert asme.mean_peak_height(rows) == pytest.approx(1.6, rel=1e-12)
    assert asme.mean_valley_depth(rows) == pytest.approx(1.0, rel=1e-12)
    assert asme.largest_peak_to_valley(rows) == pytest.approx(5.0, rel=1e-12)
    assert asme.mean_peak_height(rows) == pytest.approx(
        float(np.mean(amplitude.max_peak_height(rows)))
    )


def test_peak_count_on_sine():
    """Rpc with band ±c, c < A: a sine starting at phase 0 rises first, so its first crest has no
    preceding excursion below −c and is not counted; each of the other crests is. Over P
    periods of λ: (P − 1) peaks in P·λ, i.e. (P − 1)/(P·λ) per cm. With c > A no peak."""
    n, periods = 200, 40
    z = sine(periods, n, amplitude_um=1.0)
    length_cm = periods * n * DX_UM * 1e-4
    assert asme.peak_count_per_cm(z, dx_um=DX_UM, band_um=0.5) == pytest.approx(
        (periods - 1) / length_cm
    )
    assert asme.peak_count_per_cm(z, dx_um=DX_UM, band_um=1.5) == 0.0


# --- random profile --------------------------------------------------------------------------


def test_gaussian_random_profile_statistics():
    """Gaussian heights (seed 20261202, N = 10⁵, σ = 1 µm, mean 0 = the mean line).

    Expected: Rsk = 0, Rku = 3, Ra/Rq = √(2/π) (E|z| = σ√(2/π)). Sampling standard errors for
    normal data: SE(skewness) ≈ √(6/N) = 0.0077, SE(kurtosis) ≈ √(24/N) = 0.0155;
    SD(Ra/Rq) ≤ SD(Ra)/Rq + Ra·SD(Rq)/Rq² = (√(1−2/π) + √(2/π)/√2)/√N ≈ 0.0037.
    Tolerances are 5 standard errors (about 3 for the ratio bound).
    """
    rng = np.random.default_rng(20261202)
    z = rng.normal(0.0, 1.0, 100_000)
    assert amplitude.skewness(z) == pytest.approx(0.0, abs=5 * 0.0077)
    assert amplitude.kurtosis(z) == pytest.approx(3.0, abs=5 * 0.0155)
    ratio = amplitude.arithmetic_mean_height(z) / amplitude.root_mean_square_height(z)
    assert ratio == pytest.approx(math.sqrt(2 / math.pi), abs=0.012)


# --- shapes, errors --------------------------------------------------------------------------


def test_two_dimensional_input_gives_one_value_per_row():
    rows = five_sections_with_peak()
    out = amplitude.arithmetic_mean_height(rows)
    assert isinstance(out, np.ndarray) and out.shape == (5,)
    assert isinstance(amplitude.arithmetic_mean_height(rows[0]), float)


def test_flat_section_gives_nan_skewness_not_an_error():
    assert math.isnan(amplitude.skewness(np.zeros(50)))
    assert math.isnan(amplitude.kurtosis(np.zeros(50)))
    assert math.isnan(spacing.mean_width_of_elements_mm(np.zeros(50), dx_um=DX_UM))


def test_bad_inputs_raise_value_error_naming_the_argument():
    with pytest.raises(ValueError, match="z_um must be a non-empty 1-D or 2-D array"):
        amplitude.arithmetic_mean_height(np.zeros((2, 2, 2)))
    with pytest.raises(ValueError, match="depth_um must be ≥ 0"):
        material.material_ratio_at_depth(sine(1, 100), depth_um=-1.0)
    with pytest.raises(ValueError, match="0 ≤ a < b ≤ 100"):
        material.parse_ratio_pair("80-20")
    with pytest.raises(ValueError, match="seven-point derivative needs at least 7 points"):
        spacing.rms_slope(np.zeros(5), dx_um=DX_UM)
