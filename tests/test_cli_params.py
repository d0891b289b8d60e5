"""``speccheck params``: exit status, exact messages, and values against closed forms."""

from __future__ import annotations

import hashlib
import json
import math

import numpy as np
import pytest

from speccheck.cli.main import main
from speccheck.profile import Profile
from speccheck.readers import read_profile, write_csv, write_x3p

DX_UM = 0.5
A_UM = 1.2
LAMBDA_UM = 100.0


def sine_profile(length_mm: float = 6.0, amplitude_um: float = A_UM) -> Profile:
    n = int(round(length_mm * 1000 / DX_UM))
    x = np.arange(n) * DX_UM
    return Profile(amplitude_um * np.sin(2 * np.pi * x / LAMBDA_UM + 0.2), DX_UM)


@pytest.fixture(params=["csv", "x3p"])
def sine_file(request, tmp_path):
    path = tmp_path / f"kfp-2041-seal-seat.{request.param}"
    (write_csv if request.param == "csv" else write_x3p)(path, sine_profile())
    return path, request.param


def run_json(capsys, *args) -> tuple[int, dict]:
    status = main(["params", *map(str, args), "--json"])
    out = capsys.readouterr().out
    return status, json.loads(out)


def test_closed_form_values_from_both_file_forms(sine_file, capsys):
    """Sine A = 1.2 µm, λ = 0.1 mm (domain notes [calc]): Ra = 2A/π, Rq = A/√2, Rsk = 0,
    Rku = 1.5, Rz = Rt = 2A, RΔq = 2πA/(λ√2), RSm = λ. The λc 0.8 mm Gaussian passes the sine
    unchanged (transmission 1 − 1e-19, ISO 16610-21); no λs. Sampling tolerance 2e-4 (200
    points per period, see test_parameters_compute)."""
    path, fmt = sine_file
    status, d = run_json(capsys, path, "--cutoff", "0.8mm", "--ls", "none")
    assert status == 0
    p = d["parameters"]
    assert p["Ra"] == {
        "value": pytest.approx(2 * A_UM / math.pi, rel=2e-4),
        "unit": "µm",
        "basis": "section",
    }
    assert p["Rq"]["value"] == pytest.approx(A_UM / math.sqrt(2), rel=1e-5)
    assert p["Rsk"] == {"value": pytest.approx(0.0, abs=1e-6), "unit": "", "basis": "section"}
    assert p["Rku"]["value"] == pytest.approx(1.5, rel=1e-5)
    assert p["Rz"]["value"] == pytest.approx(2 * A_UM, rel=2e-4)
    assert p["Rt"]["value"] == pytest.approx(2 * A_UM, rel=2e-4)
    assert p["Rdq"]["value"] == pytest.approx(
        2 * math.pi * A_UM / (LAMBDA_UM * math.sqrt(2)), rel=1e-5
    )
    assert p["RSm"] == {"value": pytest.approx(0.1, rel=1e-6), "unit": "mm", "basis": "section"}
    assert len(d["sections"]) == 5 and d["sections"][2]["Ra"]["unit"] == "µm"
    c = d["conditions"]
    assert (c["lambda_c_mm"], c["lambda_s_um"], c["sections"], c["filter"]) == (
        0.8,
        None,
        5,
        "gaussian",
    )
    assert c["evaluation_length_mm"] == pytest.approx(4.0)
    assert d["source"] == {
        "path": str(path),
        "sha256": hashlib.sha256(path.read_bytes()).hexdigest(),
        "format": fmt,
    }
    assert d["cutoff_choice"] == {"source": "--cutoff"}


def test_csv_and_x3p_give_the_same_parameters(tmp_path, capsys):
    """The two files hold the same heights up to the last bit of the µm ↔ m conversion of X3P,
    so every value agrees to 1e-12 (relative, or absolute near zero)."""
    write_csv(tmp_path / "a.csv", sine_profile())
    write_x3p(tmp_path / "a.x3p", sine_profile())
    _, d1 = run_json(capsys, tmp_path / "a.csv", "--cutoff", "0.8mm")
    _, d2 = run_json(capsys, tmp_path / "a.x3p", "--cutoff", "0.8mm")
    assert d1["parameters"].keys() == d2["parameters"].keys()
    for name, p in d1["parameters"].items():
        assert d2["parameters"][name]["value"] == pytest.approx(p["value"], rel=1e-12, abs=1e-12), (
            name
        )


