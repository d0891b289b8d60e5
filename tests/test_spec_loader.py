"""Specification files: safe YAML, positions in errors, pydantic validation, resolved defaults."""

from __future__ import annotations

import hashlib
import textwrap

import pytest
import yaml

from speccheck.errors import SpecError
from speccheck.spec import check_spec, load_spec

HEAD = """\
spec_version: 1
part:
  number: KFP-2041
  revision: D
  surface: seal seat
"""


def write(tmp_path, body: str, name: str = "spec.yaml") -> str:
    p = tmp_path / name
    p.write_text(HEAD + textwrap.dedent(body), encoding="utf-8")
    return str(p)


def one_requirement(tmp_path, callout: str, extra: str = ""):
    path = write(tmp_path, f'requirements:\n  - "{callout}"\n{textwrap.dedent(extra)}')
    (req,) = load_spec(path).requirements
    return req


def error_of(path: str) -> str:
    with pytest.raises(SpecError) as info:
        load_spec(path)
    return info.value.one_line()


# --- safe YAML ---------------------------------------------------------------------------------


def test_python_tag_is_refused_and_nothing_runs(tmp_path):
    marker = tmp_path / "ran"
    payload = f'!!python/object/apply:os.system ["touch {marker}"]'
    path = write(tmp_path, f"notes: {payload}\nrequirements:\n  - Ra 0.8\n")
    assert error_of(path) == (
        f"{path}:6:8: tag '!!python/object/apply:os.system' is not allowed in a specification file"
    )
    assert not marker.exists()
    # The same text through PyYAML's unsafe loader does run the command: the payload is real.
    yaml.unsafe_load(f"notes: {payload}")
    assert marker.exists()


@pytest.mark.parametrize(
    "value,tag",
    [
        ("!!binary aGVsbG8=", "!!binary"),
        ("!custom 3", "!custom"),
        ("!!set {a: null}", "!!set"),
        ("!!python/name:os.system", "!!python/name:os.system"),
    ],
)
def test_other_tags_are_refused(tmp_path, value, tag):
    path = write(tmp_path, f"notes: {value}\nrequirements:\n  - Ra 0.8\n")
    assert error_of(path) == f"{path}:6:8: tag '{tag}' is not allowed in a specification file"


def test_duplicate_key(tmp_path):
    path = write(tmp_path, "requirements:\n  - Ra 0.8\nconvention: asme\nconvention: iso1302\n")
    assert error_of(path) == f"{path}:9:1: duplicate key 'convention'"


def test_duplicate_key_inside_a_requirement(tmp_path):
    path = write(tmp_path, "requirements:\n  - parameter: Ra\n    upper: 0.8um\n    upper: 0.4um\n")
    assert error_of(path) == f"{path}:9:5: duplicate key 'upper'"


def test_yaml_syntax_error_has_line_and_col(tmp_path):
    path = write(tmp_path, "requirements:\n  - [Ra 0.8\n")
    assert error_of(path).startswith(f"{path}:8:1: YAML syntax: ")


def test_billion_laughs_aliases_are_bounded(tmp_path):
    lines = ["a0: &a0 [x, x, x, x, x, x, x, x, x, x]"]
    for i in range(1, 8):
        lines.append(f"a{i}: &a{i} [" + ", ".join([f"*a{i - 1}"] * 10) + "]")
    p = tmp_path / "laughs.yaml"
    p.write_text("\n".join(lines) + "\n")
    assert "more than 100000 values" in error_of(str(p))


def test_empty_file_and_not_a_mapping(tmp_path):
    empty = tmp_path / "empty.yaml"
    empty.write_text("")
    assert (
        error_of(str(empty))
        == f"{empty}: the file is empty (expected a mapping starting with 'spec_version: 1')"
    )
    lst = tmp_path / "list.yaml"
    lst.write_text("- Ra 0.8\n")
    assert (
        error_of(str(lst))
        == f"{lst}:1:1: a specification file is a mapping starting with 'spec_version: 1'"
    )


def test_missing_file(tmp_path):
    p = tmp_path / "nope.yaml"
    assert error_of(str(p)) == f"{p}: file not found"


# --- schema errors with file:line:col ----------------------------------------------------------


