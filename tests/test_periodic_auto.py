"""`measurement: {periodic: auto}` in check: a periodic profile gets the RSm row's cut-off.

Sources: ISO 4288:1996 Table 3 (RSm > 0.4 – 1.3 mm → λc 2.5 mm, evaluation length 12.5 mm) and
the procedure of 7.2 (domain notes section 1 [pub]); ISO 3274:1996 Table 1 (λs 8 µm at λc
2.5 mm, domain notes section 1 [pub]); ISO 16610-21 roughness transmission 1 - exp(-π(αλc/λ)²)
(domain notes section 3 [pub/calc]); sine Ra = 2A/π (domain notes section 4 [calc]). The
periodicity test itself is ours (autocorrelation, common practice, no source).
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from speccheck.profile import Profile
from speccheck.readers import write_csv

HEAD = "spec_version: 1\npart: {number: KFP-2041, revision: C, surface: seal seat}\n"
ALPHA = math.sqrt(math.log(2) / math.pi)


def spec(tmp_path, periodic: str):
    path = tmp_path / f"spec-{periodic}.yaml"
    path.write_text(
        HEAD + f'measurement: {{periodic: {periodic}}}\nrequirements:\n  - "Ra 0.8"\n',
        encoding="utf-8",
    )
    return path


def sine(tmp_path, length_mm: float, name: str = "sine.csv"):
    path = tmp_path / name
    x = np.arange(round(length_mm * 2000) + 1) * 0.5
    write_csv(path, Profile(np.sin(2 * np.pi * x / 500.0), 0.5))  # A 1 µm, RSm 0.5 mm
    return path


def result(run_cli, *args):
    status, out, _ = run_cli("check", *map(str, args), "--json", "-")
    return status, json.loads(out)["requirements"][0]


def test_periodic_sine_moves_to_the_rsm_row(tmp_path, run_cli):
    prof = sine(tmp_path, 17.5)
    status, req = result(run_cli, spec(tmp_path, "auto"), prof)
    c = req["conditions"]
    assert (c["lambda_c_mm"], c["lambda_s_um"]) == (2.5, 8.0)
    assert "Table 3" in c["lambda_c_source"] and "periodic" in c["lambda_c_source"]
    assert req["values"][0]["value"] == pytest.approx(2 / np.pi, rel=1e-3)
    # the same trace read as non-periodic: λc 0.8 mm passes 1 - exp(-π(α·0.8/0.5)²) = 83 %
    status, plain = result(run_cli, spec(tmp_path, "false"), prof)
    t = 1 - math.exp(-math.pi * (ALPHA * 0.8 / 0.5) ** 2)
    assert plain["conditions"]["lambda_c_mm"] == 0.8
    assert plain["values"][0]["value"] == pytest.approx(2 / np.pi * t, rel=2e-3)
    assert t == pytest.approx(0.8305, abs=1e-4)


def test_random_profile_keeps_the_ra_row(tmp_path, run_cli):
    rng = np.random.default_rng(7)
    x = np.arange(11201)
    z = np.convolve(rng.normal(size=x.size), np.ones(20) / 20, "same")
    prof = tmp_path / "random.csv"
    write_csv(prof, Profile(z, 0.5))
    status, req = result(run_cli, spec(tmp_path, "auto"), prof)
    c = req["conditions"]
    assert c["lambda_c_mm"] == 0.8 and "non-periodic" in c["lambda_c_source"]
    assert "Table 1" in c["lambda_c_source"]


def test_short_trace_is_insufficient_at_the_rsm_cutoff(tmp_path, run_cli):
    """A 5.6 mm trace of a periodic profile is too short for λc 2.5 mm (7 × 2.5 = 17.5 mm):
    insufficient data, never a value at the non-periodic 0.8 mm."""
    status, req = result(run_cli, spec(tmp_path, "auto"), sine(tmp_path, 5.6))
    assert status == 3
    assert req["conditions"]["lambda_c_mm"] == 2.5
    assert req["conditions"]["required_trace_mm"] == 17.5
    (v,) = req["values"]
    assert v["value"] is None


def test_explain_and_lint(tmp_path, run_cli):
    status, out, _ = run_cli("explain", str(spec(tmp_path, "auto")))
    assert status == 0 and "periodic: auto" in out
    bad = spec(tmp_path, "sometimes")
    status, out, _ = run_cli("lint", str(bad))
    assert status == 2 and out.startswith(f"{bad}:3:") and "periodic" in out
