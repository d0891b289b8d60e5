"""compute_parameters: the whole pipeline on closed-form traces."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from speccheck.filters.gaussian import ALPHA
from speccheck.parameters.compute import (
    FLAT_TOLERANCE_UM,
    EvaluatedProfiles,
    InsufficientData,
    ParameterSet,
    ParameterValue,
    compute_parameters,
)
from speccheck.parameters.conditions import Conditions

DX_UM = 0.5
A_UM = 1.2
LAMBDA_UM = 100.0  # RSm of the test sine, 0.1 mm


def trace(
    length_mm: float, *, amplitude_um: float = A_UM, wavelength_um: float = LAMBDA_UM, dx_um=DX_UM
):
    n = int(round(length_mm * 1000 / dx_um))
    x = np.arange(n) * dx_um
    return amplitude_um * np.sin(2 * np.pi * x / wavelength_um + 0.2)


def gaussian_mean_line_transmission(wavelength_um: float, cutoff_um: float) -> float:
    """ISO 16610-21 mean-line transmission exp(−π(αλc/λ)²), α = √(ln 2/π)."""
    return math.exp(-math.pi * (ALPHA * cutoff_um / wavelength_um) ** 2)


def test_sine_through_the_pipeline_gives_closed_forms():
    """Sine λ = 0.1 mm, A = 1.2 µm, λc = 0.8 mm, no λs, trace 5.6 mm (7 cut-offs).

    The Gaussian roughness transmission at λ/λc = 1/8 is 1 − exp(−π(8α)²) = 1 − 1e-19, and the
    form line is removed exactly by the mean line, so the roughness is the sine: Ra = 2A/π,
    Rq = A/√2, Rsk = 0, Rku = 1.5, Rp = Rv = A, Rz = Rt = 2A, RΔq = 2πA/(λ√2), RSm = λ (domain
    notes, [calc]). Sampling tolerances: 200 points per period (h = 2π/200 rad); the crest is
    missed by up to A(1 − cos(π/200)) = 1.2e-4 A, hence 2e-4 for the peak heights; mean|sin| by
    the rectangle rule errs at the two kinks of |sin| per period by at most h²/4 each, ≤ h²/8 =
    1.2e-4 relative, hence 2e-4 for Ra; Rq, Rsk, Rku are exact for whole periods (discrete
    orthogonality), 1e-5.
    """
    ps = compute_parameters(trace(5.6), dx_um=DX_UM, conditions=Conditions(0.8, None))
    assert isinstance(ps, ParameterSet)
    v = {k: p.value for k, p in ps.values.items()}
    assert v["Ra"] == pytest.approx(2 * A_UM / math.pi, rel=2e-4)
    assert v["Rq"] == pytest.approx(A_UM / math.sqrt(2), rel=1e-5)
    assert v["Rsk"] == pytest.approx(0.0, abs=1e-5)
    assert v["Rku"] == pytest.approx(1.5, rel=1e-5)
    for name in ("Rp", "Rv", "Rpm", "Rvm"):
        assert v[name] == pytest.approx(A_UM, rel=2e-4)
    for name in ("Rz", "Rt", "Rz1max", "Rmax", "Rc"):
        assert v[name] == pytest.approx(2 * A_UM, rel=2e-4)
    assert v["Rdq"] == pytest.approx(2 * math.pi * A_UM / (LAMBDA_UM * math.sqrt(2)), rel=1e-5)
    assert v["RSm"] == pytest.approx(LAMBDA_UM / 1000, rel=1e-6)
    assert ps.values["RSm"] == ParameterValue(v["RSm"], "mm")
    assert ps.values["Rsk"].unit == "" and ps.values["Ra"].unit == "µm"
    assert ps.values["Mr1"].unit == "%"


def test_lambda_s_attenuates_by_the_gaussian_transmission():
    """With λs = 2.5 µm the λs low-pass passes exp(−π(α·2.5/100)²) = 0.999567 of a 100 µm sine
    (ISO 16610-21 transmission); Rq must drop by exactly that factor (to 1e-6: the sampling
    errors are the same with and without λs and cancel in the ratio)."""
    t = gaussian_mean_line_transmission(LAMBDA_UM, 2.5)
    with_s = compute_parameters(trace(5.6), dx_um=DX_UM, conditions=Conditions(0.8, 2.5))
    without = compute_parameters(trace(5.6), dx_um=DX_UM, conditions=Conditions(0.8, None))
    assert with_s.values["Rq"].value / without.values["Rq"].value == pytest.approx(t, rel=1e-6)
    assert t < 0.9996  # a missing λs filter would fail the check


def test_section_values_are_kept_and_averaged():
    """The per-section values are those the means come from; the ASME section means equal the
    ISO ones (ASME B46.1 Rpm, Rvm: domain notes)."""
    z = trace(5.6)
    z[5600] += 3.0  # a spike in section 3 of the evaluation length (starts at 0.8 mm)
    ps = compute_parameters(z, dx_um=DX_UM, conditions=Conditions(0.8, None))
    assert len(ps.sections) == 5
    rp = np.array([s["Rp"].value for s in ps.sections])
    assert ps.values["Rp"].value == pytest.approx(rp.mean(), rel=1e-12)
    assert ps.values["Rpm"].value == pytest.approx(rp.mean(), rel=1e-12)
    rv = np.array([s["Rv"].value for s in ps.sections])
    assert ps.values["Rvm"].value == pytest.approx(rv.mean(), rel=1e-12)
    assert int(np.argmax(rp)) == 2
    assert ps.values["Rt"].value == pytest.approx(ps.values["Rz1max"].value, rel=1e-12)
    assert ps.values["Rp"].value < ps.values["Rt"].value - A_UM


def test_evaluation_length_is_centred_and_sectioned():
    """Trace 7 mm at λc 0.8 mm: evaluation length 4 mm centred, i.e. from 1.5 mm to 5.5 mm."""
    ps = compute_parameters(trace(7.0), dx_um=DX_UM, conditions=Conditions(0.8, None))
    prof = ps.profiles
    assert isinstance(prof, EvaluatedProfiles)
    assert prof.section_bounds_mm == pytest.approx((1.5, 2.3, 3.1, 3.9, 4.7, 5.5))
    assert prof.x_mm[0] == pytest.approx(1.5) and prof.x_mm.size == 8000
    assert prof.trace_x_mm.size == 14000
    np.testing.assert_allclose(prof.roughness_um, prof.primary_um - prof.mean_line_um, atol=1e-12)


def test_short_trace_is_insufficient_data_with_the_lengths():
    """λc 0.8 mm, 5 sections, one λc run-in and run-out: 7 × 0.8 = 5.6 mm needed
    (speccheck.parameters.conditions module docstring; 7 cut-offs: common practice)."""
    res = compute_parameters(trace(5.0), dx_um=DX_UM, conditions=Conditions(0.8, 2.5))
    assert isinstance(res, InsufficientData)
    assert not res
    assert res.required_mm == pytest.approx(5.6)
    assert res.available_mm == pytest.approx(5.0)
    assert "5 mm is shorter than the 5.6 mm needed" in res.reason


def test_parametrised_extras():
    """Rmr(c) with c below the highest peak: arccos law of the sine (test_parameters),
    Rδc(20-80) = 2A cos(0.2π). Tolerances cover the 4-mm evaluation length of 40 periods
    (crest sampling, 1e-3)."""
    ps = compute_parameters(
        trace(5.6),
        dx_um=DX_UM,
        conditions=Conditions(0.8, None),
        extra=["Rmr(0.3)", "Rdc(20-80)", "Ra"],
    )
    expected_mr = math.acos(1 - 0.3 / A_UM) / math.pi * 100
    assert ps.values["Rmr(0.3)"] == ParameterValue(pytest.approx(expected_mr, abs=1e-2), "%")
    assert ps.values["Rdc(20-80)"].value == pytest.approx(
        2 * A_UM * math.cos(0.2 * math.pi), abs=1e-3
    )


@pytest.mark.parametrize(
    ("name", "message"),
    [
        ("Rfoo", "unknown parameter 'Rfoo'"),
        ("Wa", "Wa belongs to the W profile"),
        ("Rz3", "Rz3 asks for 3 sections"),
        ("Rmr(x)", r"Rmr\(x\): the level must be a depth in µm"),
        ("Rdc(80-20)", "0 ≤ a < b ≤ 100"),
    ],
)
def test_bad_extra_names_raise(name, message):
    with pytest.raises(ValueError, match=message):
        compute_parameters(trace(5.6), dx_um=DX_UM, conditions=Conditions(0.8, None), extra=[name])


def test_nan_heights_are_refused():
    z = trace(5.6)
    z[10] = np.nan
    with pytest.raises(ValueError, match="bridge dropouts first"):
        compute_parameters(z, dx_um=DX_UM, conditions=Conditions(0.8, None))


def test_flat_profile_is_insufficient_data_not_nan():
    # Rq = 0 (ISO 4287:1997 4.2.2) and Rsk = Rku = 0/0: no texture was measured; a falsy result
    ps = compute_parameters(np.zeros(12000), dx_um=DX_UM, conditions=Conditions(0.8, None))
    assert isinstance(ps, InsufficientData) and not ps and ps.kind == "flat"
    assert "no surface texture was measured" in ps.reason
    # heights within the flat tolerance count as flat too
    tiny = trace(5.6, amplitude_um=FLAT_TOLERANCE_UM / 10)
    assert compute_parameters(tiny, dx_um=DX_UM, conditions=Conditions(0.8, None)).kind == "flat"


def test_texture_just_above_the_flat_tolerance_is_evaluated():
    # sine of amplitude A: Ra = 2A/π (domain notes §4, check values [calc]); A = 1 nm
    a = 1e-3
    ps = compute_parameters(
        trace(5.6, amplitude_um=a), dx_um=DX_UM, conditions=Conditions(0.8, None)
    )
    assert ps and ps.values["Ra"].value == pytest.approx(2 * a / math.pi, rel=1e-3)
    json.dumps(ps.to_dict(), allow_nan=False)


def test_waviness_profile_transmission():
    """W profile of a 2 mm sine with λc 0.8 mm and λf 8 mm: waviness = mean line at λc minus
    mean line at λf, so its amplitude is A·(T(λc) − T(λf)) with the ISO 16610-21 mean-line
    transmission T = exp(−π(αλcut/λ)²): Wa = 2A/π·(T(800) − T(8000)). Trace: 5 sections of
    λf plus λf each end = 56 mm, dx 5 µm. Tolerance 1e-4 (400 points per period)."""
    dx = 5.0
    z = trace(56.0, amplitude_um=3.0, wavelength_um=2000.0, dx_um=dx)
    cond = Conditions(0.8, None, lambda_f_mm=8.0, profile="W")
    ps = compute_parameters(z, dx_um=dx, conditions=cond)
    t = gaussian_mean_line_transmission(2000, 800) - gaussian_mean_line_transmission(2000, 8000)
    assert ps.values["Wa"].value == pytest.approx(2 * 3.0 / math.pi * t, rel=1e-4)
    assert "Ra" not in ps.values and "Rk" not in ps.values
    assert ps.values["WSm"].value == pytest.approx(2.0, rel=1e-4)


def test_primary_profile_is_one_section_of_the_evaluation_length():
    """P profile: form (a line) removed, no λs; one section, so Pp = max over le and Pz = Pt."""
    z = trace(5.6) + 0.01 * np.arange(11200) * DX_UM / 1000  # plus a 0.01 µm/mm slope
    ps = compute_parameters(z, dx_um=DX_UM, conditions=Conditions(0.8, None, profile="P"))
    assert len(ps.sections) == 1
    assert ps.values["Pz"].value == pytest.approx(ps.values["Pt"].value, rel=1e-12)
    assert ps.values["Pa"].value == pytest.approx(2 * A_UM / math.pi, rel=1e-3)


def test_robust_filter_note_and_values():
    """The robust mean line (ISO 16610-31) on a pure sine well inside the roughness band gives
    the same Ra as the Gaussian (both transmit 100 % at λ/λc = 1/8) to 1e-3."""
    cond = Conditions(0.8, None, filter="robust")
    ps = compute_parameters(trace(5.6), dx_um=DX_UM, conditions=cond)
    assert ps.values["Ra"].value == pytest.approx(2 * A_UM / math.pi, rel=1e-3)
    assert any("robust roughness profile" in n for n in ps.notes)


def test_rk_reference_line_matches_the_iso13565_1_filter():
    """With the Gaussian filter, compute_parameters builds the ISO 13565-1 reference line from
    the mean line it already has; the Rk family must equal the one computed with the filter
    module's own valley_suppressed_mean_line (filter "iso13565-1" uses it directly)."""
    rng = np.random.default_rng(5)
    z = trace(5.6) - np.where(rng.random(11200) < 0.01, 3.0, 0.0)  # sparse deep pits
    a = compute_parameters(z, dx_um=DX_UM, conditions=Conditions(0.8, None))
    b = compute_parameters(z, dx_um=DX_UM, conditions=Conditions(0.8, None, filter="iso13565-1"))
    for name in ("Rk", "Rpk", "Rvk", "Mr1", "Mr2", "A1", "A2", "Rpq", "Rvq", "Rmq"):
        assert a.values[name].value == pytest.approx(b.values[name].value, rel=1e-9), name
    assert a.values["Ra"].value != pytest.approx(b.values["Ra"].value, rel=1e-3)
