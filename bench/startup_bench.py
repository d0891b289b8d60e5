"""CPU time of whole commands against ``python -c "import numpy"``; not part of the tests.

    python bench/startup_bench.py [--repeats 5]

Each command runs in a fresh process on the demo data (written once into a temporary folder);
its CPU time (user + system, from ``resource.getrusage(RUSAGE_CHILDREN)``) is divided by the
CPU time of a bare ``python -c "import numpy"`` measured in the same run, median of the repeats.
The list of modules each command imports (``python -X importtime``) is summarised as the
heaviest top-level imports, so a regression shows where it came from.
"""

from __future__ import annotations

import argparse
import resource
import statistics
import subprocess
import sys
import tempfile
from pathlib import Path

TARGETS = {"check": 2.0, "params": 1.5, "info": 1.5}


def cpu_seconds(argv: list[str]) -> float:
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    subprocess.run(argv, check=False, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def heaviest_imports(argv: list[str], top: int = 4) -> str:
    """The top-level imports with the largest cumulative time (µs), from -X importtime."""
    run = subprocess.run(
        [sys.executable, "-X", "importtime", *argv[1:]], capture_output=True, text=True
    )
    rows = []
    for line in run.stderr.splitlines():
        parts = line.split("|")
        if len(parts) == 3 and parts[2].startswith(" ") and not parts[2].startswith("  "):
            try:
                rows.append((int(parts[1]), parts[2].strip()))
            except ValueError:
                continue
    rows.sort(reverse=True)
    return ", ".join(f"{name} {us / 1000:.0f} ms" for us, name in rows[:top])


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=5)
    args = ap.parse_args()
    py = sys.executable
    with tempfile.TemporaryDirectory(prefix="speccheck-startup-") as tmp:
        from speccheck.demo.run import run_demo

        demo = run_demo(Path(tmp) / "demo", echo=lambda _line: None)
        spec = str(demo.folder / "specs" / "kfp-2041-seal-seat.yaml")
        prof = [str(demo.folder / "profiles" / f"kfp-2041_ardent_0{i}.x3p") for i in (1, 2)]
        cmds = {
            "import numpy (reference)": [py, "-c", "import numpy"],
            "check": [py, "-m", "speccheck", "check", spec, *prof],
            "params": [py, "-m", "speccheck", "params", prof[0]],
            "info": [py, "-m", "speccheck", "info", prof[0]],
            "lint": [py, "-m", "speccheck", "lint", spec],
            "explain": [py, "-m", "speccheck", "explain", spec],
        }
        med = {
            k: statistics.median(cpu_seconds(v) for _ in range(args.repeats))
            for k, v in cmds.items()
        }
        ref = med["import numpy (reference)"]
        print("| command | CPU s | × import numpy | target | heaviest imports |")
        print("|---|---|---|---|---|")
        for name, argv in cmds.items():
            target = TARGETS.get(name)
            ratio = med[name] / ref
            verdict = (
                "" if target is None else f"≤ {target}×: {'met' if ratio <= target else 'missed'}"
            )
            heavy = heaviest_imports(argv) if name in TARGETS else ""
            print(f"| {name} | {med[name]:.3f} | {ratio:.2f} | {verdict} | {heavy} |")


if __name__ == "__main__":
    main()
