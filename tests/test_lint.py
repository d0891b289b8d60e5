"""`speccheck lint`: exact findings, exit statuses, and every example specification passing."""

from __future__ import annotations

import textwrap
from pathlib import Path

import pytest

from speccheck.cli.main import main
from speccheck.spec.lint import lint_file

EXAMPLES = sorted((Path(__file__).resolve().parent.parent / "rules_examples").glob("*.yaml"))

HEAD = """\
spec_version: 1
part:
  number: KFP-1187
  revision: A
  surface: gasket face
"""


def write(tmp_path, body: str, name: str = "spec.yaml") -> str:
    p = tmp_path / name
    p.write_text(HEAD + textwrap.dedent(body), encoding="utf-8")
    return str(p)


def test_there_are_examples():
    assert len(EXAMPLES) >= 5


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_every_example_lints_clean(path, capsys):
    assert main(["lint", str(path)]) == 0
    out = capsys.readouterr().out.splitlines()
    assert out[-1].startswith(f"{path}: ok")
    assert not [
        line for line in out if ": warning: " not in line and not line.startswith(f"{path}: ok")
    ]


def test_malformed_spec_lists_every_error_and_exits_2(tmp_path, capsys):
    path = write(
        tmp_path,
        """\
        requirements:
          - "Rq 0.8 µm"
          - "U Ra 0.2; L Ra 0.4"
          - parameter: Rz
            upper: 4
          - "Rz 6.3"
          - "Rz0 6.3"
        """,
    )
    assert main(["lint", path]) == 2
    assert capsys.readouterr().out.splitlines() == [
        f"{path}:7:13: unexpected 'µm' after the limit (the limit is in µm; write the number only)",
        f"{path}:8:5: the lower limit of Ra (0.4 µm) must be less than the upper limit (0.2 µm)",
        f"{path}:10:5: upper limit of Rz 4 has no unit (write e.g. '4um')",
        f"{path}:12:8: the section count of 'Rz0' must be at least 1",
    ]


def test_schema_errors_are_all_listed(tmp_path, capsys):
    path = write(tmp_path, "requirements: []\nmeasurement:\n  sections: 0\nunits: metric\n")
    assert main(["lint", path]) == 2
    assert capsys.readouterr().out.splitlines() == [
        f"{path}:6:1: requirements: List should have at least 1 item after validation, not 0",
        f"{path}:8:3: measurement.sections: Input should be greater than or equal to 1",
        f"{path}:9:1: units: Input should be 'um' or 'uin'",
    ]


def test_iso21920_without_rule_is_a_lint_error(tmp_path, capsys):
    path = write(tmp_path, "convention: iso21920\nrequirements:\n  - Ra 0.8\n")
    assert main(["lint", path]) == 2
    assert capsys.readouterr().out.splitlines() == [
        f"{path}:8:5: convention iso21920 has no default acceptance rule: add 'max' or '16%' to "
        "the "
        "callout (ISO 21920-1 has both a max rule and a 16 % rule)"
    ]


def test_cutoff_outside_the_standard_series(tmp_path):
    # Standard λc series 0.08, 0.25, 0.8, 2.5, 8 mm: ISO 4288:1996 Tables 1-3, ISO 3274:1996 Table 1
    path = write(
        tmp_path,
        "measurement:\n  cutoff: 0.5mm\n  ls: 2.5um\nrequirements:\n  - Ra 0.8\n  - Rz 4\n",
    )
    assert [str(f) for f in lint_file(path)] == [
        f"{path}:7:3: cut-off λc 0.5 mm is not in the standard series (0.08, 0.25, 0.8, 2.5, 8 mm; "
        "ISO 4288:1996, ISO 3274:1996 Table 1)"
    ]
    band = write(tmp_path, "requirements:\n  - -1/Ra 0.8\n", "band.yaml")
    assert [f.line for f in lint_file(band) if f.severity == "error"] == [7]


def test_unusual_ls_lc_pair_is_a_warning(tmp_path, capsys):
    # ISO 3274:1996 Table 1: λc 0.8 mm goes with λs 2.5 µm; 8 µm is the λc 2.5 mm value
    path = write(tmp_path, "requirements:\n  - 0.008-0.8/Ra 0.8\n")
    assert main(["lint", path]) == 0
    assert capsys.readouterr().out.splitlines() == [
        f"{path}:7:5: warning: λs 8 µm with λc 0.8 mm is not the ISO 3274:1996 Table 1 pair "
        "(λs 2.5 µm); results differ from a standard measurement",
        f"{path}: ok, 1 warning",
    ]


@pytest.mark.parametrize("callout", ["Rsk 0.5", "Rku 4", "Rt 6", "Rmax 4", "Rz1max 6"])
def test_single_point_sensitive_parameter_alone_warns(tmp_path, callout):
    path = write(
        tmp_path, f"measurement: {{cutoff: 0.8mm}}\nrequirements:\n  - Ra 0.8\n  - {callout}\n"
    )
    findings = lint_file(path)
    assert [(f.line, f.col, f.severity) for f in findings] == [(9, 5, "warning")]
    name = callout.split()[0]
    # the wording is speccheck.diagnostics.sensitive_parameter_advice's
    assert f"controlled only through {name}," in findings[0].message
    assert "consider section-averaged" in findings[0].message
    assert "Rk family" in findings[0].message


@pytest.mark.parametrize("stable", ["Rpk 0.3", "Rp 2", "Rvm 2"])
def test_no_warning_when_a_stable_parameter_is_also_controlled(tmp_path, stable):
    path = write(
        tmp_path, f"measurement: {{cutoff: 0.8mm}}\nrequirements:\n  - Rsk 0.5\n  - {stable}\n"
    )
    assert lint_file(path) == []


def test_guarded_rule_without_uncertainty_is_the_error_check_gives(tmp_path):
    path = write(
        tmp_path,
        "decision_rule: guarded-acceptance\nrequirements:\n  - Ra 0.8\nuncertainty:\n  Rq: "
        "0.02um\n",
    )
    assert [str(f) for f in lint_file(path)] == [
        f"{path}:8:5: Ra 0.8: decision rule guarded-acceptance needs the expanded uncertainty U "
        "of Ra (add it under 'uncertainty')",
    ]


def test_unused_uncertainty_warns(tmp_path):
    path = write(tmp_path, "requirements:\n  - Ra 0.8\nuncertainty:\n  Rq: 0.02um\n")
    assert [str(f) for f in lint_file(path)] == [
        f"{path}:9:3: warning: uncertainty for Rq but no requirement on Rq",
    ]


def test_several_files_exit_2_if_any_fails(tmp_path, capsys):
    good = write(tmp_path, "requirements:\n  - Ra 0.8\n", "good.yaml")
    bad = write(tmp_path, "requirements:\n  - Ra 0.8\nrequirements:\n  - Ra 0.4\n", "bad.yaml")
    assert main(["lint", good, bad]) == 2
    assert capsys.readouterr().out.splitlines() == [
        f"{good}: ok",
        f"{bad}:8:1: duplicate key 'requirements'",
    ]


def test_unreadable_file(tmp_path, capsys):
    missing = tmp_path / "missing.yaml"
    assert main(["lint", str(missing)]) == 2
    assert capsys.readouterr().out.splitlines() == [f"{missing}: file not found"]
