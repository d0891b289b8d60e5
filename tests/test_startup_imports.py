"""What each computing command imports: numpy and our own code, not scipy or the signing stack.

Not a timing test: it lists modules. scipy.special alone costs a check about 0.4 s of start-up
and pyHanko pulls in aiohttp (bench/startup_bench.py measures the CPU time). The check runs in a
fresh interpreter, as the command line does.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from speccheck.profile import Profile
from speccheck.readers import write_csv, write_x3p

HEAVY = ("scipy", "matplotlib", "weasyprint", "pyhanko", "aiohttp", "jinja2", "urllib.request")

SPEC = (
    "spec_version: 1\npart:\n  number: T-1\n  revision: A\n  surface: face\n"
    'measurement:\n  cutoff: 0.8mm\nrequirements:\n  - "Ra max 0.8"\n  - "Rz max 6.3"\n'
    '  - "Rpk max 1"\n'
)


def _imports_of(argv: list[str], cwd: str) -> list[str]:
    code = (
        "import sys, json\n"
        "from speccheck.cli.main import main\n"
        f"try:\n    main({argv!r})\nexcept SystemExit:\n    pass\n"
        f"print(json.dumps(sorted(m for m in sys.modules if m.split('.')[0] in {HEAVY!r}"
        " or m in ('urllib.request',))))\n"
    )
    run = subprocess.run(
        [sys.executable, "-c", code],
        capture_output=True,
        text=True,
        timeout=120,
        check=True,
        cwd=cwd,  # not the checkout: speccheck comes from the installation, as for a user
    )
    return json.loads(run.stdout.strip().splitlines()[-1])


@pytest.fixture(scope="module")
def files(tmp_path_factory) -> dict[str, str]:
    root = tmp_path_factory.mktemp("startup")
    x = np.arange(11_201) * 0.5
    z = 0.6 * np.sin(2 * np.pi * x / 60.0) + 0.1 * np.sin(2 * np.pi * x / 17.0)
    write_x3p(root / "p.x3p", Profile(z_um=z, dx_um=0.5))
    write_csv(root / "p.csv", Profile(z_um=z, dx_um=0.5))
    (root / "s.yaml").write_text(SPEC, encoding="utf-8")
    return {k: str(root / k) for k in ("p.x3p", "p.csv", "s.yaml")}


@pytest.mark.parametrize(
    "command",
    [
        ["check", "s.yaml", "p.x3p", "p.csv"],
        ["params", "p.x3p"],
        ["info", "p.csv"],
        ["lint", "s.yaml"],
        ["explain", "s.yaml"],
    ],
    ids=lambda c: c[0],
)
def test_computing_commands_import_no_heavy_library(files, command):
    argv = [files.get(a, a) for a in command]
    assert _imports_of(argv, cwd=str(Path(files["s.yaml"]).parent)) == []