def test_unknown_key_points_at_the_key(tmp_path):
    path = write(
        tmp_path, "requirements:\n  - parameter: Ra\n    upper: 0.8um\n    tolerance: 0.1um\n"
    )
    assert error_of(path) == (
        f"{path}:9:5: unknown key 'tolerance' in requirements[0] (allowed: parameter, "
        "upper, lower, rule, cutoff, ls, units, lf, sections, filter, form)"
    )


def test_whole_list_of_validation_errors(tmp_path):
    path = write(
        tmp_path,
        """\
        convention: iso4287
        measurement:
          sections: 0
          filtre: gaussian
        requirements:
          - Ra 0.8
          - 0.8
          - parameter: Rz
            upper: 4um
            rule: maximum
        diagnostics:
          isolated_features: ignore
        """,
    )
    (tmp_path / "spec.yaml").write_text(
        (tmp_path / "spec.yaml").read_text().replace("  number: KFP-2041\n", "")
    )
    result = check_spec(path)
    assert result.spec is None
    assert [e.one_line() for e in result.errors] == [
        f"{path}:2:1: missing key 'number' in part",
        f"{path}:5:1: convention: Input should be 'iso1302', 'iso21920' or 'asme'",
        f"{path}:7:3: measurement.sections: Input should be greater than or equal to 1",
        f"{path}:8:3: unknown key 'filtre' in measurement (allowed: cutoff, ls, "
        "sections, "
        "filter, form, value_per, periodic, ends)",
        f"{path}:11:5: requirements[1]: a requirement is callout text such as 'Ra 0.8' "
        "or a "
        "mapping with 'parameter'",
        f"{path}:14:5: requirements[2].rule: Input should be '16%' or 'max'",
        f"{path}:16:3: diagnostics.isolated_features: Input should be 'report' or 'undecided'",
    ]


def test_spec_version_is_required(tmp_path):
    p = tmp_path / "s.yaml"
    p.write_text("part: {number: A, revision: B, surface: C}\nrequirements: [Ra 0.8]\n")
    assert error_of(str(p)) == f"{p}:1:1: missing key 'spec_version'"


# --- resolution errors, all collected --------------------------------------------------------


def test_resolution_errors_are_all_collected_with_positions(tmp_path):
    path = write(
        tmp_path,
        """\
        requirements:
          - "Rx 0.8"
          - parameter: Ra
            upper: 0.8
          - "U Ra 0.2; L Ra 0.4"
          - parameter: Rz
            upper: 0um
          - parameter: Rz
          - "Rmr(0.5) 70"
          - "Ra 0.8"
        measurement:
          ls: 2.5
        """,
    )
    result = check_spec(path)
    assert [e.one_line() for e in result.errors] == [
        f"{path}:7:6: unknown parameter 'Rx'",
        f"{path}:9:5: upper limit of Ra 0.8 has no unit (write e.g. '0.8um')",
        f"{path}:10:5: the lower limit of Ra (0.4 µm) must be less than the upper limit (0.2 µm)",
        f"{path}:12:5: the upper limit of Rz must be greater than 0",
        f"{path}:13:5: requirement on Rz needs 'upper', 'lower' or both",
        f"{path}:14:5: no default cut-off can be read from a limit of Rmr(0.5): state "
        "measurement.cutoff, 'cutoff' in the requirement, or a band such as '-0.8/'",
        f"{path}:17:3: measurement.ls 2.5 has no unit (write e.g. '2.5um')",
    ]


def test_callout_column_maps_to_the_yaml_column(tmp_path):
    # plain scalar: the callout starts at col 5; quoted: at col 6
    plain = write(tmp_path, "requirements:\n  - Ra 0.8\n  - Rz mux 6.3\n", "plain.yaml")
    assert error_of(plain) == f"{plain}:8:8: expected the limit of Rz (a number), found 'mux'"
    quoted = write(tmp_path, "requirements:\n  - 'Rz mux 6.3'\n", "quoted.yaml")
    assert error_of(quoted) == f"{quoted}:7:9: expected the limit of Rz (a number), found 'mux'"


