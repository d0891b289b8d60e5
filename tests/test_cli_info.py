"""``speccheck info``: JSON fields and the table, checked against closed forms and hashlib."""

from __future__ import annotations

import hashlib
import json

import numpy as np
import pytest

from speccheck.profile import Profile, SourceInfo
from speccheck.readers import read_profile, write_csv, write_x3p


def _sine_with_gap(tmp_path, gap=range(200, 210), dx_um=0.5):
    # z = A sin(2π x/λ), A = 1.25 µm, λ = 80 µm: the z range over whole periods is 2A (closed form).
    n = 1601
    z = 1.25 * np.sin(2 * np.pi * np.arange(n) * dx_um / 80.0)
    z[list(gap)] = np.nan
    z[[50, 51]] = np.nan
    p = Profile(z_um=z, dx_um=dx_um, source=SourceInfo(instrument="stylus", date="2026-11-30"))
    f = tmp_path / "s.csv"
    write_csv(f, p)
    return f


def test_info_json(tmp_path, run_cli):
    f = _sine_with_gap(tmp_path)
    status, out, err = run_cli("info", f, "--json")
    assert status == 0 and err == ""
    info = json.loads(out)
    assert info["points"] == 1601
    assert info["spacing_um"] == 0.5
    assert info["length_mm"] == pytest.approx(0.8, rel=1e-15)  # (n − 1)·dx
    assert info["z_range_um"] == pytest.approx(2.5, rel=1e-12)  # 2A; peaks at x = 20 µm + k·80 µm
    assert info["sha256"] == hashlib.sha256(f.read_bytes()).hexdigest()  # reference: hashlib
    assert (info["format"], info["path"], info["instrument"], info["date"], info["comment"]) == (
        "csv",
        str(f),
        "stylus",
        "2026-11-30",
        None,
    )
    # 2 points bridged (run of 2 spans 1.5 µm); 10 points at 0.5 µm span 5.5 µm but exceed 5 points.
    assert info["dropouts"] == {
        "invalid_points": 12,
        "interpolated_points": 2,
        "runs": 2,
        "longest_run_points": 10,
        "refused_gaps_mm": [[0.1, 0.1045]],
        "usable": False,
    }


def test_info_table(tmp_path, run_cli):
    f = _sine_with_gap(tmp_path)
    status, out, err = run_cli("info", f)
    assert status == 0 and err == ""
    lines = {line.split("  ")[0].strip(): line for line in out.splitlines()}
    assert "1601" in lines["points"]
    assert "0.5 µm" in lines["spacing"]
    assert "0.1–0.1045 mm" in lines["gaps too long to bridge"]
    assert hashlib.sha256(f.read_bytes()).hexdigest() in lines["SHA-256"]
    assert out.rstrip().endswith("this profile cannot be evaluated as it is")


def test_info_z_only_decimal_comma_and_format(tmp_path, run_cli):
    f = tmp_path / "z.dat"
    f.write_text(
        "z [µm]\n" + "".join(f"{v:.3f}\n".replace(".", ",") for v in np.linspace(0, 1, 21))
    )
    status, out, _ = run_cli("info", f, "--dx", "2um", "--decimal", ",", "--json")
    info = json.loads(out)
    assert status == 0
    assert (info["points"], info["spacing_um"], info["format"]) == (21, 2.0, "txt")
    assert info["length_mm"] == pytest.approx(0.04, rel=1e-15)
    assert info["z_range_um"] == pytest.approx(1.0, rel=1e-15)
    g = tmp_path / "z.bin"
    g.write_bytes(f.read_bytes())
    status, out, _ = run_cli(
        "info", g, "--format", "txt", "--dx", "2um", "--decimal", ",", "--json"
    )
    assert status == 0 and json.loads(out)["points"] == 21


def test_info_x3p_reads_back_what_the_library_reads(tmp_path, run_cli):
    p = Profile(z_um=np.cos(np.arange(100) / 5.0), dx_um=1.5)
    write_x3p(tmp_path / "c.x3p", p)
    status, out, _ = run_cli("info", tmp_path / "c.x3p", "--json")
    info = json.loads(out)
    q = read_profile(tmp_path / "c.x3p")
    assert status == 0 and info["format"] == "x3p"
    assert (info["points"], info["spacing_um"]) == (q.n_points, q.dx_um) == (100, 1.5)
    assert info["z_range_um"] == float(np.nanmax(q.z_um) - np.nanmin(q.z_um))


def test_info_has_help(run_cli):
    status, out, _ = run_cli("info", "--help")
    assert status == 0 and "Describe a measured profile FILE" in out
