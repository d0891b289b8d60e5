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


_VALIDATORS: dict = {}


def schema_validator(document: str):
    """A jsonschema validator (draft 2020-12) of speccheck's schema for ``document``."""
    if document not in _VALIDATORS:
        from jsonschema import Draft202012Validator

        from speccheck.schemas import schema

        doc = schema(document)
        Draft202012Validator.check_schema(doc)
        _VALIDATORS[document] = Draft202012Validator(doc)
    return _VALIDATORS[document]


@pytest.fixture(autouse=True)
def json_documents_match_their_schemas(monkeypatch):
    """Every JSON document the command line writes in any test is validated against its schema
    (``speccheck schema --what DOCUMENT``) before it is written; a mismatch fails the test."""
    import speccheck.cli.options as options

    original = options.json_text

    def checked(doc, document, *, strict=True):
        text = original(doc, document, strict=strict)
        import json

        errors = sorted(
            schema_validator(document).iter_errors(json.loads(text)), key=lambda e: e.path
        )
        assert not errors, f"{document} JSON does not match its schema: " + "; ".join(
            f"{'/'.join(map(str, e.path))}: {e.message}" for e in errors[:5]
        )
        return text

    monkeypatch.setattr(options, "json_text", checked)


@pytest.fixture
def run_cli(capsys):
    """Run ``speccheck ARGS``; returns (exit status, stdout, stderr)."""

    def run(*args: str) -> tuple[int, str, str]:
        status = main([str(a) for a in args])
        captured = capsys.readouterr()
        assert "internal error" not in captured.err, captured.err  # a bug, never input's fault
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


def pytest_terminal_summary(terminalreporter):
    """Figures of the fuzz suite (cases per target: accepted, refused with a named error)."""
    import sys

    fuzz = sys.modules.get("_fuzz")
    if fuzz is None or not fuzz.COUNTS:
        return
    terminalreporter.section("fuzz cases")
    for target, (ok, refused) in sorted(fuzz.COUNTS.items()):
        terminalreporter.write_line(
            f"{target:10s} {ok + refused:7d} cases: {ok} read, {refused} refused naming the file"
        )