def test_default_cutoff_follows_iso4288_and_iso3274(tmp_path, capsys):
    """Ra = 2·1.2/π = 0.76 µm lies in the ISO 4288:1996 Table 1 row "> 0.1–2 µm" → λc 0.8 mm;
    ISO 3274:1996 Table 1 then gives λs 2.5 µm. The procedure starts at 0.8 mm; the
    shorter-cut-off step (ISO 4288:1996 7.2.2) measures at 0.25 mm, where the 0.1 mm sine
    passes 98.7 % (Ra 0.75 µm, still the 0.8 mm row): 0.8 mm stays. Taken as non-periodic."""
    write_csv(tmp_path / "s.csv", sine_profile())
    status, d = run_json(capsys, tmp_path / "s.csv", "--periodic", "false")
    assert status == 0
    assert d["conditions"]["lambda_c_mm"] == 0.8
    assert d["conditions"]["lambda_s_um"] == 2.5
    choice = d["cutoff_choice"]
    assert choice["settled"] is True
    assert [s["lambda_c_mm"] for s in choice["steps"]] == [0.8, 0.25]
    assert choice["estimate"]["lambda_c_mm"] == 0.8
    assert choice["source"] == "ISO 4288:1996 7.2.2 procedure on Ra"
    assert choice["periodic"] is False and choice["periodicity"] is None


def test_default_cutoff_moves_rows(tmp_path, capsys):
    """A = 0.1 µm: Ra = 0.2/π = 0.064 µm, in the ISO 4288:1996 Table 1 row "> 0.02–0.1 µm" →
    λc 0.25 mm. Estimated at 0.8 mm, the procedure measures at 0.25 mm, where the 0.1 mm sine
    still passes 1 − exp(−π(2.5α)²) = 98.7 % (ISO 16610-21), Ra 0.063 µm: same row, settled.
    The shorter step at 0.08 mm passes 1 − exp(−π(α/1.25)²) = 35.8 %: Ra 0.023 µm lies in the
    0.25 mm row, not the 0.08 mm one, so 0.25 mm stays."""
    write_csv(tmp_path / "fine.csv", sine_profile(amplitude_um=0.1))
    status, d = run_json(capsys, tmp_path / "fine.csv", "--periodic", "false")
    assert status == 0
    assert d["cutoff_choice"]["estimate"]["lambda_c_mm"] == 0.8
    assert d["cutoff_choice"]["estimate"]["Ra_um"] == pytest.approx(0.2 / math.pi, rel=2e-3)
    assert [s["lambda_c_mm"] for s in d["cutoff_choice"]["steps"]] == [0.25, 0.08]
    assert d["cutoff_choice"]["steps"][1]["Ra_um"] == pytest.approx(0.2 / math.pi * 0.358, rel=5e-3)
    assert d["cutoff_choice"]["settled"] is True
    assert d["conditions"]["lambda_c_mm"] == 0.25
    assert d["conditions"]["evaluation_length_mm"] == pytest.approx(1.25)
    assert d["parameters"]["Ra"]["value"] == pytest.approx(0.2 / math.pi * 0.987, rel=2e-3)


def test_short_trace_exits_3_with_the_lengths(tmp_path, capsys):
    """λc 0.8 mm needs 5.6 mm (5 sections + one λc each end); the trace is 4.5 mm."""
    path = tmp_path / "short.csv"
    write_csv(path, sine_profile(4.5))
    assert main(["params", str(path), "--cutoff", "0.8mm"]) == 3
    err = capsys.readouterr().err
    assert err == (
        f"speccheck: insufficient data: {path}: trace 4.5 mm is shorter than the 5.6 mm needed "
        "(5 × 0.8 mm plus 0.8 mm run-in and run-out)\n"
    )
    status, d = run_json(capsys, path, "--cutoff", "0.8mm")
    assert status == 3
    assert d["insufficient_data"]["required_mm"] == pytest.approx(5.6)
    assert d["insufficient_data"]["available_mm"] == pytest.approx(4.5)


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (
            ["--cutoff", "0.8"],
            "option --cutoff: length '0.8' has no unit (write e.g. '0.8um' or '0.8mm')",
        ),
        (
            ["--cutoff", "0.7mm"],
            "option --cutoff: lambda_c 0.7 mm is not in ISO 3274 Table 1 "
            "(0.08, 0.25, 0.8, 2.5, 8 mm); state lambda_s explicitly",
        ),
        (
            ["--cutoff", "0.8mm", "--ls", "900um"],
            "option --ls: lambda_s 900 µm must be shorter than lambda_c 0.8 mm",
        ),
        (
            ["--cutoff", "0.8mm", "--profile", "W"],
            "option --lf: a waviness profile (W) needs lambda_f",
        ),
        (
            ["--cutoff", "0.8mm", "--param", "Rmr(x)"],
            "option --param: Rmr(x): the level must be a depth in µm, e.g. Rmr(0.5), or a depth "
            "below the level at a reference ratio, e.g. Rmr(0.5,5%)",
        ),
    ],
)
def test_bad_options_exit_2_with_one_line(tmp_path, capsys, args, message):
    path = tmp_path / "s.csv"
    write_csv(path, sine_profile())
    assert main(["params", str(path), *args]) == 2
    assert capsys.readouterr().err == f"speccheck: error: {message}\n"


