"""Drawing units: limits in µm or µin, shown in the drawing's unit, both in JSON.

Sources: 1 in = 25.4 mm exactly, so 1 µin = 0.0254 µm (NIST SP 811 appendix B); ISO 4288:1996
Table 1 rows Ra > 0.1 – 2 µm → λc 0.8 mm and > 10 – 80 µm → 8 mm (domain notes section 1);
ASME Y14.36: a single value is a maximum (domain notes section 2 [pub]).
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from speccheck.cli.main import main
from speccheck.profile import Profile
from speccheck.readers import write_csv
from speccheck.spec.loader import load_spec
from speccheck.units import UM_PER_UIN, parse_length, to_drawing_unit

HEAD = "spec_version: 1\npart: {number: KFP-2041, revision: D-US, surface: seal seat}\n"


def write(tmp_path, body: str, name: str = "spec.yaml"):
    path = tmp_path / name
    path.write_text(HEAD + body, encoding="utf-8")
    return path


@pytest.mark.parametrize("uin", [1.0, 2.0, 16.0, 32.0, 63.0, 125.0, 500.0])
def test_microinch_round_trip(uin):
    """NIST SP 811: 1 µin = 0.0254 µm exactly; a value survives µin → µm → µin."""
    assert UM_PER_UIN == 0.0254
    assert parse_length(f"{uin:g}uin").um == pytest.approx(uin * 0.0254, rel=1e-15)
    assert to_drawing_unit(uin * UM_PER_UIN, "µin") == pytest.approx(uin, rel=1e-15)


def test_ra_32_on_an_inch_drawing_is_0_8128_um(tmp_path):
    """Ra 32 µin = 0.8128 µm lies in ISO 4288 Table 1 row > 0.1 – 2 µm: λc 0.8 mm. Read as
    32 µm it would lie in > 10 – 80 µm: λc 8 mm."""
    uin = load_spec(write(tmp_path, 'convention: asme\nunits: uin\nrequirements:\n  - "Ra 32"\n'))
    (req,) = uin.requirements
    assert req.upper == pytest.approx(0.8128, rel=1e-15) and req.lambda_c_mm == 0.8
    assert req.drawing_unit == "µin" and req.rule == "max"
    um = load_spec(write(tmp_path, 'convention: asme\nunits: um\nrequirements:\n  - "Ra 32"\n'))
    assert um.requirements[0].lambda_c_mm == 8.0


def test_asme_without_units_is_refused_by_lint_and_check(tmp_path, capsys):
    path = write(tmp_path, 'convention: asme\nrequirements:\n  - "Ra 32"\n')
    message = (
        f"{path}:3:1: convention asme: state the drawing's unit, 'units: uin' (microinches, "
        "usual on inch drawings) or 'units: um'"
    )
    assert main(["lint", str(path)]) == 2
    assert capsys.readouterr().out.splitlines() == [message]
    assert main(["check", str(path), str(path)]) == 2
    assert capsys.readouterr().err == f"speccheck: error: {message}\n"


def test_check_shows_microinches_and_json_carries_both(tmp_path, capsys):
    """A sine of amplitude A = 0.5 µm: Ra = 2A/π = 0.3183 µm = 12.53 µin (closed form,
    domain notes section 4; λc 0.8 mm passes the 0.1 mm sine unchanged, ISO 16610-21)."""
    spec = write(
        tmp_path,
        'convention: asme\nunits: uin\nrequirements:\n  - "Ra 16"\n'
        "  - {parameter: Rz, upper: 4um, units: um}\n",
    )
    prof = tmp_path / "p.csv"
    x = np.arange(11200) * 0.5
    write_csv(prof, Profile(0.5 * np.sin(2 * np.pi * x / 100.0), 0.5))
    assert main(["check", str(spec), str(prof), "--json", "-"]) == 0
    d = json.loads(capsys.readouterr().out)
    ra, rz = d["requirements"]
    ra_um = 2 * 0.5 / np.pi
    assert ra["unit"] == "µm" and ra["drawing_unit"] == "µin"
    assert ra["upper"] == pytest.approx(16 * 0.0254) and ra["drawing_limits"]["upper"] == 16.0
    (v,) = ra["values"]
    assert v["value"] == pytest.approx(ra_um, rel=2e-3)
    assert v["drawing_value"] == pytest.approx(ra_um / 0.0254, rel=2e-3)
    assert rz["drawing_unit"] is None and rz["values"][0]["drawing_value"] is None
    assert main(["check", str(spec), str(prof)]) == 0
    out = capsys.readouterr().out
    assert f"{ra_um / 0.0254:.4g} µin" in out
    assert "upper limit 16 µin" in out
    assert main(["explain", str(spec)]) == 0
    assert "Ra ≤ 16 µin (0.4064 µm) (upper limit)" in capsys.readouterr().out


def test_lint_warns_when_a_limit_looks_written_in_the_other_unit(tmp_path, capsys):
    metric = write(tmp_path, 'units: um\nrequirements:\n  - "Ra 32"\n', "metric.yaml")
    assert main(["lint", str(metric)]) == 0
    assert (
        "warning: Ra 32 µm is coarser than most machined surfaces and 32 is a common "
        "microinch value: if the drawing is in inches, set 'units: uin'"
    ) in capsys.readouterr().out
    inch = write(tmp_path, 'units: uin\nrequirements:\n  - "Ra 0.8"\n', "inch.yaml")
    assert main(["lint", str(inch)]) == 0
    assert "Ra 0.8 µin (0.02032 µm) is finer than almost any" in capsys.readouterr().out
    plain = write(tmp_path, 'units: um\nrequirements:\n  - "Ra 0.8"\n', "plain.yaml")
    assert main(["lint", str(plain)]) == 0
    assert "warning" not in capsys.readouterr().out


def test_record_view_shows_the_drawing_unit(tmp_path):
    """The record's view model (shared by PDF and page) words limits and values in µin, the µm
    limits beside them: 16 µin = 0.4064 µm (NIST SP 811)."""
    from speccheck.evaluation.evaluator import evaluate_files
    from speccheck.report.view import SignatureView, build_view

    spec = write(tmp_path, 'convention: asme\nunits: uin\nrequirements:\n  - "Ra 16"\n')
    prof = tmp_path / "p.csv"
    x = np.arange(11200) * 0.5
    write_csv(prof, Profile(0.5 * np.sin(2 * np.pi * x / 100.0), 0.5))
    result = evaluate_files(spec, [prof])
    sig = SignatureView(False, "NOT SIGNED", "—", "not stated", "—", "—", "")
    (req,) = build_view(result, signature=sig).requirements
    assert req.limits.endswith("16 µin (upper 0.4064 µm)")
    (row,) = req.values
    assert row.value.endswith(" µin") and float(row.value.split()[0]) == pytest.approx(
        2 * 0.5 / np.pi / 0.0254, rel=2e-3
    )
