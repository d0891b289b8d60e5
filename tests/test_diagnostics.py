"""Diagnostics: isolated features, their influence on parameters, the policy and spec advice.

Profiles are built from closed forms:

* the ideal turned profile: circular-arc cusps of the tool nose radius r repeated at the feed f,
  z(u) = r − √(r² − u²) for u in [−f/2, f/2] (tool geometry; its peak-to-valley height is the
  handbook formula Rt ≈ f²/(8r), from memory). For f = 0.1 mm, r = 0.8 mm that is 1.5625 µm;
* its skewness in the parabolic approximation z ≈ u²/(2r): with u uniform, z = h·s², s uniform on
  [0, 1], h = f²/(8r); E s² = 1/3, E s⁴ = 1/5, E s⁶ = 1/7 give the central moments
  μ2 = h²(1/5 − 1/9) = 4h²/45 and μ3 = h³(1/7 − 1/5 + 2/27) = 32h³/1890, so
  Rsk = μ3 / μ2^1.5 = 0.6389 (derived here; Rsk = mean Z³ / Rq³, ISO 4287:1997 4.2.3);
* a V-shaped scratch 10 µm deep, 6 µm wide, and a dust particle as a raised cosine bump;
* Gaussian white noise from fixed seeds.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import integrate, stats

from speccheck.diagnostics import (
    ISOLATED_FEATURES,
    Diagnostic,
    analyse,
    diagnose,
    find_isolated_features,
    policy_outcome,
    remove_features,
    sensitive_parameter_advice,
    tail_share,
)
from speccheck.diagnostics.features import (
    DEFAULT_K,
    MAD_TO_SIGMA,
    expected_false_features,
    robust_sigma_um,
)
from speccheck.diagnostics.influence import (
    ANALYSED_BASES,
    recompute,
    sensitivity_class,
    split_sections,
)
from speccheck.parameters.compute import InsufficientData, compute_parameters
from speccheck.parameters.conditions import Conditions

DX_UM = 0.5
FEED_UM = 100.0
NOSE_UM = 800.0
TRACE_UM = 5600.0  # 7 cut-offs of 0.8 mm: 5 evaluated + run-in and run-out
SCRATCH_X_UM = 2850.0
VERDICT_WORDS = ("conform", "reject", "accept", "pass", "fail", "nonconform", "ok")

# Rsk of the parabolic cusp profile, derived in the module docstring.
RSK_CUSPS = (32.0 / 1890.0) / (4.0 / 45.0) ** 1.5


def turned_trace(*, noise_um: float = 0.02, seed: int = 1) -> tuple[np.ndarray, np.ndarray]:
    """x in µm and heights in µm of the ideal turned profile plus small seeded noise."""
    x = np.arange(int(TRACE_UM / DX_UM)) * DX_UM
    u = ((x + 13.0) % FEED_UM) - FEED_UM / 2
    z = NOSE_UM - np.sqrt(NOSE_UM**2 - u**2)
    z = z + np.random.default_rng(seed).normal(0.0, noise_um, x.size)
    return x, z


def with_scratch(x_um, z_um, *, at_um=SCRATCH_X_UM, depth_um=10.0, width_um=6.0) -> np.ndarray:
    """A V-shaped scratch: depth_um at at_um, zero at ±width_um/2."""
    d = np.abs(x_um - at_um)
    return z_um - np.where(d < width_um / 2, depth_um * (1 - d / (width_um / 2)), 0.0)


def with_particle(x_um, z_um, *, at_um=1700.0, height_um=6.0, width_um=20.0) -> np.ndarray:
    """A dust particle: raised cosine of height_um and base width width_um."""
    d = np.abs(x_um - at_um)
    bump = np.where(d < width_um / 2, 0.5 * height_um * (1 + np.cos(2 * np.pi * d / width_um)), 0)
    return z_um + bump


CONDITIONS = Conditions(lambda_c_mm=0.8, lambda_s_um=None)


@pytest.fixture(scope="module")
def clean():
    x, z = turned_trace()
    return compute_parameters(z, dx_um=DX_UM, conditions=CONDITIONS)


@pytest.fixture(scope="module")
def scratched():
    x, z = turned_trace()
    return compute_parameters(with_scratch(x, z), dx_um=DX_UM, conditions=CONDITIONS)


# --- the test profile itself -------------------------------------------------------------------


def test_turned_profile_matches_its_closed_forms(clean):
    # Rt ≈ f²/(8r) (handbook formula, from memory) + noise of σ 0.02 µm at both extremes.
    assert clean.values["Rt"].value == pytest.approx(FEED_UM**2 / (8 * NOSE_UM), abs=0.15)
    # Rsk of parabolic cusps, derived in the module docstring (ISO 4287:1997 4.2.3 formula);
    # arc vs parabola differs by u⁴/(8r³) < 1e-3 µm, the noise moves Rsk by ~0.01.
    assert clean.values["Rsk"].value == pytest.approx(RSK_CUSPS, abs=0.03)


def test_one_scratch_flips_rsk(clean, scratched):
    # Common practice, no source: turned surfaces skew positive; one deep scratch flips the sign.
    assert clean.values["Rsk"].value > 0.5
    assert scratched.values["Rsk"].value < 0.0
    # Over the whole evaluation length (ISO 21920-2 style field value) the swing is larger;
    # scipy.stats.skew is the same moment ratio once the mean (≈ 0 on a filtered profile) is out.
    z = scratched.profiles.roughness_um
    assert stats.skew(z) < -2.0


# --- feature detection -------------------------------------------------------------------------


def test_no_feature_and_no_diagnostic_on_the_clean_turned_profile(clean):
    assert find_isolated_features(clean.profiles.roughness_um, dx_um=DX_UM) == []
    assert diagnose(clean) == []
    assert diagnose(clean, requested=["Rsk", "Rku", "Rt"]) == []


def test_scratch_is_found_and_located(scratched):
    feats = find_isolated_features(
        scratched.profiles.roughness_um, dx_um=DX_UM, x_mm=scratched.profiles.x_mm
    )
    assert len(feats) == 1
    f = feats[0]
    assert f.kind == "valley"
    # The extreme point is the scratch bottom: within 2 sampling intervals.
    assert abs(f.x_mm * 1000.0 - SCRATCH_X_UM) <= 2 * DX_UM
    # 10 µm below the local surface, which lies between the cusp bottom (−0.52 µm from the mean
    # line: −h/3 of the parabolic profile) and the cusp tip (+2h/3 = +1.04 µm).
    assert 10.0 - 1.1 <= f.depth_um <= 10.0 + 0.6
    assert f.height_um is None
    # Width at the threshold crossing: inside the 6 µm of the V, more than a sample.
    assert DX_UM < f.width_um < 6.0


def test_particle_is_found_as_a_spike():
    x, z = turned_trace()
    ps = compute_parameters(with_particle(x, z), dx_um=DX_UM, conditions=CONDITIONS)
    feats = find_isolated_features(ps.profiles.roughness_um, dx_um=DX_UM, x_mm=ps.profiles.x_mm)
    assert [f.kind for f in feats] == ["spike"]
    assert abs(feats[0].x_mm * 1000.0 - 1700.0) <= 2 * DX_UM
    assert feats[0].to_dict().keys() == {"kind", "x_mm", "height_um", "width_um"}
    diags = diagnose(ps, requested=["Rt"])
    assert len(diags) == 1 and diags[0].parameters == ("Rt",)
    assert diags[0].to_dict()["features"][0]["kind"] == "spike"


@pytest.mark.parametrize("seed", [0, 1, 2, 3, 4])
def test_gaussian_random_profile_gives_no_false_alarm(seed):
    # 10^5 points: expected false features 2·N·Φ(−6) = 2.0e-4 (standard normal tail).
    z = np.random.default_rng(seed).normal(0.0, 0.8, 100_000)
    assert find_isolated_features(z, dx_um=DX_UM) == []
    assert diagnose(z, dx_um=DX_UM) == []


def test_false_alarm_figure_matches_the_normal_tail():
    # Standard normal distribution, scipy.stats.norm.sf(k) = Φ(−k).
    for n in (10**4, 10**5, 10**6):
        assert expected_false_features(DEFAULT_K, n) == pytest.approx(
            2 * n * stats.norm.sf(DEFAULT_K), rel=1e-9
        )
    assert expected_false_features(DEFAULT_K, 10**6) < 0.01


def test_robust_sigma_of_normal_data():
    # MAD · 1/Φ⁻¹(0.75) estimates σ of normal data (scipy.stats.norm.ppf).
    assert MAD_TO_SIGMA == pytest.approx(1.0 / stats.norm.ppf(0.75), rel=1e-12)
    z = np.random.default_rng(7).normal(3.0, 2.0, 100_000)
    # Relative standard error of the MAD estimate ≈ 1.17/√N = 0.0037; 4 SE allowed.
    assert robust_sigma_um(z) == pytest.approx(2.0, rel=0.015)


def test_a_scratch_barely_moves_the_robust_sigma_but_inflates_rq(clean, scratched):
    s_clean = robust_sigma_um(clean.profiles.roughness_um)
    s_scr = robust_sigma_um(scratched.profiles.roughness_um)
    assert s_scr == pytest.approx(s_clean, rel=0.01)
    assert scratched.values["Rq"].value > 1.05 * clean.values["Rq"].value


def test_many_deep_grooves_are_texture_not_isolated_features():
    # A plateau with a groove every 100 µm (plateau-honing-like): 40 grooves are the texture.
    x = np.arange(8000) * DX_UM
    z = np.random.default_rng(3).normal(0.0, 0.1, x.size)
    for c in np.arange(50.0, 4000.0, 100.0):
        z = with_scratch(x, z, at_um=c, depth_um=3.0, width_um=8.0)
    assert find_isolated_features(z - z.mean(), dx_um=DX_UM) == []


def test_threshold_follows_the_local_texture():
    # Fine texture (σ 0.2 µm) on the left half, coarse (σ 2 µm) on the right; a 3 µm pit on the
    # left is 15σ of its surroundings. One global reference (MAD of the mixture ≈ 0.46 µm) puts
    # hundreds of coarse-side points beyond 6σ: all texture, so nothing is reported; windows of
    # 500 µm find the pit.
    rng = np.random.default_rng(5)
    z = np.concatenate([rng.normal(0, 0.2, 10_000), rng.normal(0, 2.0, 10_000)])
    z[4000:4004] -= 3.0
    assert find_isolated_features(z, dx_um=DX_UM) == []
    feats = find_isolated_features(z, dx_um=DX_UM, window_um=500.0)
    assert len(feats) == 1 and feats[0].kind == "valley"
    assert 4000 <= round(feats[0].x_mm * 1000 / DX_UM) < 4004


def test_bad_input_is_refused_with_the_parameter_named():
    with pytest.raises(ValueError, match="roughness_um contains NaN"):
        find_isolated_features([0.0, math.nan, 1.0, 2.0], dx_um=1.0)
    with pytest.raises(ValueError, match="dx_um must be a positive finite number, got 0"):
        find_isolated_features(np.zeros(10), dx_um=0)
    with pytest.raises(ValueError, match="dx_um is needed"):
        diagnose(np.zeros(100))


# --- removal and recomputation -----------------------------------------------------------------


def test_removal_interpolates_the_surrounding_texture_linearly():
    # A straight line with a dent: after removal the heights are the line again (closed form).
    x = np.arange(200, dtype=np.float64)
    line = 0.01 * x - 0.5
    z = line.copy()
    z[100:104] -= np.array([4.0, 9.0, 9.0, 4.0])
    feats = find_isolated_features(z, dx_um=1.0, reference_rq_um=1.0)
    assert len(feats) == 1 and feats[0].start_index <= 100 and feats[0].stop_index >= 104
    np.testing.assert_allclose(remove_features(z, feats), line, atol=1e-12)


def test_recomputation_agrees_with_compute_parameters(scratched):
    # The values "with features" of the influence analysis are those compute_parameters reports.
    a = analyse(scratched)
    for i in a.influences:
        assert i.value == pytest.approx(scratched.values[i.name].value, rel=1e-9, abs=1e-12), i.name
    names = {i.name for i in a.influences}
    assert names >= {"Rsk", "Rku", "Rt", "Rmax", "Rz1max", "Rp", "Rv", "Rz"}


def test_analysis_dict_for_the_parameters_output(clean, scratched):
    # Clean profile: no features, so every parameter equals itself without them.
    d = analyse(clean).to_dict()
    assert d["features"] == []
    assert all(v["sensitivity"] == "stable" and v["change"] == 0.0 for v in d["influence"].values())
    d = analyse(scratched).to_dict()
    assert len(d["features"]) == 1
    assert d["influence"]["Rsk"]["sensitivity"] == "dominated"
    assert d["influence"]["Rp"]["sensitivity"] == "stable"  # a valley leaves the peaks alone
    assert d["influence"]["Rpk"]["sensitivity"] == "stable"
    assert d["influence"]["Rt"]["unit"] == "µm"


def test_split_and_recompute_on_a_sine():
    # Sine of amplitude A over whole periods: Ra = 2A/π, Rq = A/√2, Rsk = 0, Rku = 1.5,
    # Rp = Rv = A, Rz = Rt = 2A (closed forms, domain notes 4 [calc]).
    a_um = 1.5
    n = 5000
    z = a_um * np.sin(2 * np.pi * np.arange(n) / 100 + 0.3)
    v = recompute(z, sections=split_sections(n, 5), bases=("a", "q", "sk", "ku", "p", "v", "t"))
    # 100 samples per period: the discrete mean of |sin| is 2/π within 2e-5 relative.
    assert v["a"] == pytest.approx(2 * a_um / np.pi, rel=1e-4)
    assert v["q"] == pytest.approx(a_um / np.sqrt(2), rel=1e-9)
    assert v["sk"] == pytest.approx(0.0, abs=1e-9)
    assert v["ku"] == pytest.approx(1.5, rel=1e-9)
    assert v["p"] == pytest.approx(a_um, rel=1e-3)
    assert v["t"] == pytest.approx(2 * a_um, rel=1e-3)


# --- tail share --------------------------------------------------------------------------------


@pytest.mark.parametrize("power", [3, 4])
def test_tail_share_of_a_gaussian_profile_matches_the_normal_integral(power):
    # Share of E|Z|^p from |Z| beyond the 99.95 % quantile (top 0.1 % of |Z|):
    # 2∫_a^∞ z^p φ(z) dz / E|Z|^p, integrated with scipy over the standard normal density.
    a = stats.norm.ppf(1 - 0.0005)
    tail, _ = integrate.quad(lambda t: t**power * stats.norm.pdf(t), a, np.inf)
    full, _ = integrate.quad(lambda t: abs(t) ** power * stats.norm.pdf(t), -np.inf, np.inf)
    expected = 2 * tail / full
    z = np.random.default_rng(11).normal(0.0, 1.0, 1_000_000)
    # 1000 tail points: their share scatters by ~5 % of itself (the tail moments are heavy).
    assert tail_share(z, power=power) == pytest.approx(expected, rel=0.08)


def test_tail_share_of_the_scratch_dominates(clean, scratched):
    assert tail_share(clean.profiles.roughness_um, power=3) < 0.05
    assert tail_share(scratched.profiles.roughness_um, power=3) > 0.5


# --- classes (speccheck's own thresholds; common practice, no source) ---------------------------


@pytest.mark.parametrize(
    ("base", "value", "without", "expected"),
    [
        ("sk", 0.2999, 0.0, "stable"),
        ("sk", 0.3, 0.0, "sensitive"),  # |ΔRsk| = 0.3 exactly
        ("sk", 1.0, 0.0, "dominated"),  # |ΔRsk| = 1.0 exactly
        ("sk", -0.3, 0.3, "dominated"),  # sign change, both |Rsk| ≥ 0.3
        ("sk", -0.1, 0.3, "sensitive"),  # sign change but one side near zero: by size only
        ("ku", 3.0 * 1.14, 3.0, "stable"),
        ("ku", 3.0 * 1.5, 3.0, "dominated"),
        ("t", 10.99, 10.0, "stable"),
        ("t", 11.0, 10.0, "sensitive"),  # 10 % exactly
        ("t", 13.0, 10.0, "dominated"),  # 30 % exactly
        ("v", 7.0, 10.0, "dominated"),  # a lower value counts the same
    ],
)
def test_sensitivity_class_boundaries(base, value, without, expected):
    assert sensitivity_class(base, value, without)[1] == expected


def test_relative_change_has_a_floor():
    # Rvk from 0.01 to 0.03 µm on a profile of Rq 0.47 µm: 0.02 µm against the floor 0.5·Rq.
    assert sensitivity_class("vk", 0.03, 0.01, floor=0.235)[1] == "stable"
    assert sensitivity_class("vk", 0.03, 0.01)[1] == "dominated"


def test_nan_is_stable():
    change, cls = sensitivity_class("sk", math.nan, 0.5)
    assert math.isnan(change) and cls == "stable"


# --- the diagnostic ----------------------------------------------------------------------------


def test_diagnostic_fires_with_the_scratch(clean, scratched):
    diags = diagnose(scratched, requested=["Rsk", "Rku"])
    assert len(diags) == 1
    d = diags[0]
    assert isinstance(d, Diagnostic)
    assert d.parameters == ("Rsk", "Rku")
    assert d.severity == "warning"
    assert len(d.features) == 1
    assert abs(d.features[0].x_mm * 1000 - SCRATCH_X_UM) <= 2 * DX_UM
    # Without the scratch Rsk comes back to the clean value. Tolerance 0.1: the Gaussian mean
    # line still carries the scratch's pull (area 30 µm² / (αλc) ≈ 0.08 µm near the scratch).
    assert d.without_features["Rsk"] == pytest.approx(clean.values["Rsk"].value, abs=0.1)
    assert d.without_features["Rku"] == pytest.approx(clean.values["Rku"].value, rel=0.1)


def test_diagnostic_json_follows_the_contract(scratched):
    d = diagnose(scratched, requested=["Rsk", "Rku"])[0].to_dict()
    assert d["parameters"] == ["Rsk", "Rku"]
    assert d["severity"] == "warning"
    assert isinstance(d["message"], str) and "\n" not in d["message"]
    assert d["features"][0].keys() == {"kind", "x_mm", "depth_um", "width_um"}
    assert d["features"][0]["kind"] == "valley"
    assert d["features"][0]["x_mm"] == pytest.approx(SCRATCH_X_UM / 1000, abs=2 * DX_UM / 1000)
    assert set(d["without_features"]) == {"Rsk", "Rku"}
    assert d["without_features"]["Rsk"] > 0.5
    assert d["sensitivity"] == {"Rsk": "dominated", "Rku": "dominated"}


def test_message_names_the_stable_alternatives_and_no_verdict(scratched):
    message = diagnose(scratched, requested=["Rsk"])[0].message
    for name in ("Rk family", "Rpm/Rvm", "Rp/Rv", "2.850 mm"):
        assert name in message
    words = message.lower().replace(",", " ").replace(".", " ").split()
    assert not [w for w in words if w.startswith(VERDICT_WORDS)]


def test_fires_only_when_a_requested_parameter_changes_materially(scratched):
    # Ra moves by 2 % with the scratch (stable): nothing to say for a spec on Ra alone.
    assert diagnose(scratched, requested=["Ra"]) == []
    assert diagnose(scratched, requested=["Ra", "Rz"])[0].parameters == ("Rz",)
    # Names as a spec writes them: Rz3 is Rz with three sections.
    assert diagnose(scratched, requested=["Rz3"])[0].parameters == ("Rz",)


def test_no_diagnostic_for_insufficient_data():
    short = compute_parameters(np.zeros(100), dx_um=DX_UM, conditions=CONDITIONS)
    assert isinstance(short, InsufficientData)
    assert diagnose(short) == []


def test_array_input_matches_parameter_set_input(scratched):
    arr = diagnose(scratched.profiles.roughness_um, dx_um=DX_UM, requested=["Rsk"])
    assert arr[0].parameters == ("Rsk",)
    assert arr[0].without_features["Rsk"] == pytest.approx(
        diagnose(scratched, requested=["Rsk"])[0].without_features["Rsk"], rel=1e-12
    )


def test_analysed_set_covers_the_single_point_sensitive_parameters():
    from speccheck.parameters.names import PARAMETERS

    sensitive = {b for b, info in PARAMETERS.items() if info.single_point_sensitive}
    assert sensitive <= set(ANALYSED_BASES)


# --- policy ------------------------------------------------------------------------------------


def test_policy_outcome(scratched, clean):
    diags = diagnose(scratched, requested=["Rsk"])
    assert policy_outcome(diags, "undecided") == ISOLATED_FEATURES == "isolated-features"
    assert policy_outcome(diags, "report") is None
    assert policy_outcome(diagnose(clean, requested=["Rsk"]), "undecided") is None
    with pytest.raises(ValueError, match="policy must be 'report' or 'undecided', got 'strict'"):
        policy_outcome(diags, "strict")  # type: ignore[arg-type]


# --- advice for specifications -----------------------------------------------------------------


def test_advice_for_rsk_alone_names_alternatives():
    lines = sensitive_parameter_advice(["Rsk"])
    assert len(lines) == 1
    for name in ("Rsk", "Rp/Rv", "Rpm/Rvm", "Rk family", "Rpk", "Rvk"):
        assert name in lines[0]


@pytest.mark.parametrize(
    ("params", "count"),
    [
        (["Ra", "Rz"], 0),
        (["Ra", "Rsk"], 1),  # Ra controls height, not the peak/valley balance
        (["Rsk", "Rpk", "Rvk"], 0),
        (["Rt"], 1),
        (["Ra", "Rt"], 1),  # an average does not control the single extreme
        (["Rmax", "Rz"], 0),
        (["Rz1max", "Rku"], 2),
        (["Rsk", "Rt", "Rk"], 0),
        (["not-a-parameter"], 0),
    ],
)
def test_advice_cases(params, count):
    assert len(sensitive_parameter_advice(params)) == count


# --- properties --------------------------------------------------------------------------------


@settings(max_examples=40, deadline=None)
@given(
    seed=st.integers(0, 2**32 - 1),
    pits=st.lists(
        st.tuples(st.integers(5, 1990), st.floats(-40.0, 40.0).filter(lambda v: abs(v) > 1.0)),
        max_size=4,
    ),
)
def test_features_are_inside_the_profile_and_removal_touches_nothing_else(seed, pits):
    # Properties of the definitions (no external source): intervals lie in the profile and hold
    # their extreme point; removal changes only the points inside the intervals.
    z = np.random.default_rng(seed).normal(0.0, 1.0, 2000)
    for i, depth in pits:
        z[i : i + 3] += depth
    feats = find_isolated_features(z, dx_um=1.0)
    outside = np.ones(z.size, dtype=bool)
    for f in feats:
        assert 0 <= f.start_index < f.stop_index <= z.size
        i_ext = round(f.x_mm * 1000.0)
        assert f.start_index <= i_ext < f.stop_index
        assert f.extreme_um == pytest.approx(abs(z[i_ext]))
        outside[f.start_index : f.stop_index] = False
    assert [f.x_mm for f in feats] == sorted(f.x_mm for f in feats)
    cleaned = remove_features(z, feats)
    np.testing.assert_array_equal(cleaned[outside], z[outside])
