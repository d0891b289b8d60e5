"""The command line as a whole: every command has help, version, one-line errors."""

from __future__ import annotations

import subprocess
import sys

import pytest

from speccheck._version import __version__
from speccheck.cli.main import COMMANDS, main


def test_version(capsys):
    """--version names the numeric and signing libraries, with the versions importlib.metadata
    (the standard library's view of what is installed) reports for them."""
    from importlib import metadata

    assert main(["--version"]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert lines[0] == f"speccheck {__version__}"
    assert f"numpy {metadata.version('numpy')}" in lines
    assert f"pyHanko {metadata.version('pyHanko')}" in lines
    assert f"Python {sys.version.split()[0]}" in lines


def test_help_lists_every_command(capsys):
    assert main(["--help"]) == 0
    out = capsys.readouterr().out
    for name in COMMANDS:
        assert f"  {name} " in out


@pytest.mark.parametrize("name", sorted(COMMANDS))
def test_every_command_has_help(name, capsys):
    assert main([name, "--help"]) == 0
    out = capsys.readouterr().out
    assert out.startswith("Usage: speccheck " + name)
    # a command's own docstring, not an empty help
    body = out.split("\n\n", 2)[1].strip()
    assert len(body) > 20


def test_unknown_command_is_a_usage_error(capsys):
    assert main(["no-such-command"]) == 2
    assert "No such command" in capsys.readouterr().err


def test_python_dash_m_runs():
    out = subprocess.run(
        [sys.executable, "-m", "speccheck", "--version"], capture_output=True, text=True
    )
    assert out.returncode == 0
    assert __version__ in out.stdout


@pytest.mark.parametrize("name", sorted(COMMANDS))
def test_help_names_the_library_function_it_calls(name, capsys):
    """Each command is a thin wrapper; its help names the function it calls, and that name
    must resolve (a stale reference fails here)."""
    import importlib
    import re

    assert main([name, "--help"]) == 0
    text = " ".join(capsys.readouterr().out.split())
    refs = re.findall(r"speccheck(?:\.[A-Za-z_]+)+", text)
    assert refs, f"'speccheck {name} --help' names no library function"
    for ref in refs:
        parts = ref.split(".")
        for cut in range(len(parts), 0, -1):  # longest importable module prefix
            try:
                obj = importlib.import_module(".".join(parts[:cut]))
                break
            except ModuleNotFoundError:
                continue
        for attr in parts[cut:]:
            obj = getattr(obj, attr)
        assert callable(obj) or isinstance(obj, type), ref
