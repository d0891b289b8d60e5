"""The ISO 4288:1996 cut-off procedure for periodic and non-periodic profiles, from a trace.

Sources: ISO 4288:1996 7.2 and Table 3 (periodic profiles: λc by RSm, rows > 0.13 – 0.4 mm →
0.8 mm, > 0.4 – 1.3 mm → 2.5 mm), Table 1 (Ra > 0.1 – 2 µm → 0.8 mm) (domain notes section 1
[pub]); ISO 16610-21 roughness transmission 1 − exp(−π(αλc/λ)²), α = √(ln 2/π) (domain notes
section 3 [pub/calc]); ISO 3274:1996 Table 1 spacing column (from memory).
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from speccheck.cli.main import main
from speccheck.parameters.periodicity import PERIODIC_CORRELATION, periodicity
from speccheck.profile import Profile
from speccheck.readers import write_csv

ALPHA = math.sqrt(math.log(2) / math.pi)


def roughness_transmission(wavelength_mm: float, lambda_c_mm: float) -> float:
    return 1 - math.exp(-math.pi * (ALPHA * lambda_c_mm / wavelength_mm) ** 2)


def test_sine_is_periodic_with_its_wavelength_as_lag():
    """A sine's autocorrelation is cos(2πτ/λ): 1 at τ = λ (closed form)."""
    x_um = np.arange(8000) * 0.5
    p = periodicity(np.sin(2 * np.pi * x_um / 500.0), dx_um=0.5)
    assert p.periodic and p.correlation == pytest.approx(1.0, abs=0.01)
    assert p.lag_mm == pytest.approx(0.5, rel=0.01)
    assert "periodic" in p.evidence


def test_random_roughness_is_not_periodic():
    """Gaussian noise smoothed over 10 samples (seed fixed): its autocorrelation beyond the
    first zero is sampling noise, of order 1/√(correlation lengths) ≈ 0.03 ≪ 0.5."""
    from scipy.ndimage import gaussian_filter1d

    rng = np.random.default_rng(12)
    p = periodicity(gaussian_filter1d(rng.normal(size=8000), 10.0), dx_um=0.5)
    assert not p.periodic and p.correlation < PERIODIC_CORRELATION


def test_flat_profile_is_not_periodic():
    assert not periodicity(np.zeros(100), dx_um=0.5)


@pytest.fixture
def long_sine(tmp_path):
    """RSm 0.5 mm sine, A = 1 µm, 18 mm long (7 × 2.5 mm plus slack), dx 1 µm."""
    x_um = np.arange(18000) * 1.0
    path = tmp_path / "turned.csv"
    write_csv(path, Profile(np.sin(2 * np.pi * x_um / 500.0), 1.0))
    return path


def params_json(capsys, *args) -> dict:
    assert main(["params", *map(str, args), "--ls", "none", "--json"]) == 0
    return json.loads(capsys.readouterr().out)


def test_periodic_profile_gets_the_rsm_row(long_sine, capsys):
    """RSm 0.5 mm lies in ISO 4288 Table 3 row > 0.4 – 1.3 mm: λc 2.5 mm, and Ra = 2A/π with
    transmission 1 − 1e-12 at λ/λc = 0.2. As non-periodic, Ra 0.53 µm is read in Table 1
    (> 0.1 – 2 µm) and λc 0.8 mm passes only 83.0 % of the sine: Ra 17 % low."""
    auto = params_json(capsys, long_sine)
    choice = auto["cutoff_choice"]
    assert choice["periodic"] is True
    assert choice["periodicity"]["lag_mm"] == pytest.approx(0.5, rel=0.01)
    assert choice["periodicity"]["correlation"] >= PERIODIC_CORRELATION
    assert auto["conditions"]["lambda_c_mm"] == 2.5
    assert auto["parameters"]["Ra"]["value"] == pytest.approx(2 / math.pi, rel=1e-3)
    assert choice["steps"][0]["RSm_um"] == pytest.approx(500.0, rel=1e-3)

    flat = params_json(capsys, long_sine, "--periodic", "false")
    assert flat["conditions"]["lambda_c_mm"] == 0.8
    t = roughness_transmission(0.5, 0.8)
    assert t == pytest.approx(0.8304, abs=1e-4)
    assert flat["parameters"]["Ra"]["value"] == pytest.approx(2 / math.pi * t, rel=2e-3)

    forced = params_json(capsys, long_sine, "--periodic", "true")
    assert (
        forced["conditions"]["lambda_c_mm"] == 2.5
        and forced["cutoff_choice"]["periodicity"] is None
    )


