"""Run re-evaluation jobs in batches, on a local process pool or a Dask cluster.

A task is a batch of jobs. Each worker process loads the revised spec once (cached by its
SHA-256), reads the batch's profiles from the archive, evaluates them with
:func:`speccheck.evaluation.evaluator.evaluate` (the same entry point ``check`` uses) and returns
one compact tuple per job. The parent keeps at most a few batches per worker in flight and folds
each result into the summary as it arrives, so memory does not grow with the archive.
"""

from __future__ import annotations

import hashlib
import os
import tempfile
from collections.abc import Callable, Iterator, Sequence
from pathlib import Path
from typing import Any

from speccheck.errors import SpeccheckError
from speccheck.replay.archive import Archive
from speccheck.replay.jobs import ReplayJob, jobs_for_part
from speccheck.replay.summary import Outcome, ReplaySummary

__all__ = ["replay", "run_batch", "BatchItem"]

# (job key, [(profile path, format, expected sha256)], ) -> sent to workers
BatchItem = tuple[str, list[tuple[str, str | None, str]]]
_IN_FLIGHT_PER_WORKER = 3
_SPEC_CACHE: dict[str, Any] = {}


def _spec_from_bytes(spec_bytes: bytes, name: str) -> Any:
    """The revised spec, loaded once per worker process from its exact bytes."""
    sha = hashlib.sha256(spec_bytes).hexdigest()
    if sha not in _SPEC_CACHE:
        from speccheck.spec.loader import load_spec

        folder = Path(tempfile.mkdtemp(prefix="speccheck-replay-"))
        path = folder / Path(name).name
        path.write_bytes(spec_bytes)
        try:
            _SPEC_CACHE[sha] = load_spec(path)
        finally:
            path.unlink()
            folder.rmdir()
    return _SPEC_CACHE[sha]


def _evaluate_item(spec: Any, item: BatchItem) -> Outcome:
    from speccheck.evaluation.evaluator import evaluate
    from speccheck.readers import read_profile

    key, files = item
    try:
        profiles = []
        for path, fmt, sha in files:
            profile = read_profile(path, fmt=fmt)
            if profile.source.sha256 != sha:
                return (key, "not-replayed", f"{path}: bytes do not match their archived hash")
            profiles.append(profile)
        result = evaluate(spec, profiles)
    except SpeccheckError as exc:
        return (key, "not-replayed", exc.one_line())
    return (key, result.verdict, result.reason)


def run_batch(spec_bytes: bytes, spec_name: str, items: list[BatchItem]) -> list[Outcome]:
    """Evaluate one batch in a worker; one ``(key, verdict, reason)`` per job."""
    spec = _spec_from_bytes(spec_bytes, spec_name)
    return [_evaluate_item(spec, item) for item in items]


def _batches(jobs: Sequence[ReplayJob], archive: Archive, size: int) -> Iterator[list[BatchItem]]:
    batch: list[BatchItem] = []
    for job in jobs:
        files = [
            (
                str(archive.path(sha)),
                fmt if fmt in ("csv", "tsv", "txt", "x3p", "sdf") else None,
                sha,
            )
            for sha, fmt in zip(job.profiles, job.formats, strict=True)
        ]
        batch.append((job.key, files))
        if len(batch) >= size:
            yield batch
            batch = []
    if batch:
        yield batch


def _run_local(
    submit_args: Iterator[list[BatchItem]],
    spec: tuple[bytes, str],
    workers: int,
    sink: Callable[[list[Outcome]], None],
) -> None:
    import concurrent.futures as cf
    import multiprocessing

    ctx = multiprocessing.get_context("spawn")
    with cf.ProcessPoolExecutor(max_workers=workers, mp_context=ctx) as pool:
        pending: set[cf.Future] = set()
        for items in submit_args:
            pending.add(pool.submit(run_batch, spec[0], spec[1], items))
            if len(pending) >= workers * _IN_FLIGHT_PER_WORKER:
                done, pending = cf.wait(pending, return_when=cf.FIRST_COMPLETED)
                for f in done:
                    sink(f.result())
        for f in cf.as_completed(pending):
            sink(f.result())


def _run_dask(
    submit_args: Iterator[list[BatchItem]],
    spec: tuple[bytes, str],
    address: str,
    sink: Callable[[list[Outcome]], None],
) -> None:
    try:
        from distributed import Client, wait
    except ImportError:
        raise SpeccheckError(
            "--scheduler needs Dask distributed: pip install 'speccheck[plant]'"
        ) from None
    try:
        client = Client(address, timeout="30s")  # the default client while it runs: wait() uses it
    except (OSError, TimeoutError) as exc:
        raise SpeccheckError(f"cannot reach the Dask scheduler {address} ({exc})") from None
    try:
        info = client.scheduler_info()["workers"].values()
        workers = max(1, sum(w.get("nthreads", 1) for w in info))
        spec_future = client.scatter(spec[0], broadcast=True)
        pending: set[Any] = set()

        def drain(return_when: str) -> set[Any]:
            done, rest = wait(list(pending), return_when=return_when)
            for f in done:
                sink(f.result())
                f.release()
            return set(rest)

        for items in submit_args:
            pending.add(client.submit(run_batch, spec_future, spec[1], items, pure=False))
            if len(pending) >= workers * _IN_FLIGHT_PER_WORKER:
                pending = drain("FIRST_COMPLETED")
        if pending:
            drain("ALL_COMPLETED")
    finally:
        client.close()


def replay(
    store: Any,
    archive: Archive,
    spec_path: str | Path,
    *,
    as_of: str | None = None,
    scheduler: str | None = None,
    workers: int | None = None,
    batch_size: int = 16,
) -> ReplaySummary:
    """Re-evaluate every archived measurement of the revised spec's part; what would change.

    Parameters
    ----------
    store:
        An open records store (SQLite or PostgreSQL).
    archive:
        The archived profiles, by hash.
    spec_path:
        The revised specification. Its part number (and surface) select the records.
    as_of:
        Only records up to this date (``YYYY-MM-DD``, UTC).
    scheduler:
        ``tcp://HOST:PORT`` of a Dask scheduler; a local process pool when None.
    workers, batch_size:
        Local pool size (default: CPU count) and jobs per task.
    """
    from speccheck.spec.loader import load_spec

    spec = load_spec(spec_path)  # errors name the file before any work starts
    part_number = str(spec.part.get("number"))
    jobs, lots = jobs_for_part(store.list(), part_number, spec.part.get("surface"), as_of=as_of)
    summary = ReplaySummary(
        spec=spec_path,
        part=part_number,
        jobs=jobs,
        lots=lots,
        scheduler=scheduler or "local process pool",
    )
    for job in jobs:
        for sha in job.profiles:
            if not archive.has(sha):
                summary.missing(job.key, f"profile {sha[:12]}… not in the archive")
    ready = [j for j in jobs if j.key not in summary.not_replayed]
    batches = _batches(ready, archive, max(1, batch_size))
    payload = (Path(spec_path).read_bytes(), Path(spec_path).name)
    if scheduler:
        _run_dask(batches, payload, scheduler, summary.add_batch)
    else:
        _run_local(batches, payload, workers or os.cpu_count() or 1, summary.add_batch)
    return summary