def test_callout_on_several_lines_names_the_character(tmp_path):
    path = write(tmp_path, "requirements:\n  - >-\n    U Rz 4;\n    L Rz x\n")
    assert error_of(path) == (
        f"{path}:7:5: expected the limit of Rz (a number), found 'x' (character 14 of the callout)"
    )


def test_iso21920_needs_an_explicit_rule(tmp_path):
    path = write(
        tmp_path,
        "convention: iso21920\nrequirements:\n  - Ra 0.8\n  - parameter: Rz\n    upper: 4um\n",
    )
    result = check_spec(path)
    assert [e.one_line() for e in result.errors] == [
        f"{path}:8:5: convention iso21920 has no default acceptance rule: add 'max' or "
        "'16%' to "
        "the callout (ISO 21920-1 has both a max rule and a 16 % rule)",
        f"{path}:9:5: convention iso21920 has no default acceptance rule: add 'rule: "
        "max' or "
        "'rule: 16%' (ISO 21920-1 has both a max rule and a 16 % rule)",
    ]


def test_iso21920_with_stated_rules(tmp_path):
    path = write(
        tmp_path,
        "convention: iso21920\nrequirements:\n  - Ra max 0.8\n  - parameter: Rz\n    upper: 4um\n "
        "   rule: 16%\n",
    )
    a, b = load_spec(path).requirements
    assert (a.rule, a.rule_source) == ("max", "'max' in the callout")
    assert (b.rule, b.rule_source) == ("16%", "stated in the spec")
    # ISO 21920-3:2021 default table (domain notes 1 [pub, one source]): Rz > 0.8–16 µm -> 0.8 mm
    assert (b.cutoff_table, b.lambda_c_mm) == ("iso21920-3", 0.8)
    # ISO 21920-3:2021: evaluation length le = 5 section lengths by default (domain notes 1 [pub])
    assert (b.sections, b.sections_source) == (5, "ISO 21920-3:2021 default (le = 5 lsc)")


# --- defaults and their sources ----------------------------------------------------------------


def test_iso1302_defaults(tmp_path):
    req = one_requirement(tmp_path, "Ra 0.8")
    assert (req.parameter, req.upper, req.lower, req.unit, req.sections) == (
        "Ra",
        0.8,
        None,
        "µm",
        5,
    )
    # ISO 1302:2002 defaults: 16 % rule, Gaussian filter, 5 sampling lengths (domain notes 5 [pub])
    assert (req.rule, req.rule_source) == ("16%", "ISO 1302 default (16 % rule)")
    assert req.filter == "gaussian"
    # ISO 4288:1996 Table 1: Ra > 0.1-2 µm -> λc 0.8 mm; ISO 3274:1996 Table 1: λc 0.8 -> λs 2.5 µm
    assert (req.lambda_c_mm, req.lambda_c_source) == (0.8, "ISO 4288:1996 Table 1, Ra > 0.1 – 2 µm")
    assert (req.lambda_s_um, req.lambda_s_source) == (2.5, "ISO 3274:1996 Table 1")
    assert (req.cutoff_table, req.decision_rule, req.uncertainty, req.form) == (
        "iso4288",
        "simple",
        None,
        "line",
    )
    assert req.location == "line 7, col 5"
    assert req.evaluation_length_mm == pytest.approx(4.0)


# ISO 4288:1996 Table 1 (Ra) and Table 2 (Rz): row bounds and λc. First two rows and the Ra
# column are [pub] in the domain notes, the other Rz rows from memory. A value equal to a row's
# upper bound belongs to that row ("> 0.1 – 2").
ISO4288 = [
    ("Ra", 0.006, 0.08),
    ("Ra", 0.02, 0.08),
    ("Ra", 0.021, 0.25),
    ("Ra", 0.1, 0.25),
    ("Ra", 0.11, 0.8),
    ("Ra", 2.0, 0.8),
    ("Ra", 2.1, 2.5),
    ("Ra", 10.0, 2.5),
    ("Ra", 12.5, 8.0),
    ("Ra", 80.0, 8.0),
    ("Rz", 0.1, 0.08),
    ("Rz", 0.5, 0.25),
    ("Rz", 0.6, 0.8),
    ("Rz", 10.0, 0.8),
    ("Rz", 10.1, 2.5),
    ("Rz", 50.0, 2.5),
    ("Rz", 63.0, 8.0),
    ("Rz1max", 6.3, 0.8),  # ISO 4288:1996 Table 2 column "Rz, Rz1max"
]
# ISO 3274:1996 Table 1: λc -> λs
ISO3274 = {0.08: 2.5, 0.25: 2.5, 0.8: 2.5, 2.5: 8.0, 8.0: 25.0}


