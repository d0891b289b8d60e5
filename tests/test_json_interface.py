"""The JSON interface: ``schema_version`` on every document, measurements numbered from 1.

The compatibility promise is stated in speccheck/schemas/__init__.py and the README. Profiles
are sines of known Ra (closed form A·(2/N)·cot(π/N), see tests/test_cli_check.py).
"""

from __future__ import annotations

import json
import math

import numpy as np

from speccheck.cli.main import main
from speccheck.evaluation.result import CheckResult, in_current_form
from speccheck.profile import Profile
from speccheck.readers import write_csv
from speccheck.schemas import SCHEMA_VERSION

N = 100
RA_PER_AMPLITUDE = (2 / N) / math.tan(math.pi / N)
SPEC = """\
spec_version: 1
part: {number: KFP-2041, revision: C, surface: seal seat}
measurement: {ls: none}
requirements:
  - "Ra 0.8"
"""


def _profile(tmp_path, name: str, ra_um: float) -> str:
    x_um = np.arange(11201) * 0.5
    z = (ra_um / RA_PER_AMPLITUDE) * np.sin(2 * np.pi * x_um / 50.0)
    path = tmp_path / f"{name}.csv"
    write_csv(path, Profile(z, 0.5))
    return str(path)


def _check_json(tmp_path, capsys, ras=(0.40, 0.45)) -> dict:
    spec = tmp_path / "s.yaml"
    spec.write_text(SPEC, encoding="utf-8")
    profiles = [_profile(tmp_path, f"p{i}", ra) for i, ra in enumerate(ras)]
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
