"""``speccheck records``: list, show, export, audit, trend — status, message, state read back."""

from __future__ import annotations

import csv
import json
import sqlite3
from pathlib import Path

import pytest
from test_lot import GOOD, SPEC, sine_csv
from test_records_store import make_result

from speccheck.records.store import RecordsStore
from speccheck.schemas import SCHEMA_VERSION


@pytest.fixture
def db(tmp_path: Path) -> Path:
    path = tmp_path / "r.sqlite"
    with RecordsStore.open(path) as store:
        for v in (0.30, 0.32, 0.28):
            store.append_check(make_result(v))
    return path


def test_list_json_and_table(run_cli, db: Path):
    status, out, _ = run_cli("records", "list", "--db", db, "--json")
    assert status == 0
    rows = json.loads(out)["records"]
    with RecordsStore.open(db, create=False) as store:
        assert [r["record_hash"] for r in rows] == [r.record_hash for r in store.list()]
    status, out, _ = run_cli("records", "list", "--db", db, "--last", "1")
    assert status == 0
    lines = out.splitlines()
    assert lines[0].split() == ["id", "time", "(UTC)", "kind", "part", "verdict", "record", "hash"]
    assert len(lines) == 2 and lines[1].split()[0] == "3"


def test_db_from_environment(run_cli, db: Path, monkeypatch):
    monkeypatch.setenv("SPECCHECK_DB", str(db))
    status, out, _ = run_cli("records", "list", "--json")
    assert status == 0 and len(json.loads(out)["records"]) == 3


def test_show_round_trip(run_cli, db: Path):
    status, out, _ = run_cli("records", "show", "2", "--db", db)
    assert status == 0
    with RecordsStore.open(db, create=False) as store:
        assert json.loads(out) == {"schema_version": SCHEMA_VERSION, **store.get(2).to_dict()}
    status, out, err = run_cli("records", "show", "9", "--db", db)
    assert (status, out) == (2, "")
    assert err == f"speccheck: error: {db}:record 9: no such record\n"


def test_export_round_trip(run_cli, db: Path, tmp_path: Path):
    status, _, err = run_cli(
        "records", "export", "--db", db, "--csv", tmp_path / "r.csv", "--json", tmp_path / "r.json"
    )
    assert status == 0
    csv_path, json_path = tmp_path / "r.csv", tmp_path / "r.json"
    assert err == f"3 records written to {csv_path}\n3 records written to {json_path}\n"
    with RecordsStore.open(db, create=False) as store:
        recs = store.list()
    with (tmp_path / "r.csv").open(encoding="utf-8", newline="") as f:
        rows = list(csv.DictReader(f))
    assert [(int(r["id"]), r["record_hash"], r["result_json"]) for r in rows] == [
        (r.id, r.record_hash, r.result_json) for r in recs
    ]
    doc = json.loads((tmp_path / "r.json").read_text(encoding="utf-8"))
    assert [d["result"] for d in doc["records"]] == [r.result for r in recs]
    status, _, err = run_cli("records", "export", "--db", db)
    assert (
        status == 2 and err == "speccheck: error: records export needs --csv FILE or --json FILE\n"
    )


def test_audit_intact_then_tampered(run_cli, db: Path):
    with RecordsStore.open(db, create=False) as store:
        head = store.head_hash()
    status, out, _ = run_cli("records", "audit", "--db", db)
    assert (status, out) == (0, f"3 records, chain intact; head {head}\nintegrity check: ok\n")
    conn = sqlite3.connect(db, isolation_level=None)
    conn.execute("DROP TRIGGER records_no_update")
    conn.execute("UPDATE records SET verdict = 'nonconforming' WHERE id = 2")
    conn.close()
    status, out, _ = run_cli("records", "audit", "--db", db)
    assert status == 1
    assert out.splitlines() == [
        "TAMPERED: append-only triggers missing: records_no_update (records could have been "
        "changed in place; the chain shows whether)",
        "TAMPERED: record 2 does not match its record_hash (edited)",
        f"3 records, chain NOT intact; head {head}",
        "integrity check: ok",
    ]


