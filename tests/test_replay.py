"""Archive re-evaluation under a revised spec, where the flips are known by construction.

Profiles are sines of amplitude A, whose Ra is 2A/π (closed form; see shared domain notes §4,
"Check values"). The wavelength (50 µm) is far below λc = 0.8 mm, where the ISO 16610-21
roughness transmission 1 − exp(−π(αλc/λ)²) is 1 to double precision, so each profile's Ra is
known to better than 0.1 %. The original spec's limit (Ra max 0.8 µm) accepts every profile;
the revised one (Ra max 0.6 µm) rejects exactly those with Ra 0.7 µm.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest

from speccheck.profile import Profile
from speccheck.readers import write_csv
from speccheck.records.store import RecordsStore
from speccheck.replay import Archive, replay
from speccheck.replay.summary import clopper_pearson, combine_verdicts

DX_UM = 0.5
POINTS = 11_201  # 5.6 mm: 7 cut-offs of 0.8 mm


def _spec(path: Path, limit: str, supplier: str | None = "Ardent Precision Grinding") -> Path:
    supplier_line = f"  supplier: {supplier}\n" if supplier else ""
    path.write_text(
        "spec_version: 1\npart:\n  number: KFP-2041\n  revision: D\n  surface: seal seat\n"
        f'{supplier_line}measurement:\n  cutoff: 0.8mm\nrequirements:\n  - "Ra max {limit}"\n',
        encoding="utf-8",
    )
    return path


def _sine(path: Path, ra_um: float, phase: float) -> Path:
    x_um = np.arange(POINTS) * DX_UM
    amplitude = ra_um * math.pi / 2  # Ra = 2A/π
    z = amplitude * np.sin(2 * np.pi * x_um / 50.0 + phase)
    write_csv(path, Profile(z_um=z, dx_um=DX_UM))
    return path


@pytest.fixture(scope="module")
def archive_case(tmp_path_factory):
    """12 check records from two suppliers and one lot record of 4 parts, with known Ra."""
    from speccheck.evaluation.evaluator import evaluate_files

    root = tmp_path_factory.mktemp("replay")
    archive = root / "archive"
    archive.mkdir()
    specs = {
        s: _spec(root / f"spec-{i}.yaml", "0.8", s) for i, s in enumerate(("A-grind", "B-grind"))
    }
    db = root / "records.sqlite"
    ras = [0.3, 0.5, 0.7]
    expected_flips = set()
    with RecordsStore.open(db) as store:
        for i in range(12):
            supplier = ("A-grind", "B-grind")[i % 2]
            ra = ras[i % 3]
            name = f"trace-{i:02d}.csv"
            p = _sine(archive / name, ra, phase=i / 7)
            result = evaluate_files(specs[supplier], [p])
            assert result.verdict == "conforming"
            rid = store.append_check(result)
            if ra > 0.6:
                expected_flips.add(str(rid))
        # a lot of 4 sampled parts, acceptance number 0, accepted under the old limit
        parts = []
        for k, ra in enumerate([0.3, 0.7, 0.5, 0.3]):
            p = _sine(archive / f"lot-{k}.csv", ra, phase=k / 3 + 0.05)
            check = evaluate_files(specs["A-grind"], [p]).to_dict()
            parts.append(
                {"serial": f"S-{k}", "verdict": check["verdict"], "surfaces": {"seal seat": check}}
            )
        lot = {
            "kind": "lot",
            "lot": {"id": "L-77", "supplier": "A-grind", "part": "KFP-2041"},
            "plan": {"sha256": None},
            "sampling": {"acceptance_number": 0},
            "parts": parts,
            "disposition": "accept",
        }
        lot_id = store.append_lot(lot)
    expected_flips.add(f"{lot_id}/S-1")
    revised = _spec(root / "revised.yaml", "0.6", supplier=None)
    return db, archive, revised, expected_flips, lot_id


def test_local_pool_finds_exactly_the_known_flips(archive_case):
    db, archive, revised, expected, lot_id = archive_case
    with RecordsStore.open(db) as store:
        d = replay(store, Archive(archive), revised, workers=2, batch_size=3).to_dict()
    assert d["checks"] == 16 and d["replayed"] == 16 and not d["not_replayed"]
    assert {f["key"] for f in d["flips"]} == expected
    assert all(f["before"] == "conforming" and f["after"] == "nonconforming" for f in d["flips"])
    # 4 of 12 checks plus 1 of 4 lot parts: 5 of 16 nonconforming after, 0 before
    assert d["before"]["nonconforming"] == 0 and d["after"]["nonconforming"] == 5
    assert d["suppliers"]["B-grind"]["flips"] == 2 and d["suppliers"]["A-grind"]["flips"] == 3
    (lot,) = d["lots"]
    assert lot["record"] == lot_id and lot["before"] == "accept" and lot["after"] == "reject"
    assert d["lots_changed"] == 1


def test_dask_local_cluster_gives_identical_results(archive_case, run_cli, tmp_path):
    from distributed import LocalCluster

    db, archive, revised, _, _ = archive_case
    with RecordsStore.open(db) as store:
        local = replay(store, Archive(archive), revised, workers=2, batch_size=5).to_dict()
    with LocalCluster(
        n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1", dashboard_address=None
    ) as cluster:
        out = tmp_path / "replay.json"
        status, _, err = run_cli(
            "replay",
            "--db",
            str(db),
            "--archive",
            str(archive),
            "--spec",
            str(revised),
            "--scheduler",
            cluster.scheduler_address,
            "--batch-size",
            "2",
            "--json",
            str(out),
        )
    assert status == 1, err  # exit 1: some verdicts would change
    on_dask = json.loads(out.read_text(encoding="utf-8"))
    assert on_dask["scheduler"] == cluster.scheduler_address
    for doc in (local, on_dask):
        doc.pop("scheduler")
    assert on_dask == local


def test_as_of_excludes_later_records(archive_case):
    db, archive, revised, _, _ = archive_case
    with RecordsStore.open(db) as store:
        d = replay(store, Archive(archive), revised, as_of="2000-01-01", workers=1).to_dict()
    assert d["checks"] == 0 and d["flips"] == [] and d["lots"] == []


def test_missing_and_altered_archive_files_are_named(archive_case, tmp_path):
    import shutil

    db, archive, revised, _, _ = archive_case
    partial = tmp_path / "partial"
    shutil.copytree(archive, partial)
    (partial / "trace-00.csv").unlink()
    with RecordsStore.open(db) as store:
        first = store.get(1).result["measurements"][0]["sha256"]
        d = replay(store, Archive(partial), revised, workers=1).to_dict()
    assert {"key": "1", "reason": f"profile {first[:12]}… not in the archive"} in d["not_replayed"]
    assert d["replayed"] == 15


def test_report_pdf_and_table(archive_case, run_cli, tmp_path):
    db, archive, revised, _, _ = archive_case
    pdf = tmp_path / "replay.pdf"
    status, out, _ = run_cli(
        "replay",
        "--db",
        str(db),
        "--archive",
        str(archive),
        "--spec",
        str(revised),
        "--workers",
        "1",
        "--report",
        str(pdf),
    )
    assert status == 1
    assert "16 of 16 archived checks re-evaluated" in out and "5 verdict(s) change" in out
    assert "lot L-77 (A-grind, record 13): accept → reject." in out
    assert pdf.read_bytes().startswith(b"%PDF")


def test_bad_inputs_are_one_line_exit_2(archive_case, run_cli, tmp_path):
    db, archive, revised, _, _ = archive_case
    status, _, err = run_cli(
        "replay", "--db", str(db), "--archive", str(tmp_path / "none"), "--spec", str(revised)
    )
    assert status == 2 and err.strip().endswith("none: archive folder does not exist")
    status, _, err = run_cli(
        "replay",
        "--db",
        str(db),
        "--archive",
        str(archive),
        "--spec",
        str(revised),
        "--as-of",
        "last year",
    )
    assert status == 2 and "--as-of 'last year' is not a date YYYY-MM-DD" in err


def test_clopper_pearson_against_scipy_binomtest():
    # reference: scipy.stats.binomtest(k, n).proportion_ci(method="exact") (Clopper-Pearson)
    from scipy.stats import binomtest

    for k, n in ((0, 10), (3, 10), (10, 10), (17, 400)):
        ref = binomtest(k, n).proportion_ci(confidence_level=0.95, method="exact")
        lo, hi = clopper_pearson(k, n)
        assert lo == pytest.approx(ref.low, abs=1e-12) and hi == pytest.approx(ref.high, abs=1e-12)


def test_part_verdict_combines_surfaces():
    # common practice, no source: a part conforms only when every surface does
    assert combine_verdicts(["conforming", "nonconforming"]) == "nonconforming"
    assert combine_verdicts(["conforming", "undecided"]) == "undecided"
    assert combine_verdicts(["conforming", "conforming"]) == "conforming"
