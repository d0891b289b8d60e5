"""Identity on the record: who measured which part on which instrument, and its calibration age.

X3P Record2 element names (Instrument/Manufacturer, Model, Serial, Version; CalibrationDate;
ProbingSystem/Type ∈ Contacting, NonContacting, Software; ProbingSystem/Identification) are
those of ISO 25178-72 as implemented by the openGPS ISO5436_2 XML schema (Record2Type).
Calibration ages are counted against a fixed evaluation time passed in (``created``), never the
wall clock. Profiles are the sines of tests/test_cli_check.py (Ra by closed form).
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from test_cli_check import profile_file

from speccheck.cli.main import main
from speccheck.evaluation.evaluator import evaluate
from speccheck.evaluation.identity import Stated
from speccheck.instrument import load_instrument
from speccheck.profile import InstrumentMeta, SourceInfo
from speccheck.readers import read_profile, write_x3p
from speccheck.spec.loader import load_spec

SPEC = """\
spec_version: 1
part: {number: KFP-2041, revision: C, surface: seal seat}
requirements: ["Rz max 6.3"]
measurement: {cutoff: 0.8mm}
record:
  require: [serial, operator]
  max_calibration_age: 365 d
"""
INSTRUMENT = """\
instrument_version: 1
id: BENCH-2
model: Tracer 7
serial: "40712"
calibration: {date: 2026-03-01, certificate: C-17}
"""
NOW = "2026-12-04T12:00:00Z"  # 278 days after 2026-03-01


@pytest.fixture
def files(tmp_path):
    spec = tmp_path / "spec.yaml"
    spec.write_text(SPEC)
    inst = tmp_path / "bench-2.yaml"
    inst.write_text(INSTRUMENT)
    return spec, inst, profile_file(tmp_path, "p1", 0.5)


STATED = Stated("S-1", "A. Bench")


def _eval(spec, profiles, inst=None, created=NOW, stated=STATED):
    return evaluate(load_spec(spec), profiles, created=created, instrument=inst, stated=stated)


def test_missing_required_identity_is_exit_2_at_record_require(files, capsys):
    spec, _, p1 = files
    assert main(["check", str(spec), p1, "--operator", "A. Bench"]) == 2
    err = capsys.readouterr().err.strip()
    assert err == (
        f"speccheck: error: {spec}:6:3: record.require: this spec requires serial on every "
        "record, not given (serial: --serial)"
    )
    assert len(err.splitlines()) == 1


def test_bad_calibration_age_unit_is_refused(tmp_path):
    spec = tmp_path / "s.yaml"
    spec.write_text(SPEC.replace("365 d", "365"))
    with pytest.raises(Exception, match="no unit: write days with the unit d"):
        load_spec(spec)


def test_in_calibration_then_overdue_relative_to_evaluation_time(files):
    spec, inst, p1 = files
    prof = [read_profile(p1)]
    ok = _eval(spec, prof, load_instrument(inst))
    cal = ok.identity["calibration"]
    assert (cal["status"], cal["age_days"], cal["max_age_days"]) == ("in-calibration", 278, 365)
    assert ok.verdict == "conforming"
    late = _eval(spec, prof, load_instrument(inst), created="2027-03-02T00:00:00Z")  # 366 d
    assert late.identity["calibration"]["status"] == "overdue"
    assert late.verdict == "undecided"
    assert all(r.reason == "calibration-overdue" for r in late.requirements)


def test_no_calibration_date_when_an_age_is_required_is_undecided(files):
    spec, _, p1 = files
    r = _eval(spec, [read_profile(p1)])
    assert r.identity["calibration"]["status"] == "no-date"
    assert r.verdict == "undecided"


def test_x3p_record2_fields_read_back(tmp_path):
    meta = InstrumentMeta(
        manufacturer="Nordvik",
        model="Tracer 7",
        serial="40712",
        version="3.1",
        probing_system="tip 2um (Contacting)",
        calibration_date="2026-03-01",
    )
    prof = read_profile(profile_file(tmp_path, "p", 0.5))
    path = tmp_path / "p.x3p"
    write_x3p(path, prof.replace(source=SourceInfo(instrument_meta=meta)))
    import zipfile

    xml = zipfile.ZipFile(path).read("main.xml").decode()
    for tag in (
        "<Serial>40712</Serial>",
        "<Type>Contacting</Type>",
        "<CalibrationDate>2026-03-01T00:00:00</CalibrationDate>",
    ):
        assert tag in xml
    assert read_profile(path).source.instrument_meta == meta


def test_serial_conflict_between_file_and_instrument_file_is_an_error(tmp_path, files):
    spec, inst, p1 = files
    text = Path(p1).read_text()
    other = tmp_path / "other.csv"
    other.write_text("# instrument_serial: 99999\n# calibration_date: 2026-05-01\n" + text)
    with pytest.raises(Exception, match="instrument file is for serial 40712"):
        _eval(spec, [read_profile(other)], load_instrument(inst))
    same = tmp_path / "same.csv"
    same.write_text("# instrument_serial: 40712\n# calibration_date: 2026-05-01\n" + text)
    r = _eval(spec, [read_profile(same)], load_instrument(inst))
    assert r.identity["instrument"]["calibration_date"] == "2026-03-01"  # instrument file wins
    assert r.identity["instrument"]["warnings"]


def test_cli_check_shows_identity_in_text_and_json(files, tmp_path, capsys):
    spec, inst, p1 = files
    out = tmp_path / "r.json"
    args = [
        "check",
        str(spec),
        p1,
        "--serial",
        "S-1",
        "--operator",
        "A. Bench",
        "--order",
        "PO-77",
        "--instrument",
        str(inst),
        "--json",
        str(out),
    ]
    code = main(args)
    text = capsys.readouterr().out
    assert "Part serial: S-1" in text and "Operator: A. Bench" in text
    assert "Instrument: BENCH-2 (Tracer 7, serial 40712)" in text
    d = json.loads(out.read_text())["identity"]
    assert (d["serial"], d["operator"], d["order"]) == ("S-1", "A. Bench", "PO-77")
    assert d["instrument"]["id"] == "BENCH-2"
    assert code in (0, 3)  # calibration counted to the wall clock here: either state is honest
