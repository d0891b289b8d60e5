"""Delimited exports as instruments write them: x and z found by name or by --columns, other
columns kept out.

Layouts (an index column, an intensity or flag column, several height columns, no header) are
common practice, no source. Each check compares the heights read with the numbers written.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from speccheck.errors import InputError
from speccheck.readers import read_profile

Z = np.round(np.sin(np.arange(400) / 7.0), 6)
Z2 = np.round(np.cos(np.arange(400) / 5.0), 6)
X_MM = np.arange(400) * 0.0005


def write(tmp_path, text: str, name: str = "export.csv"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def rows(fmt, *cols) -> str:
    return "".join(fmt.format(*vals) + "\n" for vals in zip(*cols, strict=True))


def test_extra_columns_are_kept_out(tmp_path):
    flags = ["ok" if i % 3 else "edge" for i in range(400)]
    text = "index,x [mm],z [um],intensity [counts],flag\n" + rows(
        "{},{:.4f},{!r},{},{}", range(400), X_MM, Z.tolist(), range(400, 800), flags
    )
    p = read_profile(write(tmp_path, text))
    assert np.array_equal(p.z_um, Z) and p.dx_um == pytest.approx(0.5)


def test_extra_numeric_columns_on_the_fast_path(tmp_path):
    text = "x [mm],t [s],z [um]\n" + rows("{:.4f},{},{!r}", X_MM, range(400), Z.tolist())
    assert np.array_equal(read_profile(write(tmp_path, text)).z_um, Z)


def test_names_and_units_as_exported(tmp_path):
    """'Position (mm)' and 'Height (nm)' with decimal commas: 1 nm = 0.001 µm."""
    body = rows("{:.4f};{!r}", X_MM, (Z * 1000).tolist()).replace(".", ",")
    p = read_profile(write(tmp_path, "Position (mm);Height (nm)\n" + body), decimal=",")
    assert np.allclose(p.z_um, Z, rtol=0, atol=1e-12)


def test_several_height_columns_need_a_choice(tmp_path):
    text = "x [mm],z1 [um],z2 [um]\n" + rows("{:.4f},{!r},{!r}", X_MM, Z.tolist(), Z2.tolist())
    path = write(tmp_path, text)
    with pytest.raises(InputError) as exc:
        read_profile(path)
    assert exc.value.one_line() == (
        f"{path}:1: 2 height columns ('z1 [um]', 'z2 [um]'): this file holds several profiles; "
        "pick one with --columns z=NAME"
    )
    assert np.array_equal(read_profile(path, columns="z=z2").z_um, Z2)
    assert np.array_equal(read_profile(path, columns="z=2").z_um, Z)


def test_headerless_file_with_columns_by_number(tmp_path):
    path = write(tmp_path, rows("{},{:.4f},{!r}", range(400), X_MM, (Z / 1000).tolist()))
    with pytest.raises(InputError, match="no header line"):
        read_profile(path)
    p = read_profile(path, columns="x=2[mm],z=3[mm]")
    assert np.allclose(p.z_um, Z, rtol=1e-15, atol=0) and p.dx_um == pytest.approx(0.5)


def test_unit_from_the_option_replaces_a_missing_one(tmp_path):
    text = "x,height\n" + rows("{:.4f},{!r}", X_MM, Z.tolist())
    path = write(tmp_path, text)
    with pytest.raises(InputError, match="has no unit"):
        read_profile(path)
    assert np.array_equal(read_profile(path, columns="x=x[mm],z=height[um]").z_um, Z)


@pytest.mark.parametrize(
    "option, message",
    [
        ("z=depth", "option --columns: no column named 'depth' (columns: 'x [mm]', 'z [um]')"),
        ("z=5", "option --columns: z=5, but the file has 2 columns"),
        ("z=0", "option --columns: column numbers start at 1, got 0"),
        ("height", "option --columns: cannot read 'height'"),
        ("x=1", "option --columns: name the height column, e.g. 'z=2'"),
        ("x=2,z=2", "x and z are the same column"),
    ],
)
def test_bad_column_choices_name_the_file(tmp_path, option, message):
    path = write(tmp_path, "x [mm],z [um]\n" + rows("{:.4f},{!r}", X_MM, Z.tolist()))
    with pytest.raises(InputError) as exc:
        read_profile(path, columns=option)
    assert str(path) in exc.value.one_line() and message in exc.value.one_line()


def test_comment_lines_inside_the_data_with_extra_columns(tmp_path):
    body = rows("{:.4f},{!r},{}", X_MM, Z.tolist(), ["a"] * 400)
    lines = body.splitlines()
    lines.insert(100, "# comment: probe lifted and set down")
    text = "x [mm],z [um],note\n" + "\n".join(lines) + "\n"
    assert np.array_equal(read_profile(write(tmp_path, text)).z_um, Z)


def test_cli_params_and_info_take_columns(tmp_path, run_cli):
    x_mm = np.arange(11200) * 0.0005
    z1 = np.sin(2 * np.pi * x_mm / 0.08).tolist()
    text = "x [mm],z1 [um],z2 [um]\n" + rows("{:.4f},{!r},{!r}", x_mm, z1, [0.0] * 11200)
    path = write(tmp_path, text)
    plain = write(tmp_path, "x [mm],z [um]\n" + rows("{:.4f},{!r}", x_mm, z1), "plain.csv")
    status, out, err = run_cli("info", path)
    assert status == 2 and "2 height columns" in err and "Traceback" not in err
    status, out, err = run_cli("info", path, "--columns", "z=z2", "--json")
    assert status == 0 and json.loads(out)["points"] == 11200
    args = ("--cutoff", "0.8mm", "--json")
    status, out, err = run_cli("params", path, "--columns", "z=z1", *args)
    assert status == 0
    status, ref, err = run_cli("params", plain, *args)
    a, b = json.loads(out)["parameters"], json.loads(ref)["parameters"]
    assert a["Ra"] == b["Ra"] and a["Rz"] == b["Rz"]
