"""Demo data generator: process models against closed forms, determinism, the written set.

Sources: classical kinematic roughness of turning Rt ≈ f²/(8r) and its exact circular-arc form
r − √(r² − f²/4) (common practice, no source); ISO 16610-21 Gaussian weighting function
(α = √(ln 2/π), domain notes §3) applied with scipy.ndimage.gaussian_filter1d as the reference
filter; ISO 3274 sampling spacings and 7-cut-off traces (domain notes §1).
"""

from __future__ import annotations

import numpy as np
import pytest

from speccheck.demo import data as demo
from speccheck.readers import read_profile

ALPHA = np.sqrt(np.log(2) / np.pi)  # ISO 16610-21


def roughness(z_um, dx_um, lambda_c_mm=0.8):
    """Roughness profile by the ISO 16610-21 Gaussian (scipy reference), ends of λc removed."""
    from scipy.ndimage import gaussian_filter1d

    sigma_points = ALPHA * lambda_c_mm * 1e3 / np.sqrt(2 * np.pi) / dx_um  # s(x) std deviation
    r = z_um - gaussian_filter1d(z_um, sigma_points, mode="nearest", truncate=4.0)
    cut = int(round(lambda_c_mm * 1e3 / dx_um))
    return r[cut:-cut]


def skew(r):
    return float(np.mean(r**3) / np.mean(r**2) ** 1.5)


def test_turned_peak_to_valley_is_the_kinematic_formula():
    f, r = 0.1, 0.8
    z = demo.turned_profile(
        length_mm=2.0,
        dx_um=0.1,
        feed_mm=f,
        nose_radius_mm=r,
        rng=np.random.default_rng(1),
        noise_um=0.0,
    )
    exact_um = (r - np.sqrt(r * r - f * f / 4)) * 1e3  # circular arcs meeting at cusps
    approx_um = f * f / (8 * r) * 1e3  # 1.5625 µm
    # sampling at 0.1 µm misses the cusp tip by at most (slope 0.0625)·0.05 µm = 0.003 µm
    assert np.ptp(z) == pytest.approx(exact_um, abs=0.004)
    assert np.ptp(z) == pytest.approx(approx_um, rel=0.002)  # f²/(8r) error (f/2r)²/4 ≈ 0.1 %
    assert z.min() >= 0.0


def test_turned_period_is_the_feed():
    z = demo.turned_profile(
        length_mm=4.0,
        dx_um=0.5,
        feed_mm=0.1,
        nose_radius_mm=0.8,
        rng=np.random.default_rng(2),
        noise_um=0.0,
    )
    spectrum = np.abs(np.fft.rfft(z - z.mean()))
    freq_per_mm = np.fft.rfftfreq(z.size, d=0.5e-3)
    assert freq_per_mm[np.argmax(spectrum)] == pytest.approx(10.0, rel=0.01)  # 1/f


def test_process_skewness_signs():
    # Common practice, no source: turned > 0, plateau-honed < 0, ground ≈ 0.
    rng = np.random.default_rng(3)
    t = demo.turned_profile(length_mm=5.6, dx_um=0.5, feed_mm=0.1, nose_radius_mm=0.8, rng=rng)
    h = demo.plateau_honed_profile(
        length_mm=5.6,
        dx_um=0.5,
        plateau_rq_um=0.2,
        valley_depth_um=2.5,
        valley_density_per_mm=6,
        rng=rng,
    )
    g = demo.ground_profile(length_mm=20.0, dx_um=0.5, ra_um=0.25, correlation_um=8.0, rng=rng)
    assert skew(roughness(t, 0.5)) > 0.3
    assert skew(roughness(h, 0.5)) < -1.0
    assert abs(skew(roughness(g, 0.5))) < 0.2


@pytest.mark.parametrize("acf", ["gaussian", "exponential"])
def test_ground_profile_ra_and_autocorrelation(acf):
    beta_um, dx_um = 8.0, 0.5
    z = demo.ground_profile(
        length_mm=50.0,
        dx_um=dx_um,
        ra_um=0.25,
        correlation_um=beta_um,
        rng=np.random.default_rng(4),
        acf=acf,
    )
    assert np.mean(np.abs(z - z.mean())) == pytest.approx(0.25, rel=1e-12)  # scaled exactly
    # Gaussian process: Ra/Rq = √(2/π) (domain notes §4 check values), sampling error ~1 %.
    assert np.mean(np.abs(z)) / np.sqrt(np.mean(z**2)) == pytest.approx(
        np.sqrt(2 / np.pi), rel=0.02
    )
    lag = int(beta_um / dx_um)
    acf_at_beta = np.mean(z[:-lag] * z[lag:]) / np.mean(z * z)
    # exp(−1) at τ = β for both models; ~6000 correlation lengths give a few % sampling error
    assert acf_at_beta == pytest.approx(np.exp(-1), abs=0.05)