@pytest.mark.parametrize("name,value,lambda_c_mm", ISO4288)
def test_default_cutoff_follows_iso4288(tmp_path, name, value, lambda_c_mm):
    req = one_requirement(tmp_path, f"{name} {value}")
    assert req.lambda_c_mm == lambda_c_mm
    assert req.lambda_c_source.startswith(
        "ISO 4288:1996 Table 1" if name == "Ra" else "ISO 4288:1996 Table 2"
    )
    assert req.lambda_s_um == ISO3274[lambda_c_mm]


def test_two_sided_reads_the_table_with_the_upper_limit(tmp_path):
    # Ra 3.2 (upper) -> 2.5 mm, although Ra 0.8 (lower) would give 0.8 mm (ISO 4288:1996 Table 1)
    req = one_requirement(tmp_path, "U Ra 3.2; L Ra 0.8")
    assert (req.upper, req.lower, req.lambda_c_mm, req.lambda_s_um) == (3.2, 0.8, 2.5, 8.0)
    lower_only = one_requirement(tmp_path, "L Ra 0.05")
    assert (lower_only.upper, lower_only.lower, lower_only.lambda_c_mm) == (None, 0.05, 0.25)


def test_band_and_measurement_precedence(tmp_path):
    req = one_requirement(
        tmp_path, "0.008-2.5/Rz3 6.3", "measurement:\n  cutoff: 0.8mm\n  ls: 2.5um\n"
    )
    assert (req.lambda_c_mm, req.lambda_c_source) == (2.5, "transmission band in the callout")
    assert (req.lambda_s_um, req.lambda_s_source) == (8.0, "transmission band in the callout")
    assert (req.sections, req.sections_source) == (3, "the name 'Rz3'")
    req = one_requirement(
        tmp_path, "Rz 6.3", "measurement:\n  cutoff: 2.5mm\n  ls: none\n  sections: 7\n"
    )
    assert (req.lambda_c_mm, req.lambda_c_source) == (2.5, "measurement.cutoff in the spec")
    assert (req.lambda_s_um, req.lambda_s_source) == (
        None,
        "measurement.ls: none in the spec (no λs filter)",
    )
    assert (req.sections, req.sections_source) == (7, "measurement.sections in the spec")
    req = one_requirement(tmp_path, "-0.25/Ra 0.05")
    assert (req.lambda_c_mm, req.lambda_s_um, req.lambda_s_source) == (
        0.25,
        2.5,
        "ISO 3274:1996 Table 1",
    )


def test_asme_single_value_is_a_maximum(tmp_path):
    req = one_requirement(tmp_path, "Ra 0.4", "convention: asme\nunits: um\n")
    assert (req.rule, req.rule_source) == ("max", "ASME Y14.36: a single value is a maximum")
    assert req.cutoff_table == "iso4288"


def test_structured_requirement_with_units(tmp_path):
    path = write(
        tmp_path,
        """\
        requirements:
          - parameter: Rvk
            upper: 2000nm
            lower: 0.5 µm
            rule: max
            cutoff: 0.8mm
            ls: 2.5um
            filter: robust
            form: arc
          - parameter: Rmr(0.5)
            lower: 60%
            cutoff: 0.8mm
        decision_rule: guarded-acceptance
        uncertainty:
          Rvk: 0.1um
          Rmr(0.5): 3%
        """,
    )
    a, b = load_spec(path).requirements
    assert a.text == 'U "robust" 0.0025-0.8/Rvk max 2; L "robust" 0.0025-0.8/Rvk max 0.5'
    assert (a.parameter, a.upper, a.lower, a.rule, a.filter, a.form) == (
        "Rvk",
        2.0,
        0.5,
        "max",
        "robust",
        "arc",
    )
    assert (a.lambda_c_source, a.lambda_s_source) == (
        "cutoff in the requirement",
        "ls in the requirement",
    )
    assert (a.decision_rule, a.uncertainty) == ("guarded-acceptance", 0.1)
    assert (b.text, b.unit, b.lower, b.uncertainty) == ("L -0.8/Rmr(0.5) 60", "%", 60.0, 3.0)


