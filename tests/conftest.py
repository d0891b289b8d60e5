"""Shared fixtures: run the command line and capture its output."""

from __future__ import annotations

import pytest

from speccheck.cli.main import main


@pytest.fixture(autouse=True)
def internal_errors_fail(monkeypatch):
    """Reaching the command line's "internal error" path fails the test with the traceback.

    With SPECCHECK_DEBUG set, :func:`speccheck.cli.main.main` re-raises what it would report as
    an internal error; subprocesses started by tests inherit it.
    """
    monkeypatch.setenv("SPECCHECK_DEBUG", "1")


@pytest.fixture
def run_cli(capsys):
    """Run ``speccheck ARGS``; returns (exit status, stdout, stderr)."""

    def run(*args: str) -> tuple[int, str, str]:
        status = main([str(a) for a in args])
        captured = capsys.readouterr()
        return status, captured.out, captured.err

    return run


@pytest.fixture(scope="session")
def postgres_server():
    """A throwaway PostgreSQL server on 127.0.0.1 for the whole session (see _postgres_server)."""
    from _postgres_server import start_server

    server = start_server()
    yield server
    server.stop()


@pytest.fixture
def pg_url(postgres_server) -> str:
    """URL of a fresh, empty database on the throwaway server."""
    return postgres_server.new_database()
