"""Scale figures for archive re-evaluation (``speccheck replay``); not part of the tests.

    python bench/replay_bench.py                    # 20,000 archived profiles (about 10 minutes)
    python bench/replay_bench.py --profiles 3000    # a quick look

What it builds (untimed): an archive of N synthetic profiles (sines + seeded noise, 11,201 points
at 0.5 µm, the 5.6 mm trace of λc 0.8 mm) as ``<sha256>.x3p`` files, and a SQLite records store
of N/3 check records of three profiles each, evaluated under the original spec (Ra max 0.8,
Rz max 6.3). The revised spec tightens Ra to 0.6 µm.

What it measures, all in one run so that the ratios share the machine's load:

- bare: the same per-job work the workers do (read, verify the hash, evaluate under the revised
  spec: ``speccheck.replay.execute.run_batch``) in this process, serially; the in-process
  ceiling is its throughput × cores;
- the archive read alone (read + hash check), as a share of the bare work;
- ``replay`` on the local process pool (as the command runs it: listing the records, indexing
  the archive, spawning workers) against that ceiling;
- ``replay`` on a 2-worker ``distributed.LocalCluster`` (1 thread each, processes) against the
  local pool; cluster start-up is reported apart;
- the per-task overhead on Dask, from a run with one job per task.
"""

from __future__ import annotations

import argparse
import concurrent.futures as cf
import hashlib
import math
import multiprocessing
import os
import platform
import tempfile
import time
from pathlib import Path

import numpy as np

POINTS, DX_UM = 11_201, 0.5
PER_CHECK = 3

SPEC = """spec_version: 1
part:
  number: BENCH-1
  revision: {rev}
  surface: bore
  supplier: {supplier}
measurement:
  cutoff: 0.8mm
requirements:
  - "Ra max {ra}"
  - "Rz max 6.3"
"""


def _make_check(args: tuple[int, str, str]) -> dict:
    """Worker: write three archived profiles of one check and evaluate the original spec."""
    from speccheck.evaluation.evaluator import evaluate
    from speccheck.profile import Profile
    from speccheck.readers import read_profile, write_x3p
    from speccheck.spec.loader import load_spec

    index, archive, spec_path = args
    rng = np.random.default_rng([2041, index])
    x_um = np.arange(POINTS) * DX_UM
    ra_um = rng.uniform(0.3, 0.75)  # Ra of a sine = 2A/π
    profiles = []
    for k in range(PER_CHECK):
        z = ra_um * math.pi / 2 * np.sin(2 * np.pi * x_um / 60.0 + k) + 0.02 * rng.normal(
            size=POINTS
        )
        tmp = Path(archive) / f"tmp-{index}-{k}.x3p"
        write_x3p(tmp, Profile(z_um=z, dx_um=DX_UM))
        sha = hashlib.sha256(tmp.read_bytes()).hexdigest()
        final = tmp.with_name(f"{sha}.x3p")
        tmp.rename(final)
        profiles.append(read_profile(final))
    return evaluate(load_spec(spec_path), profiles).to_dict()


def build(root: Path, n_profiles: int, workers: int) -> tuple[Path, Path, Path, int]:
    archive = root / "archive"
    archive.mkdir()
    original = root / "original.yaml"
    revised = root / "revised.yaml"
    original.write_text(SPEC.format(rev="A", supplier="Bench Supplier", ra="0.8"), "utf-8")
    revised.write_text(SPEC.format(rev="B", supplier="Bench Supplier", ra="0.6"), "utf-8")
    from speccheck.records.store import RecordsStore

    db = root / "records.sqlite"
    checks = math.ceil(n_profiles / PER_CHECK)
    ctx = multiprocessing.get_context("spawn")
    with RecordsStore.open(db) as store, cf.ProcessPoolExecutor(workers, mp_context=ctx) as pool:
        args = [(i, str(archive), str(original)) for i in range(checks)]
        for result in pool.map(_make_check, args, chunksize=16):
            store.append_check(result)
    return db, archive, revised, checks


def _items(db: Path, archive_root: Path, revised: Path):
    from speccheck.records.store import RecordsStore
    from speccheck.replay import Archive
    from speccheck.replay.execute import _batches
    from speccheck.replay.jobs import jobs_for_part

    with RecordsStore.open(db, create=False) as store:
        jobs, _ = jobs_for_part(store.list(), "BENCH-1", "bore")
    return [item for batch in _batches(jobs, Archive(archive_root), 16) for item in batch]


def bare(items, revised: Path) -> tuple[float, float]:
    """Seconds for the workers' own work in this process, and for the reads alone."""
    from speccheck.readers import read_profile
    from speccheck.replay.execute import run_batch

    payload = (revised.read_bytes(), revised.name)
    t0 = time.perf_counter()
    run_batch(*payload, items)
    t_all = time.perf_counter() - t0
    t0 = time.perf_counter()
    for _, files in items:
        for path, fmt, _sha in files:
            read_profile(path, fmt=fmt)
    return t_all, time.perf_counter() - t0


