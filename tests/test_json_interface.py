"""The JSON interface: ``schema_version`` on every document, measurements numbered from 1.

The compatibility promise is stated in speccheck/schemas/__init__.py and the README. Profiles
are sines of known Ra (tests/test_cli_check.py profile_file, closed form A·(2/N)·cot(π/N)).
"""

from __future__ import annotations

import json
from pathlib import Path

from test_cli_check import profile_file

from speccheck.cli.main import main
from speccheck.evaluation.result import CheckResult, in_current_form
from speccheck.schemas import SCHEMA_VERSION

SPEC = """\
spec_version: 1
part: {number: KFP-2041, revision: C, surface: seal seat}
measurement: {ls: none}
requirements:
  - "Ra 0.8"
"""


def _check_json(tmp_path, capsys, ras=(0.40, 0.45)) -> dict:
    spec = tmp_path / "s.yaml"
    spec.write_text(SPEC, encoding="utf-8")
    profiles = [profile_file(tmp_path, f"p{i}", ra) for i, ra in enumerate(ras)]
    capsys.readouterr()
    main(["check", str(spec), *profiles, "--json", "-"])
    return json.loads(capsys.readouterr().out)


def _as_format_1(d: dict) -> dict:
    """The same result as the earlier JSON form wrote it: counted from 0, ``format_version``."""
    old = {k: v for k, v in d.items() if k != "schema_version"}
    old["format_version"] = 1
    old["measurements"] = [
        {"index": m["number"] - 1, **{k: v for k, v in m.items() if k != "number"}}
        for m in d["measurements"]
    ]
    old["requirements"] = [
        {**r, "values": [{**v, "measurement": v["measurement"] - 1} for v in r["values"]]}
        for r in d["requirements"]
    ]
    return old


def test_check_json_numbers_measurements_from_1(tmp_path, capsys):
    d = _check_json(tmp_path, capsys)
    assert d["schema_version"] == SCHEMA_VERSION
    assert [m["number"] for m in d["measurements"]] == [1, 2]
    assert [v["measurement"] for v in d["requirements"][0]["values"]] == [1, 2]
    assert d["measurements"][1]["path"].endswith("p1.csv")  # number 2 is the second file


def test_result_round_trips_through_its_json(tmp_path, capsys):
    d = _check_json(tmp_path, capsys)
    r = CheckResult.from_dict(d)
    assert [m.index for m in r.measurements] == [0, 1]  # in memory: positions in the list
    assert r.to_dict() == d


def test_a_result_in_the_earlier_form_reads_as_today(tmp_path, capsys):
    d = _check_json(tmp_path, capsys)
    old = _as_format_1(d)
    assert in_current_form(old) == d
    assert CheckResult.from_dict(old).to_dict() == d
    assert in_current_form(d) is d  # today's form is left alone


def test_lot_json_carries_the_schema_version(tmp_path):
    from speccheck.lot.result import lot_in_current_form

    old = {"kind": "lot", "format_version": 1, "parts": [{"serial": "S1", "surfaces": {}}]}
    assert lot_in_current_form(old)["schema_version"] == SCHEMA_VERSION
    assert "format_version" not in lot_in_current_form(old)


# --- schemas: `speccheck schema --what`, each a valid draft 2020-12 schema ---------------------


def test_every_schema_prints_and_is_a_valid_draft_2020_12_schema(run_cli):
    from jsonschema import Draft202012Validator

    from speccheck.schemas import DOCUMENTS

    for what in ("spec", "plan", "instrument", *DOCUMENTS):
        status, out, err = run_cli("schema", "--what", what)
        assert status == 0, err
        Draft202012Validator.check_schema(json.loads(out))  # jsonschema's own meta-schema check


def test_a_result_with_measurements_counted_from_0_fails_the_result_schema(tmp_path, capsys):
    from conftest import schema_validator

    d = _check_json(tmp_path, capsys)
    assert not list(schema_validator("result").iter_errors(d))
    old = _as_format_1(d)
    old["schema_version"] = SCHEMA_VERSION
    assert list(schema_validator("result").iter_errors(old))  # the schema can fail


