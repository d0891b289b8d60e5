"""`speccheck explain` and `speccheck schema`: output, exit status, errors as one line."""

from __future__ import annotations

import json
import textwrap
from pathlib import Path

import pytest
import yaml

from speccheck.cli.main import main
from speccheck.spec import load_spec
from speccheck.spec.explain import explain_sentence
from speccheck.spec.models import SpecFile

EXAMPLES = sorted((Path(__file__).resolve().parent.parent / "rules_examples").glob("*.yaml"))

HEAD = """\
spec_version: 1
part:
  number: KFP-2041
  revision: D
  surface: seal seat
  supplier: Ardent Precision Grinding
"""


def write(tmp_path, body: str) -> str:
    p = tmp_path / "spec.yaml"
    p.write_text(HEAD + textwrap.dedent(body), encoding="utf-8")
    return str(p)


def test_explain_prints_each_setting_with_its_source(tmp_path, capsys):
    path = write(tmp_path, "requirements:\n  - Ra 0.8\n  - U Rz 4; L Rz 1.6\n")
    assert main(["explain", path]) == 0
    out = capsys.readouterr().out
    # ISO 4288:1996 Table 1 (Ra > 0.1-2 µm -> 0.8 mm), Table 2 (Rz > 0.5-10 µm -> 0.8 mm);
    # ISO 3274:1996 Table 1 (λc 0.8 mm -> λs 2.5 µm); ISO 1302 defaults (domain notes 5 [pub]).
    expected_block = f"""\
[1] Ra 0.8    ({path}:8:5)
    limit:      Ra ≤ 0.8 µm (upper limit)
    rule:       16 % rule — ISO 1302 default
    cut-off:    λc 0.8 mm — ISO 4288:1996 Table 1, Ra > 0.1 – 2 µm
    length:     5 sections of 0.8 mm = evaluation length 4 mm — ISO 4288:1996 4.4 default
    value:      mean of 5 section values (ISO 4287:1997) — convention iso1302 or asme
    trace:      at least 5.6 mm (4 mm evaluated, 0.8 mm run-in and run-out each) — speccheck
    short-wave: λs 2.5 µm — ISO 3274:1996 Table 1
    filter:     Gaussian filter (ISO 16610-21) — ISO 1302 default
    form:       least-squares line removed first — speccheck default
    decision:   simple acceptance (ILAC G8), no guard band; U not given
"""
    assert expected_block in out
    assert "    limit:      1.6 µm ≤ Rz ≤ 4 µm (lower and upper limit)\n" in out
    assert out.startswith(
        "Part KFP-2041 rev. D, surface: seal seat\nSupplier: Ardent Precision Grinding\n"
    )
    assert "The governing drawing, the contract and the applicable standards take precedence" in out
    # ISO 4288:1996 5.2: the step procedure is sequential
    assert (
        "16 % rule taken as: the step procedure (ISO 4288 5.2) — decided at the first decisive "
        "step; values measured after it are listed but cannot reverse it\n" in out
    )


def test_explain_states_a_fixed_sample(tmp_path, capsys):
    path = write(tmp_path, "requirements:\n  - Ra 0.8\nsampling: fixed\n")
    assert main(["explain", path]) == 0
    out = capsys.readouterr().out
    assert "16 % rule taken as: a fixed sample (ISO 4288 5.2) — at most 16 % of all values" in out
    path = write(tmp_path, "requirements:\n  - Ra max 0.8\n")
    assert main(["explain", path]) == 0
    assert "16 % rule taken as" not in capsys.readouterr().out  # no 16 % requirement