def run_replay(db: Path, archive_root: Path, revised: Path, **kw) -> tuple[float, dict]:
    from speccheck.records.store import RecordsStore
    from speccheck.replay import Archive, replay

    t0 = time.perf_counter()
    with RecordsStore.open(db, create=False) as store:
        d = replay(store, Archive(archive_root), revised, **kw).to_dict()
    return time.perf_counter() - t0, d


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--profiles", type=int, default=20_000)
    ap.add_argument("--overhead-tasks", type=int, default=2000)
    args = ap.parse_args()
    cores = os.cpu_count() or 1
    load_before = os.getloadavg()[0]
    with tempfile.TemporaryDirectory(prefix="speccheck-replay-bench-") as tmp:
        root = Path(tmp)
        t0 = time.perf_counter()
        db, archive, revised, checks = build(root, args.profiles, cores)
        print(
            f"built {checks} check records, {checks * PER_CHECK} profiles "
            f"in {time.perf_counter() - t0:.0f} s (untimed setup)"
        )
        items = _items(db, archive, revised)
        t_bare, t_read = bare(items, revised)
        t_pool, d_pool = run_replay(db, archive, revised, workers=cores)
        from distributed import LocalCluster

        t0 = time.perf_counter()
        with LocalCluster(
            n_workers=2,
            threads_per_worker=1,
            processes=True,
            host="127.0.0.1",
            dashboard_address=None,
        ) as cluster:
            t_start = time.perf_counter() - t0
            addr = cluster.scheduler_address
            t_dask, d_dask = run_replay(db, archive, revised, scheduler=addr)
            t_task = empty_task_seconds(addr, args.overhead_tasks)
        t_index = index_seconds(db, archive)
    _print(
        dict(
            items=items,
            t_bare=t_bare,
            t_read=t_read,
            t_pool=t_pool,
            d_pool=d_pool,
            t_dask=t_dask,
            d_dask=d_dask,
            t_task=t_task,
            t_index=t_index,
            t_start=t_start,
            load_before=load_before,
        ),
        cores,
    )


def empty_task_seconds(address: str, n: int) -> float:
    """Dask's own cost per task: wall time of n empty tasks, two workers, divided by n."""
    from distributed import Client, wait

    with Client(address) as client:
        wait(client.map(abs, range(100), pure=False))  # warm the workers' connections
        t0 = time.perf_counter()
        wait(client.map(abs, range(n), pure=False))
        return (time.perf_counter() - t0) / n


def index_seconds(db: Path, archive_root: Path) -> float:
    """What the command does before any evaluation: list the records, index the archive."""
    t0 = time.perf_counter()
    _items(db, archive_root, archive_root)
    return time.perf_counter() - t0


def _print(v: dict, cores: int) -> None:
    jobs = len(v["items"])
    same = all(v["d_dask"][k] == v["d_pool"][k] for k in ("flips", "after", "before"))
    ceiling = jobs / v["t_bare"] * cores
    pool_rate, dask_rate = jobs / v["t_pool"], jobs / v["t_dask"]
    print(
        f"\n{platform.processor() or platform.machine()}, {cores} cores, "
        f"1-min load {v['load_before']:.1f} before, {os.getloadavg()[0]:.1f} after "
        f"(other processes lower every ratio against the ceiling); "
        f"{jobs} checks of {PER_CHECK} profiles"
    )
    print("| case | checks/s | ratio |")
    print("|---|---|---|")
    print(f"| bare work in-process × {cores} cores (ceiling) | {ceiling:.1f} | 1 |")
    print(
        f"| local pool ({cores} workers), whole command | {pool_rate:.1f} | "
        f"{pool_rate / ceiling:.2f} of the ceiling |"
    )
    print(
        f"| Dask LocalCluster, 2 workers × 1 thread | {dask_rate:.1f} | "
        f"{dask_rate / pool_rate:.2f} of the pool |"
    )
    print(
        f"\narchive read + hash: {v['t_read'] / v['t_bare']:.0%} of the bare work "
        f"({v['t_read'] / (jobs * PER_CHECK) * 1e3:.2f} ms per profile); "
        f"bare {v['t_bare'] / jobs * 1e3:.1f} ms per check"
    )
    print(
        f"listing the records and indexing the archive: {v['t_index']:.1f} s "
        f"of the pool's {v['t_pool']:.1f} s"
    )
    print(
        f"Dask per-task cost: {v['t_task'] * 1e3:.2f} ms per empty task; a task of 16 checks "
        f"works {16 * v['t_bare'] / jobs * 1e3:.0f} ms; cluster start {v['t_start']:.1f} s"
    )
    print(f"flips {len(v['d_pool']['flips'])}; Dask result identical to the pool: {same}")


if __name__ == "__main__":
    main()