def test_the_demo_plan_matches_the_plan_schema(tmp_path):
    """The plan schema accepts the plan file the demo writes (a file the loader accepts)."""
    import yaml
    from jsonschema import Draft202012Validator

    from speccheck.lot.plan import load_plan, plan_json_schema

    plans = _demo_plans(tmp_path)
    assert plans
    for p in plans:
        load_plan(p)
        # YAML's dates are JSON strings (ISO 8601), as the schema states them
        doc = json.loads(json.dumps(yaml.safe_load(p.read_text(encoding="utf-8")), default=str))
        assert not list(Draft202012Validator(plan_json_schema()).iter_errors(doc)), p


def _demo_plans(tmp_path):
    from speccheck.demo.data import ground_profile
    from speccheck.lot.demo import build_demo_lot

    return [build_demo_lot(tmp_path / "lot", ground_profile=ground_profile)]


# --- errors as JSON on the JSON destination ---------------------------------------------------


def _error_doc(text: str) -> dict:
    from conftest import schema_validator

    doc = json.loads(text)
    assert not list(schema_validator("error").iter_errors(doc))
    return doc["error"]


def test_a_spec_error_is_a_json_error_with_line_and_column(tmp_path, capsys):
    bad = tmp_path / "bad.yaml"
    bad.write_text("spec_version: 1\npart: [\n", encoding="utf-8")
    p = profile_file(tmp_path, "a", 0.4)
    status = main(["check", str(bad), p, "--json", "-"])
    out = capsys.readouterr()
    assert status == 2
    e = _error_doc(out.out)
    assert (e["file"], e["code"]) == (str(bad), "spec")
    assert isinstance(e["line"], int) and e["line"] >= 2
    assert out.err.count("\n") == 1 and str(bad) in out.err  # the line on stderr stays


def test_an_input_error_as_json(tmp_path, capsys):
    spec = tmp_path / "s.yaml"
    spec.write_text(SPEC, encoding="utf-8")
    missing = tmp_path / "missing.csv"
    status = main(["check", str(spec), str(missing), "--json", "-"])
    e = _error_doc(capsys.readouterr().out)
    assert status == 2
    assert (e["file"], e["code"], e["line"]) == (str(missing), "input", None)


def test_a_json_file_destination_keeps_what_an_earlier_run_wrote(tmp_path, capsys):
    """A failed run leaves nothing of its own on disk and loses nothing already written
    (the error document goes to standard output only; the line on stderr names the file)."""
    spec = tmp_path / "s.yaml"
    spec.write_text(SPEC, encoding="utf-8")
    missing = tmp_path / "missing.csv"
    dest, fresh = tmp_path / "out.json", tmp_path / "fresh.json"
    dest.write_text("earlier result\n", encoding="utf-8")
    for target in (dest, fresh):
        status = main(["check", str(spec), str(missing), "--json", str(target)])
        out = capsys.readouterr()
        assert status == 2 and out.out == "" and str(missing) in out.err
    assert dest.read_text(encoding="utf-8") == "earlier result\n"
    assert not fresh.exists()


def test_a_usage_error_with_a_json_flag(capsys):
    status = main(["params", "--no-such-option", "--json"])
    out = capsys.readouterr()
    assert status == 2
    e = _error_doc(out.out)
    assert e["code"] == "usage" and "--no-such-option" in e["message"]


def test_an_error_json_never_replaces_an_input(tmp_path, capsys):
    spec = tmp_path / "s.yaml"
    spec.write_text(SPEC, encoding="utf-8")
    p = profile_file(tmp_path, "a", 0.4)
    before = Path(p).read_bytes()
    status = main(["check", str(spec), p, "--json", p])
    capsys.readouterr()
    assert status == 2
    assert Path(p).read_bytes() == before


def test_a_json_option_that_names_a_file_is_read_from_the_command(tmp_path, capsys):
    """`records export --json FILE` names a file (not the stdout flag of `records list`): a failed
    export leaves standard output empty and writes no file."""
    bad = tmp_path / "notes.sqlite"
    bad.write_bytes(b"these are not records\n" * 10)
    dest = tmp_path / "e.json"
    status = main(["records", "export", "--json", str(dest), "--db", str(bad)])
    out = capsys.readouterr()
    assert status == 2 and out.out == "" and str(bad) in out.err
    assert not dest.exists()
    status = main(["records", "list", "--json", "--db", str(bad)])  # a flag: JSON on stdout
    assert status == 2 and _error_doc(capsys.readouterr().out)["code"] == "records"