def test_coarse_sampling_is_a_warning_in_params(tmp_path, capsys):
    """dx 1 µm exceeds the 0.5 µm ISO 3274:1996 Table 1 gives for λc 0.8 mm (from memory)."""
    path = tmp_path / "coarse.csv"
    x_um = np.arange(8000) * 1.0
    write_csv(path, Profile(np.sin(2 * np.pi * x_um / 100.0), 1.0))
    d = params_json(capsys, path, "--cutoff", "0.8mm")
    assert d["warnings"] == [
        "sampling spacing 1 µm exceeds the 0.5 µm ISO 3274:1996 Table 1 allows for λc 0.8 mm; "
        "check leaves such values undecided (other-conditions)"
    ]
    fine = params_json(capsys, path, "--cutoff", "2.5mm", "--sections", "1")
    assert fine["warnings"] == []
    assert main(["params", str(path), "--cutoff", "0.8mm", "--ls", "none"]) == 0
    assert "warning: sampling spacing 1 µm exceeds" in capsys.readouterr().out


HEAD = """\
spec_version: 1
part: {number: KFP-1187, revision: A, surface: gasket face}
"""


def write_spec(tmp_path, body: str):
    path = tmp_path / "spec.yaml"
    path.write_text(HEAD + body, encoding="utf-8")
    return path


def test_requirements_needing_different_traces_are_named(tmp_path, capsys):
    """Ra 0.8 → λc 0.8 mm (ISO 4288 Table 1, > 0.1 – 2 µm), Rz 20 → λc 2.5 mm (Table 2,
    > 10 – 50 µm); 5 sections plus one λc of run-in and run-out each (speccheck's trace rule):
    7 × 0.8 = 5.6 mm and 7 × 2.5 = 17.5 mm."""
    path = write_spec(tmp_path, 'requirements:\n  - "Ra 0.8"\n  - "Rz 20"\n')
    expected = (
        "the requirements need traces of different lengths: [1] Ra 0.8: 5.6 mm (λc 0.8 mm), "
        "[2] Rz 20: 17.5 mm (λc 2.5 mm); a trace of 17.5 mm serves all, each requirement "
        "evaluated on its own centred window"
    )
    assert main(["lint", str(path)]) == 0
    assert f"{path}:4:5: warning: {expected}" in capsys.readouterr().out
    assert main(["explain", str(path)]) == 0
    out = capsys.readouterr().out
    assert f"Traces: {expected}." in out
    assert "at least 17.5 mm (12.5 mm evaluated, 2.5 mm run-in and run-out each)" in out


def test_one_trace_length_gives_no_note(tmp_path, capsys):
    path = write_spec(tmp_path, 'requirements:\n  - "Ra 0.8"\n  - "Rz 6.3"\n')
    assert main(["lint", str(path)]) == 0
    assert "different lengths" not in capsys.readouterr().out


def test_periodic_spec_reads_the_rsm_row_or_asks_for_a_cutoff(tmp_path, capsys):
    """measurement.periodic: true: ISO 4288:1996 Table 3 gives λc from RSm (RSm 0.2 mm in
    > 0.13 – 0.4 mm → 0.8 mm); an Ra limit says nothing about RSm, so λc must be stated."""
    ok = write_spec(tmp_path, 'measurement: {periodic: true}\nrequirements:\n  - "RSm 0.2"\n')
    assert main(["explain", str(ok)]) == 0
    assert "λc 0.8 mm — ISO 4288:1996 Table 3, RSm > 130 – 400 µm" in capsys.readouterr().out
    bad = write_spec(tmp_path, 'measurement: {periodic: true}\nrequirements:\n  - "Ra 0.8"\n')
    assert main(["lint", str(bad)]) == 2
    out = capsys.readouterr().out
    assert "for a periodic profile the default cut-off follows RSm (ISO 4288:1996 Table 3)" in out
