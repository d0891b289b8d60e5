"""Text in specification, plan and instrument files means what its author wrote.

YAML 1.1 (the version PyYAML implements) resolves unquoted scalars by pattern: ``0123`` is an
octal integer (83), ``0x1F`` hexadecimal, ``1:30`` sexagesimal (90), ``1.10`` a float (1.1),
``yes``/``no``/``on``/``off`` booleans (YAML 1.1 type repository, yaml.org/type/int.html,
float.html, bool.html). Each check below first confirms with PyYAML's own ``safe_load`` that the
text really is rewritten, then that speccheck keeps it as written, or refuses it where a number
or a yes/no belongs. Control characters (Unicode category Cc), lone surrogates (U+D800..U+DFFF,
not Unicode scalar values: Unicode 15, 3.9 D76) and bidirectional controls (Unicode UAX #9,
2.1-2.2) are refused at file:line:col.
"""

from __future__ import annotations

import textwrap

import pytest
import yaml
from _contract import assert_refused, fingerprint, run_speccheck

from speccheck.errors import SpecError
from speccheck.lot.plan import load_plan
from speccheck.spec import check_spec, load_spec
from speccheck.spec._yaml import MAX_DEPTH


def spec_text(part: str, extra: str = "") -> str:
    return (
        "spec_version: 1\n"
        f"part:\n{textwrap.indent(textwrap.dedent(part), '  ')}"
        "requirements:\n  - Ra 0.8\n" + textwrap.dedent(extra)
    )