def test_explain_sentence(tmp_path):
    path = write(
        tmp_path,
        "convention: asme\nunits: um\ndecision_rule: guarded-rejection\nuncertainty: "
        "{Ra: 0.05um}\nrequirements:\n  - Ra 0.4\n",
    )
    (req,) = load_spec(path).requirements
    assert explain_sentence(req) == (
        "Ra ≤ 0.4 µm (upper limit), max rule (no measured value may exceed) — ASME Y14.36: a "
        "single "
        "value is a maximum, λc 0.8 mm — ISO 4288:1996 Table 1, Ra > 0.1 – 2 µm, 5 sections of "
        "0.8 mm "
        "= evaluation length 4 mm — ISO 4288:1996 4.4 default, mean of 5 section values "
        "(ISO 4287:1997) — convention iso1302 or asme, at least 5.6 mm (4 mm evaluated, 0.8 mm "
        "run-in and run-out each) — speccheck, λs 2.5 µm — ISO 3274:1996 Table 1, "
        "Gaussian filter (ISO 16610-21) — ASME B46.1 default, least-squares line removed first — "
        "speccheck default, decision rule: guarded rejection (ISO 14253-1): exceeding only if "
        "outside the limit by more than U; U = 0.05 µm (k = 2) — stated, not estimated"
    )


def test_explain_bad_spec_is_one_line_exit_2(tmp_path, capsys):
    path = write(tmp_path, "requirements:\n  - Ra 0.8\n  - Rx 0.8\n")
    assert main(["explain", path]) == 2
    captured = capsys.readouterr()
    assert captured.out == ""
    assert captured.err == f"speccheck: error: {path}:9:5: unknown parameter 'Rx'\n"


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_explain_every_example(path, capsys):
    assert main(["explain", str(path)]) == 0
    assert len(load_spec(path).requirements) == capsys.readouterr().out.count("    limit: ")


def test_schema_is_json_schema_matching_the_models(capsys):
    assert main(["schema"]) == 0
    schema = json.loads(capsys.readouterr().out)
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    assert schema["required"] == ["spec_version", "part", "requirements"]
    assert schema["additionalProperties"] is False
    assert set(schema["properties"]) == set(SpecFile.model_fields)


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_schema_validates_the_examples(path, capsys):
    main(["schema"])
    schema = json.loads(capsys.readouterr().out)
    data = yaml.safe_load(path.read_text(encoding="utf-8"))
    jsonschema = pytest.importorskip("jsonschema")  # not a dependency: checked where installed
    jsonschema.Draft202012Validator.check_schema(schema)
    jsonschema.Draft202012Validator(schema).validate(data)


def test_schema_rejects_what_the_loader_rejects(capsys):
    main(["schema"])
    schema = json.loads(capsys.readouterr().out)
    jsonschema = pytest.importorskip("jsonschema")
    bad = {
        "spec_version": 1,
        "part": {"number": "A", "revision": "B", "surface": "C"},
        "requirements": ["Ra 0.8"],
        "units": "x",
    }
    assert not jsonschema.Draft202012Validator(schema).is_valid(bad)


def test_iso21920_cites_its_own_rules_standard(tmp_path, capsys):
    """ISO 21920-3:2021 replaced ISO 4288:1996 for profile specification operators, rules of
    comparison included (from memory); an ISO 21920 spec must not cite ISO 4288 for them."""
    import numpy as np

    from speccheck.profile import Profile
    from speccheck.readers import write_csv

    spec = tmp_path / "s.yaml"
    spec.write_text(
        "spec_version: 1\nconvention: iso21920\n"
        "part: {number: KFP-2041, revision: C, surface: seal seat}\n"
        'requirements:\n  - "Ra 16% 0.8"\n',
        encoding="utf-8",
    )
    prof = tmp_path / "p.csv"
    x = np.arange(11200) * 0.5
    write_csv(prof, Profile(0.9 * np.sin(2 * np.pi * x / 80.0), 0.5))
    assert main(["explain", str(spec)]) == 0
    out = capsys.readouterr().out
    assert "step procedure (ISO 21920-3)" in out and "ISO 21920-3 default" in out
    assert main(["check", str(spec), str(prof)]) == 3
    out = capsys.readouterr().out
    assert "16 % rule (ISO 21920-3, step procedure)" in out and "ISO 4288" not in out
