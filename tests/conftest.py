"""Shared fixtures: run the command line and capture its output."""

from __future__ import annotations

import pytest

from speccheck.cli.main import main


@pytest.fixture
def run_cli(capsys):
    """Run ``speccheck ARGS``; returns (exit status, stdout, stderr)."""

    def run(*args: str) -> tuple[int, str, str]:
        status = main([str(a) for a in args])
        captured = capsys.readouterr()
        return status, captured.out, captured.err

    return run
