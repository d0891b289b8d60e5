"""The layers of DEVELOPERS.md, enforced: no module imports from a layer above its own.

Reads every ``import``/``from ... import`` in speccheck/ (including imports inside functions,
which are dependencies all the same) and compares layer ranks.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "speccheck"

# Lowest first. Modules of equal rank may import each other.
RANKS = {
    "speccheck": 0,  # package root: errors, units, profile, _atomic, _version
    "speccheck.schemas": 0,  # the JSON interface version and hand-written JSON Schemas
    "speccheck.readers": 1,
    "speccheck.filters": 2,
    "speccheck.parameters": 3,
    "speccheck.diagnostics": 4,
    "speccheck.uncertainty": 4,  # GUM and Monte Carlo propagation: pure, knows no specs
    "speccheck.spec": 5,
    "speccheck.instrument": 5,
    "speccheck.evaluation": 6,
    "speccheck.view": 7,  # one view model for PDF and page; never readers or parameters
    "speccheck.report": 8,
    "speccheck.templates": 8,
    "speccheck.lot": 9,
    "speccheck.records": 9,
    "speccheck.replay": 10,
    "speccheck.demo": 11,
    "speccheck.api": 12,
    "speccheck.web": 13,
    "speccheck.cli": 13,
}


def rank_of(module: str) -> int:
    if module == "speccheck.__main__":  # `python -m speccheck` is the command line
        return RANKS["speccheck.cli"]
    parts = module.split(".")
    if len(parts) >= 2 and ".".join(parts[:2]) in RANKS:
        return RANKS[".".join(parts[:2])]
    return RANKS["speccheck"]


def module_name(path: Path) -> str:
    rel = path.relative_to(PACKAGE.parent).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def imported_modules(path: Path) -> list[tuple[int, str]]:
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    out = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            out += [(node.lineno, a.name) for a in node.names if a.name.startswith("speccheck")]
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            if node.module.startswith("speccheck"):
                out.append((node.lineno, node.module))
    return out


SOURCES = sorted(p for p in PACKAGE.rglob("*.py") if "__pycache__" not in p.parts)


def test_sources_found():
    assert len(SOURCES) > 10


@pytest.mark.parametrize("path", SOURCES, ids=lambda p: str(p.relative_to(PACKAGE.parent)))
def test_no_upward_import(path: Path):
    me = module_name(path)
    mine = rank_of(me)
    # The package root's lazy re-export of Profile is a core-to-core import.
    bad = [
        f"{path.name}:{line}: {me} (layer {mine}) imports {mod} (layer {rank_of(mod)})"
        for line, mod in imported_modules(path)
        if rank_of(mod) > mine
    ]
    assert not bad, "\n".join(bad)


def test_heavy_libraries_not_imported_at_module_level_of_cli_main():
    """`speccheck --help` must not pull in numpy or other heavy libraries (common practice)."""
    import subprocess
    import sys

    code = (
        "import sys, speccheck.cli.main as m; "
        "heavy = [n for n in ('numpy', 'scipy', 'matplotlib', 'weasyprint', 'pyhanko', 'pint',"
        " 'pydantic')"
        " if n in sys.modules]; print(','.join(heavy))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""
