"""Peak memory of reading and evaluating large profiles (not part of the test run).

    python bench/memory_bench.py              # 10^7 points
    python bench/memory_bench.py --points 2000000

Each case runs ``speccheck`` in a fresh child process and reads that child's peak resident
set size from ``os.wait4``. The reference, measured in the same run, is a child that only
imports numpy and holds one float64 array of N heights (``8·N`` bytes), so the ratio shows what
speccheck needs beyond the data itself. Files: a CSV (``x [mm],z [um]``, 4 and 5 decimals) and
an X3P with float64 binary data, both written to a temporary folder. Targets (README, "Memory"):
reading ≤ file size + 64 bytes per point; ``params`` ≤ 100 bytes per point above the reference.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def peak_rss_bytes(args: list[str]) -> int:
    """Peak resident set size of one child process running ``args`` (Linux: ru_maxrss in KiB)."""
    env = dict(os.environ, PYTHONPATH=str(ROOT), OPENBLAS_NUM_THREADS="1")
    proc = subprocess.Popen(args, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, env=env)
    _, status, usage = os.wait4(proc.pid, 0)
    err = proc.stderr.read().decode() if proc.stderr else ""
    if os.waitstatus_to_exitcode(status) not in (0, 1, 3):
        raise SystemExit(f"{' '.join(args)} failed: {err}")
    return usage.ru_maxrss * 1024


_WRITE = """
import sys
from pathlib import Path
import numpy as np
from speccheck.profile import Profile
from speccheck.readers import write_x3p
folder, n = Path(sys.argv[1]), int(sys.argv[2])
rng = np.random.default_rng(2041)
z = np.round(0.5 * np.sin(np.arange(n) * 0.01) + rng.normal(0, 0.05, n), 5)
with open(folder / "p.csv", "w", encoding="utf-8") as out:
    out.write("x [mm],z [um]\\n")
    np.savetxt(out, np.column_stack([np.arange(n) * 0.0005, z]), fmt="%.4f,%.5f")
write_x3p(folder / "p.x3p", Profile(z_um=z, dx_um=0.5))
"""


def write_files(folder: Path, n: int) -> tuple[Path, Path]:
    """The CSV and X3P of n points, written by a child: this process stays small, since a
    forked child's peak RSS counts what it inherited before exec."""
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    subprocess.run([sys.executable, "-c", _WRITE, str(folder), str(n)], check=True, env=env)
    return folder / "p.csv", folder / "p.x3p"


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--points", type=int, default=10_000_000)
    n = parser.parse_args().points
    py = sys.executable
    with tempfile.TemporaryDirectory() as tmp:
        csv, x3p = write_files(Path(tmp), n)
        ref = peak_rss_bytes([py, "-c", f"import numpy as np; z = np.ones({n}); z.sum()"])
        rows = []
        for f in (csv, x3p):
            size = f.stat().st_size
            for cmd in (["info", str(f)], ["params", str(f), "--cutoff", "0.8mm"]):
                peak = peak_rss_bytes([py, "-m", "speccheck", *cmd])
                per_point = (peak - ref) / n
                rows.append((f.suffix, cmd[0], size, peak, per_point))
    print(
        f"N = {n:.0e} points; reference (numpy + {8 * n / 2**20:.0f} MiB array): "
        f"{ref / 2**20:.0f} MiB peak RSS\n"
    )
    print("| file | command | file MiB | peak MiB | bytes/point above reference |")
    print("|---|---|---|---|---|")
    for suffix, cmd, size, peak, per_point in rows:
        print(f"| {suffix} | {cmd} | {size / 2**20:.0f} | {peak / 2**20:.0f} | {per_point:.0f} |")


if __name__ == "__main__":
    main()