def test_audit_deleted_row(run_cli, db: Path):
    conn = sqlite3.connect(db, isolation_level=None)
    conn.execute("DROP TRIGGER records_no_delete")
    conn.execute("DELETE FROM records WHERE id = 2")
    conn.close()
    status, out, _ = run_cli("records", "audit", "--db", db, "--json")
    assert status == 1
    doc = json.loads(out)
    assert doc["intact"] is False
    assert doc["findings"][1:] == [
        {"record": 3, "kind": "deleted", "message": "record 2 missing before record 3 (deleted)"}
    ]
    assert doc["findings"][0]["kind"] == "guards" and doc["integrity"] == "ok"


def test_audit_not_a_store(run_cli, tmp_path: Path):
    other = tmp_path / "other.sqlite"
    conn = sqlite3.connect(other)
    conn.execute("CREATE TABLE t (x)")
    conn.commit()
    conn.close()
    status, _, err = run_cli("records", "audit", "--db", other)
    assert status == 2
    assert err == (
        f"speccheck: error: {other}: not a speccheck records store "
        "(an SQLite database of something else)\n"
    )
    status, _, err = run_cli("records", "audit", "--db", tmp_path / "none.sqlite")
    assert status == 2
    assert err == (
        f"speccheck: error: {tmp_path / 'none.sqlite'}: "
        "no records store here (nothing has been recorded yet)\n"
    )


def test_audit_with_archive_reevaluates(run_cli, tmp_path: Path):
    from speccheck.evaluation.evaluator import evaluate_files

    archive = tmp_path / "archive"
    archive.mkdir()
    (archive / "spec.yaml").write_text(SPEC, encoding="utf-8")
    for j, ra in enumerate(GOOD, start=1):
        sine_csv(archive / f"p{j}.csv", ra)
    result = evaluate_files(archive / "spec.yaml", [archive / f"p{j}.csv" for j in (1, 2, 3)])
    assert result.verdict == "conforming"  # Ra 0.19 ≤ 70 % of 0.4 (ISO 4288 16 % rule, first step)
    db = tmp_path / "r.sqlite"
    with RecordsStore.open(db) as store:
        store.append_check(result)
        forged = result.to_dict()
        forged["verdict"] = "nonconforming"  # a record written with a verdict its files do not give
        store.append_check(forged)
    status, out, _ = run_cli("records", "audit", "--db", db, "--archive", archive)
    assert status == 1
    assert out.splitlines()[0] == (
        "TAMPERED: record 2: recorded verdict 'nonconforming', re-evaluation gives 'conforming'"
    )
    assert out.splitlines()[1].startswith(
        "2 records, chain intact, 2 result(s) re-evaluated, 1 verdict(s) differ; head "
    )


def test_trend_cli(run_cli, tmp_path: Path):
    db = tmp_path / "r.sqlite"
    with RecordsStore.open(db) as store:
        for v in (0.30, 0.32, 0.28, 0.35, 0.25):
            store.append_check(make_result(v))
    svg = tmp_path / "t.svg"
    status, out, _ = run_cli(
        "records", "trend", "--db", db, "--part", "KFP-2041", "--param", "Ra", "--out", svg
    )
    assert status == 0
    # mean 0.30, s = √0.00145 = 0.03808, Cpu = (0.4 − 0.3)/(3s) = 0.8754 (NIST/SEMATECH 6.1.6)
    assert out.splitlines() == [
        "KFP-2041 Ra: 5 values, limits lower – upper 0.4 µm",
        "mean 0.3 µm, s 0.03808 µm, Cp –, Cpk 0.8754",
        "only 5 values: fewer than 25, too few for a meaningful capability index "
        "(common practice, no source); one limit only: one-sided Cpk, no Cp",
    ]
    assert "</svg>" in svg.read_text(encoding="utf-8")
