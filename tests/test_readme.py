"""The README's promises: the two fresh-machine commands, and CI running exactly the second."""

from __future__ import annotations

import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def readme_commands() -> list[str]:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    return re.findall(r"```bash\n(.+?)\n```", text)


def test_first_two_code_blocks_are_the_fresh_machine_commands():
    first, second = readme_commands()[:2]
    assert first.endswith("speccheck demo")
    assert second.endswith("pytest")


def test_ci_runs_exactly_the_readme_test_command():
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8").splitlines()
    assert readme_commands()[1] in ci
