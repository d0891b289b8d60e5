"""Conventions of the command-line ecosystem: ``--quiet``, ``--color`` and ``NO_COLOR``.

NO_COLOR: https://no-color.org ("when present and not an empty string, prevents the addition
of ANSI color"). Profiles: sines of known Ra (closed form, see tests/test_cli_check.py).
"""

from __future__ import annotations

import sys

import pytest
from test_cli_check import profile_file

from speccheck.cli.main import main
from speccheck.cli.options import wants_color

SPEC = """\
spec_version: 1
part: {number: KFP-2041, revision: C, surface: seal seat}
measurement: {ls: none}
requirements:
  - "Ra 0.8"
"""
ESC = "\x1b["


@pytest.fixture
def inputs(tmp_path):
    spec = tmp_path / "s.yaml"
    spec.write_text(SPEC, encoding="utf-8")
    return str(spec), profile_file(tmp_path, "a", 0.4)


def test_quiet_leaves_only_the_verdict_line(inputs, capsys, tmp_path):
    db = tmp_path / "r.sqlite"
    status = main(["check", *inputs, "--quiet", "--record", "--db", str(db)])
    out = capsys.readouterr().out
    assert status == 0
    assert out == "Result: CONFORMING\n"  # no table, caution or "Recorded as entry" line


def test_color_always_and_never(inputs, capsys):
    main(["check", *inputs, "--color", "always"])
    assert ESC in capsys.readouterr().out
    main(["check", *inputs, "--color", "never"])
    assert ESC not in capsys.readouterr().out
    main(["check", *inputs])  # auto, and the captured output is not a terminal
    assert ESC not in capsys.readouterr().out


def test_no_color_is_honoured_on_a_terminal(monkeypatch):
    monkeypatch.setattr(sys.stdout, "isatty", lambda: True)
    monkeypatch.delenv("NO_COLOR", raising=False)
    assert wants_color("auto")
    monkeypatch.setenv("NO_COLOR", "1")
    assert not wants_color("auto")
    monkeypatch.setenv("NO_COLOR", "")  # empty: not set, per no-color.org
    assert wants_color("auto")
    assert wants_color("always") and not wants_color("never")