def test_bad_file_exit_2_naming_the_file(tmp_path, capsys):
    path = tmp_path / "broken.csv"
    path.write_text("x [mm],z [um]\n0,1\n0.0005,oops\n")
    assert main(["params", str(path), "--cutoff", "0.8mm"]) == 2
    err = capsys.readouterr().err
    assert err.startswith(f"speccheck: error: {path}:3:2: not a number") and err.count("\n") == 1


def test_flat_profile_is_not_evaluated(tmp_path, capsys):
    # Rq = 0 and Rsk = 0/0 (ISO 4287:1997 4.2.2, 4.2.3): nothing was measured; exit 3, no NaN.
    path = tmp_path / "flat.csv"
    write_csv(path, Profile(np.zeros(12000), DX_UM))
    status, d = run_json(capsys, path, "--cutoff", "0.8mm")
    assert status == 3
    assert d["insufficient_data"]["kind"] == "flat"
    assert "no surface texture was measured" in d["insufficient_data"]["reason"]


def test_parametrised_values_and_table(tmp_path, capsys):
    """Rmr(0.3) of a sine: arccos(1 − c/A)/π (see test_parameters); the table groups families
    and names the way λc was chosen."""
    path = tmp_path / "s.csv"
    write_csv(path, sine_profile())
    status, d = run_json(capsys, path, "--cutoff", "0.8mm", "--ls", "none", "--param", "Rmr(0.3)")
    assert status == 0
    expected = math.acos(1 - 0.3 / A_UM) / math.pi * 100
    assert d["parameters"]["Rmr(0.3)"] == {
        "value": pytest.approx(expected, abs=1e-2),
        "unit": "%",
        "basis": "field",
    }
    assert main(["params", str(path)]) == 0
    out = capsys.readouterr().out
    assert "λc chosen by the ISO 4288:1996 7.2.1 procedure on RSm" in out
    assert "periodic test: autocorrelation" in out
    assert "Amplitude" in out and "Stratified surfaces (ISO 13565-2)" in out
    ra_line = next(line for line in out.splitlines() if line.strip().startswith("Ra "))
    # periodic (a sine): RSm 0.1 mm lies in the ISO 4288:1996 Table 3 row > 0.04 – 0.13 mm,
    # λc 0.25 mm, λs 2.5 µm (ISO 3274 Table 1); Gaussian transmissions (ISO 16610-21) of both
    transmission = 1 - math.exp(-math.pi * (0.4697 * 250.0 / LAMBDA_UM) ** 2)
    ra = 2 * A_UM / math.pi * math.exp(-math.pi * (0.4697 * 2.5 / LAMBDA_UM) ** 2) * transmission
    assert f"{ra:.4g}" in ra_line and "µm" in ra_line
    # the library reads the same file back: the command evaluated what is on disk
    assert read_profile(path).n_points == 12000


def test_gap_too_long_to_bridge_is_refused(tmp_path, capsys):
    """50 invalid points (25 µm) exceed the bridging limit of speccheck.profile (5 points,
    10 µm): the profile must not be evaluated."""
    z = np.array(sine_profile().z_um)
    z[4000:4050] = np.nan
    path = tmp_path / "gap.csv"
    write_csv(path, Profile(z, DX_UM))
    assert main(["params", str(path), "--cutoff", "0.8mm"]) == 2
    assert capsys.readouterr().err == (
        f"speccheck: error: {path}: gap of invalid points too long to bridge at x 2–2.0245 mm; "
        "this profile cannot be evaluated\n"
    )