def test_scratch_and_spike_shapes():
    z = np.zeros(101)
    s = demo.add_scratch(z, dx_um=0.5, x_mm=0.025, depth_um=10.0, width_um=6.0)
    assert s.min() == -10.0 and s[50] == -10.0  # x = 25 µm is point 50
    # parabola: at ±2 µm from the centre the drop is 10·(1 − (2·2/6)²) = 5.5556 µm
    assert s[46] == pytest.approx(-10 * (1 - (4 / 6) ** 2), rel=1e-12)
    assert np.count_nonzero(s) == 11  # |u| < 3 µm at 0.5 µm spacing: u = −2.5 ... 2.5
    p = demo.add_spike(z, dx_um=0.5, x_mm=0.025, height_um=4.0, width_um=2.0)
    assert p.max() == 4.0 and np.count_nonzero(p) == 3
    assert np.all(z == 0)  # inputs are not modified


def test_demo_set_is_deterministic_and_seed_dependent():
    a = demo.build_demo_profiles()
    b = demo.build_demo_profiles(demo.DEMO_SEED)
    c = demo.build_demo_profiles(1)
    assert list(a) == list(demo.DEMO_CATALOGUE)
    for name in a:
        assert np.array_equal(a[name].z_um, b[name].z_um)
        assert not np.array_equal(a[name].z_um, c[name].z_um)


def test_demo_set_sizes_follow_the_cutoff():
    # 7 cut-offs at the ISO 3274 spacing: λc 0.8 mm -> ≥ 5.6 mm at 0.5 µm (domain notes §1).
    for name, p in demo.build_demo_profiles().items():
        lc = demo.DEMO_CATALOGUE[name]["lambda_c_mm"]
        length_mm, dx_um = demo.TRACE_FOR_CUTOFF[lc]
        assert p.dx_um == dx_um
        assert p.length_mm >= 7 * lc - 1e-9 and p.length_mm == pytest.approx(length_mm)
    assert demo.TRACE_FOR_CUTOFF == {0.8: (5.6, 0.5), 2.5: (17.5, 1.5)}


def test_demo_profiles_match_their_catalogue_descriptions():
    profiles = demo.build_demo_profiles()
    for name, p in profiles.items():
        r = roughness(np.asarray(p.z_um), p.dx_um)
        ra = float(np.mean(np.abs(r)))
        if name.startswith("kfp-2041"):
            assert 0.18 <= ra <= 0.3, name  # ground seal seat, Ra about 0.2–0.3 µm
        elif name.startswith("kfp-1187"):
            assert skew(r) > 0.3, name
        elif name.startswith("kfp-3310"):
            assert skew(r) < -1.0, name
    scratched = profiles["kfp-3310_holloway_04_scratch"].z_um
    plain = profiles["kfp-3310_holloway_01"].z_um
    diff = plain - scratched
    assert diff.max() == pytest.approx(10.0) and np.count_nonzero(diff) == 11  # 6 µm at 0.5 µm


def test_write_demo_data_reads_back(tmp_path):
    rows = demo.prepare_demo_folder(tmp_path / "d")
    assert len(rows) == len(demo.DEMO_CATALOGUE)
    assert (rows[0]["name"], rows[0]["points"]) == ("kfp-2041_ardent_01", 11201)
    profiles = demo.build_demo_profiles()
    for name, p in profiles.items():
        a = read_profile(tmp_path / "d" / f"{name}.csv")
        b = read_profile(tmp_path / "d" / f"{name}.x3p")
        assert np.array_equal(a.z_um, p.z_um) and a.dx_um == p.dx_um
        np.testing.assert_array_max_ulp(b.z_um, p.z_um, maxulp=1)  # metres in X3P, see readers
        assert a.source.comment == p.source.comment == b.source.comment


def test_demo_out_is_a_file(tmp_path, run_cli):
    f = tmp_path / "taken"
    f.write_text("keep me")
    status, out, err = run_cli("demo", "--out", f)
    assert status == 2 and f.read_text() == "keep me"
    assert err == f"speccheck: error: {f}: exists and is not a folder\n"
