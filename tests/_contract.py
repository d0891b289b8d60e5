"""Checks of the error contract shared by the tests of hostile and careless input.

The contract (DEVELOPERS.md, "Errors from input"): exit status 2, one line on standard error
``speccheck: error: FILE[:PLACE]: message`` naming the file, no traceback, no Python warning,
and no input changed.
"""

from __future__ import annotations

import hashlib
import os
import subprocess
import sys
from pathlib import Path


def fingerprint(paths) -> dict[str, str]:
    """SHA-256 of each file's bytes, to compare before and after a run."""
    return {str(p): hashlib.sha256(Path(p).read_bytes()).hexdigest() for p in paths}


def assert_refused(status: int, err: str, names) -> str:
    """Exit 2 and one error line that names every one of ``names``; returns the line."""
    assert status == 2, err
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    line = lines[0]
    assert line.startswith("speccheck: error: "), line
    assert "internal error" not in line and "Traceback" not in err and "Warning" not in err
    for name in names:
        assert str(name) in line, (name, line)
    return line


def run_speccheck(args, *, cwd=None, env=None, limits=None, timeout=120):
    """``python -m speccheck ARGS`` in a subprocess; (status, stdout, stderr).

    ``limits`` maps ``resource.RLIMIT_*`` to a soft and hard value set in the child before it
    starts (for memory budgets).
    """
    import resource

    def preexec():
        for what, value in (limits or {}).items():
            resource.setrlimit(what, (value, value))

    child_env = dict(os.environ, **(env or {}))
    proc = subprocess.run(
        [sys.executable, "-m", "speccheck", *[str(a) for a in args]],
        capture_output=True,
        text=True,
        cwd=cwd,
        env=child_env,
        timeout=timeout,
        preexec_fn=preexec if limits else None,
    )
    assert "internal error" not in proc.stderr, proc.stderr  # a bug, never input's fault
    return proc.returncode, proc.stdout, proc.stderr
