"""Physically meaningless data is refused (exit 2) or, where it is a property of the
measurement, left undecided with the reason; it is never evaluated.

Scales: height = stored value × Z increment (ISO 25178-72 X3P) or × Zscale (ISO 25178-71 SDF);
spacing = X increment / Xscale (domain notes §7). A zero scale would make every height 0.
Plausible ranges (±10 mm of height, 0.1 nm .. 1 mm spacing) are common practice, no source.
A flat profile has Rq = 0 (ISO 4287:1997 4.2.2: Rq = √mean Z²), and Rsk, Rku would be 0/0.
"""

from __future__ import annotations

import numpy as np
import pytest
from _contract import assert_refused, fingerprint, run_speccheck
from test_readers import _x3p_bytes, hand_x3p, sdf_text

from speccheck.readers import MAX_ABS_HEIGHT_UM


def _int16(n=20):
    return (np.arange(n, dtype="<i2") - n // 2).tobytes()


@pytest.mark.parametrize(
    "z_inc, message",
    [
        ("0", "Z increment 0.0 m is not a positive finite number"),
        ("-1e-8", "Z increment -1e-08 m is not a positive finite number"),
        ("nan", "Z increment nan m is not a positive finite number"),
        ("inf", "Z increment inf m is not a positive finite number"),
        ("1e3", "Z increment 1000 m is outside the physically plausible"),
    ],
)
def test_x3p_height_scale_must_be_meaningful(tmp_path, run_cli, z_inc, message):
    f = tmp_path / "p.x3p"
    f.write_bytes(
        _x3p_bytes(hand_x3p(_int16(), z_inc=z_inc, z_off="0"), {"bindata/data.bin": _int16()})
    )
    before = fingerprint([f])
    status, _, err = run_cli("info", f)
    line = assert_refused(status, err, [f"{f}:main.xml Record1/Axes/CZ/Increment"])
    assert message in line
    assert fingerprint([f]) == before


def test_x3p_spacing_must_be_meaningful(tmp_path, run_cli):
    main = hand_x3p(_int16(), z_inc="1e-8", z_off="0").replace(
        "<Increment>2e-06</Increment>", "<Increment>0</Increment>", 1
    )
    data = _int16()
    f = tmp_path / "p.x3p"
    f.write_bytes(_x3p_bytes(main, {"bindata/data.bin": data}))
    status, _, err = run_cli("info", f)
    line = assert_refused(status, err, [f"{f}:main.xml Record1/Axes/CX/Increment"])
    assert "sampling spacing 0.0 µm is not a positive finite number" in line


@pytest.mark.parametrize(
    "key, value, message",
    [
        ("zscale", "0", "Zscale 0.0 m is not a positive finite number"),
        ("zscale", "-1e-6", "Zscale -1e-06 m is not a positive finite number"),
        ("zscale", "nan", "Zscale nan m is not a positive finite number"),
        ("xscale", "0", "sampling spacing 0.0 µm is not a positive finite number"),
        ("xscale", "5", "sampling spacing 5e+06 µm is outside the physically plausible"),
    ],
)
def test_sdf_scales_must_be_meaningful(tmp_path, run_cli, key, value, message):
    values = [str(i) for i in range(-10, 10)]
    f = tmp_path / "p.sdf"
    f.write_text(sdf_text(values, **{key: value}), encoding="utf-8")
    status, _, err = run_cli("info", f)
    line_no = 9 if key == "zscale" else 7  # the header lines of sdf_text
    assert message in assert_refused(status, err, [f"{f}:{line_no}:"])


def _csv(tmp_path, cells, unit="um"):
    body = "\n".join(f"{0.0005 * i:.4f},{c}" for i, c in enumerate(cells))
    f = tmp_path / "p.csv"
    f.write_text(f"x [mm],z [{unit}]\n{body}\n", encoding="utf-8")
    return f


@pytest.mark.parametrize("token", ["inf", "-inf", "1e999", "-Infinity"])
def test_infinite_heights_are_refused_with_their_line(tmp_path, run_cli, token):
    cells = ["0.1"] * 40
    cells[17] = token
    f = _csv(tmp_path, cells)
    status, _, err = run_cli("info", f)
    line = assert_refused(status, err, [f"{f}:19:2:"])  # header is line 1, point 17 on line 19
    assert "infinite or too large" in line and "nan or an empty cell" in line


def test_heights_beyond_the_physical_range_are_refused(tmp_path, run_cli):
    cells = ["1e-6"] * 40  # 1 µm
    cells[5] = "0.02"  # 0.02 m = 20 mm
    f = _csv(tmp_path, cells, unit="m")
    status, _, err = run_cli("info", f)
    line = assert_refused(status, err, [f"{f}:7:2:"])
    assert f"beyond the ±{MAX_ABS_HEIGHT_UM / 1e3:g} mm" in line


def test_overflowing_unit_conversion_is_refused_without_a_warning(tmp_path):
    cells = ["1e-6"] * 40
    cells[3] = "1e305"  # × 1e6 µm per m overflows float64 (IEEE 754 max ≈ 1.8e308)
    f = _csv(tmp_path, cells, unit="m")
    status, out, err = run_speccheck(["info", f])
    line = assert_refused(status, err, [f"{f}:5:2:"])
    assert "infinite or too large" in line
    assert "RuntimeWarning" not in err and out == ""


SPEC = """\
spec_version: 1
part: {number: KFP-2041, revision: C, surface: seal seat}
measurement: {ls: none, cutoff: 0.8mm}
requirements:
  - "Ra 0.8"
"""


@pytest.mark.parametrize("shape", ["constant", "tilted line"])
def test_flat_profile_is_undecided_with_the_reason(tmp_path, run_cli, shape):
    spec = tmp_path / "s.yaml"
    spec.write_text(SPEC, encoding="utf-8")
    n = 11201
    z = np.full(n, 3.0) if shape == "constant" else 0.001 * np.arange(n) - 2.0
    f = tmp_path / "flat.csv"
    lines = "\n".join(f"{0.0005 * i:.4f},{v!r}" for i, v in enumerate(z.tolist()))
    f.write_text(f"x [mm],z [um]\n{lines}\n", encoding="utf-8")
    before = fingerprint([spec, f])
    status, out, err = run_cli("check", spec, f)
    assert status == 3, (out, err)
    assert "flat over the evaluation length" in out and "no surface texture" in out
    assert "Warning" not in err
    status, out, err = run_cli("params", f, "--cutoff", "0.8mm", "--ls", "none")
    assert status == 3 and "flat over the evaluation length" in err
    assert str(f) in err
    assert fingerprint([spec, f]) == before