def write(tmp_path, text: str, name: str = "spec.yaml"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def first_error(path) -> str:
    with pytest.raises(SpecError) as info:
        load_spec(path)
    return info.value.one_line()


@pytest.mark.parametrize(
    "field, written, yaml_reads",
    [
        ("number", "0123", 83),  # octal
        ("number", "0x1F", 31),  # hexadecimal
        ("number", "1_000", 1000),  # digit separators
        ("revision", "010", 8),
        ("revision", "1.10", 1.1),
        ("revision", "1.0e+3", 1000.0),
        ("surface", "1:30", 90),  # sexagesimal
        ("surface", "no", False),
        ("supplier", "on", True),
        ("drawing", "2026-12-04", None),  # a date: PyYAML builds a datetime.date
    ],
)
def test_part_fields_keep_the_text_written(tmp_path, field, written, yaml_reads):
    fields = {"number": "KFP-2041", "revision": "D", "surface": "seal seat", field: written}
    part = "".join(f"{k}: {v}\n" for k, v in fields.items())
    loaded = yaml.safe_load(f"v: {written}")["v"]
    assert loaded != written and (yaml_reads is None or loaded == yaml_reads)
    spec = load_spec(write(tmp_path, spec_text(part)))
    assert spec.part[field] == written


def test_free_text_notes_and_the_record_keep_the_text(tmp_path, run_cli):
    import json

    import numpy as np

    from speccheck.profile import Profile
    from speccheck.readers import write_csv

    part = "number: 0123\nrevision: 010\nsurface: seal seat\n"
    spec = write(tmp_path, spec_text(part, "measurement: {cutoff: 0.8mm}\nnotes: 1:30\n"))
    assert load_spec(spec).notes == "1:30"
    x_um = np.arange(12000) * 0.5
    profile = tmp_path / "p.csv"
    write_csv(profile, Profile(z_um=0.5 * np.sin(2 * np.pi * x_um / 100.0), dx_um=0.5))
    status, out, err = run_cli("check", spec, profile, "--json", "-")
    assert status in (0, 1, 3), err
    record = json.loads(out)["spec"]
    assert (record["part_number"], record["revision"]) == ("0123", "010")


@pytest.mark.parametrize(
    "extra, line_col, key",
    [
        ("measurement:\n  sections: true\n", "9:13", "measurement.sections"),
        ("measurement:\n  sections: yes\n", "9:13", "measurement.sections"),
        ("measurement:\n  cutoff: off\n", "9:11", "measurement.cutoff"),
    ],
)
def test_a_boolean_is_never_a_count_or_a_length(tmp_path, extra, line_col, key):
    path = write(tmp_path, spec_text("number: A\nrevision: B\nsurface: s\n", extra))
    message = first_error(path)
    assert message.startswith(f"{path}:{line_col}: {key}: ")
    assert "is a yes/no value, not a number; write a number" in message


def test_a_boolean_count_in_a_requirement_and_the_version(tmp_path):
    text = (
        spec_text("number: A\nrevision: B\nsurface: s\n")
        .replace("spec_version: 1", "spec_version: true")
        .replace("  - Ra 0.8\n", "  - Ra 0.8\n  - {parameter: Rz, upper: 4um, sections: true}\n")
    )
    path = write(tmp_path, text)
    errors = [e.one_line() for e in check_spec(path).errors]
    assert errors == [
        f"{path}:1:15: spec_version: true is a yes/no value, not a number; write a number",
        f"{path}:8:43: requirements[1].sections: true is a yes/no value, not a number; "
        "write a number",
    ]


def test_a_number_is_never_a_yes_no_value(tmp_path):
    path = write(
        tmp_path, spec_text("number: A\nrevision: B\nsurface: s\n", "measurement:\n  periodic: 1\n")
    )
    assert first_error(path) == (
        f"{path}:9:13: measurement.periodic: 1 is not true or false; write true, false or auto"
    )


def test_plan_lot_identity_kept_and_counts_refused(tmp_path):
    (tmp_path / "spec.yaml").write_text(spec_text("number: 0123\nrevision: B\nsurface: s\n"))
    plan = """\
        plan_version: 1
        lot:
          id: 0777
          supplier: Ardent Precision Grinding
          part: 0123
          size: 20
          received: 2026-11-28
        surfaces:
          seal-seat:
            spec: spec.yaml
            measurements: 1
        sampling:
          {sampling}
        """
    good = write(
        tmp_path,
        textwrap.dedent(plan).format(sampling="inspection_level: II\n  acceptance_number: 0"),
        "plan.yaml",
    )
    loaded = load_plan(good)
    assert (loaded.lot["id"], loaded.lot["part"]) == ("0777", "0123")
    bad = write(
        tmp_path,
        textwrap.dedent(plan).format(sampling="inspection_level: II\n  acceptance_number: no"),
        "bad.yaml",
    )
    with pytest.raises(SpecError) as info:
        load_plan(bad)
    assert info.value.one_line() == (
        f"{bad}:14:22: sampling.acceptance_number: no is a yes/no value, not a number; "
        "write a number"
    )


# --- characters that do not say what they show -------------------------------------------------


@pytest.mark.parametrize(
    "written, line_col, name",
    [
        ("KFP-\x002041", "3:15", "control character U+0000"),
        ("KFP-\x1b[2J", "3:15", "control character U+001B"),
        ("KFP-\x7f", "3:15", "control character U+007F"),
        ("KFP-\u202e1402", "3:15", "bidirectional control character U+202E"),
    ],
)
def test_raw_control_characters_are_refused_at_their_place(
    tmp_path, run_cli, written, line_col, name
):
    path = tmp_path / "spec.yaml"
    path.write_bytes(spec_text(f"number: {written}\nrevision: B\nsurface: s\n").encode())
    before = fingerprint([path])
    status, _, err = run_cli("explain", path)
    line = assert_refused(status, err, [f"{path}:{line_col}:"])
    assert f"{name} is not allowed" in line
    assert fingerprint([path]) == before


@pytest.mark.parametrize(
    "escaped, name",
    [
        ('"KFP-\\x002041"', "control character U+0000"),
        ('"KFP-\\ud8002041"', "lone surrogate U+D800"),
        ('"KFP-\\u202E2041"', "bidirectional control character U+202E"),
    ],
)
def test_escaped_control_characters_are_refused_at_the_escape(tmp_path, run_cli, escaped, name):
    path = write(tmp_path, spec_text(f"number: {escaped}\nrevision: B\nsurface: s\n"))
    status, _, err = run_cli("explain", path)
    line = assert_refused(status, err, [f"{path}:3:16:"])  # the backslash of the escape
    assert f"{name} is not allowed (written as an escape)" in line


def test_a_control_character_in_a_key_is_refused(tmp_path, run_cli):
    path = write(tmp_path, spec_text("number: A\nrevision: B\nsurface: s\n", '"no\\ttes\\a": x\n'))
    status, _, err = run_cli("explain", path)
    assert "control character U+0007" in assert_refused(status, err, [f"{path}:8:1:"])


def test_a_utf8_encoded_surrogate_is_named_with_line_and_column(tmp_path, run_cli):
    path = tmp_path / "spec.yaml"
    text = spec_text("number: KFP-X\nrevision: B\nsurface: s\n").encode()
    path.write_bytes(text.replace(b"KFP-X", b"KFP-\xed\xa0\x80"))
    assert bytes([0xED, 0xA0, 0x80]).decode("utf-8", errors="surrogatepass") == "\ud800"
    status, _, err = run_cli("check", path, path)
    line = assert_refused(status, err, [f"{path}:3:15:"])
    assert "a lone surrogate (U+D800..U+DFFF) encoded as UTF-8" in line


def test_a_byte_that_is_not_utf8_is_named_with_line_and_column(tmp_path, run_cli):
    path = tmp_path / "spec.yaml"
    path.write_bytes(spec_text("number: Sch\xf6n\nrevision: B\nsurface: s\n").encode("latin-1"))
    status, _, err = run_cli("explain", path)
    assert "byte 0xF6 is not UTF-8 text" in assert_refused(status, err, [f"{path}:3:14:"])


# --- nesting budget ----------------------------------------------------------------------------


def test_deep_nesting_is_refused_without_a_traceback(tmp_path):
    path = write(tmp_path, "notes: " + "[" * 5000 + "]" * 5000 + "\n")
    status, out, err = run_speccheck(["explain", path])
    line = assert_refused(status, err, [f"{path}:1:"])
    assert f"nested deeper than {MAX_DEPTH} levels" in line


def test_an_alias_inside_its_own_anchor_is_refused(tmp_path, run_cli):
    path = write(tmp_path, spec_text("number: A\nrevision: B\nsurface: s\n", "notes: &a [*a]\n"))
    status, _, err = run_cli("explain", path)
    line = assert_refused(status, err, [f"{path}:8:8:"])
    assert "nested deeper than" in line and "alias inside itself" in line