@pytest.mark.parametrize(
    "upper,message",
    [
        ("0.8", "upper limit of Ra 0.8 has no unit (write e.g. '0.8um')"),
        ("'0.8 kg'", "upper limit of Ra: unknown length unit 'kg' in '0.8 kg'"),
        ("70", "upper limit of Ra 70 has no unit (write e.g. '70um')"),
    ],
)
def test_value_without_unit(tmp_path, upper, message):
    path = write(tmp_path, f"requirements:\n  - parameter: Ra\n    upper: {upper}\n")
    assert error_of(path) == f"{path}:8:5: {message}"


def test_percent_parameter_needs_the_percent_sign(tmp_path):
    path = write(
        tmp_path, "measurement: {cutoff: 0.8mm}\nrequirements:\n  - parameter: Mr1\n    upper: 12\n"
    )
    assert error_of(path) == f"{path}:9:5: upper limit of Mr1 12 has no unit (write e.g. '12%')"
    path = write(tmp_path, "measurement: {cutoff: 0.8mm}\nrequirements:\n  - Mr1 120\n", "b.yaml")
    assert error_of(path) == f"{path}:8:5: the upper limit of Mr1 must not exceed 100 %"


def test_loaded_spec_keeps_the_file(tmp_path):
    path = write(
        tmp_path,
        "requirements:\n  - Ra 0.8\nnotes: three positions\ndiagnostics: "
        "{isolated_features: undecided}\n",
    )
    spec = load_spec(path)
    raw = (tmp_path / "spec.yaml").read_bytes()
    assert spec.raw == raw and spec.sha256 == hashlib.sha256(raw).hexdigest()
    assert spec.part == {"number": "KFP-2041", "revision": "D", "surface": "seal seat"}
    assert (spec.convention, spec.decision_rule, spec.value_per) == (
        "iso1302",
        "simple",
        "evaluation-length",
    )
    assert (spec.isolated_features, spec.notes) == ("undecided", "three positions")


def test_numeric_part_fields_become_text(tmp_path):
    p = tmp_path / "s.yaml"
    p.write_text(
        "spec_version: 1\npart: {number: 2041, revision: 3, surface: seat}\nrequirements: [Ra "
        "0.8]\n"
    )
    assert load_spec(str(p)).part == {"number": "2041", "revision": "3", "surface": "seat"}


def test_sections_in_mapping_must_agree_with_the_name(tmp_path):
    path = write(tmp_path, "requirements:\n  - parameter: Rz3\n    upper: 4um\n    sections: 5\n")
    assert error_of(path) == f"{path}:9:5: sections 5 contradicts the name 'Rz3' (3 sections)"


# ISO 21920-3:2021 default nesting index by Rz (domain notes 1 [pub, one source]): Rz ≤ 0.16 ->
# 0.08 mm; > 0.16–0.8 -> 0.25; > 0.8–16 -> 0.8; > 16–80 -> 2.5; > 80 -> 8. Bounds differ from
# ISO 4288 (Rz 10 µm is 0.8 mm in both, Rz 12 µm is 0.8 mm here but 2.5 mm in ISO 4288).
@pytest.mark.parametrize(
    "value,lambda_c_mm",
    [
        (0.16, 0.08),
        (0.2, 0.25),
        (0.8, 0.25),
        (1.0, 0.8),
        (12.0, 0.8),
        (16.0, 0.8),
        (20.0, 2.5),
        (80.0, 2.5),
        (100.0, 8.0),
    ],
)
def test_default_cutoff_follows_iso21920_3(tmp_path, value, lambda_c_mm):
    req = one_requirement(tmp_path, f"Rz max {value}", "convention: iso21920\n")
    assert (req.cutoff_table, req.lambda_c_mm) == ("iso21920-3", lambda_c_mm)
    assert req.lambda_c_source.startswith("ISO 21920-3:2021 nesting index table, Rz ")
