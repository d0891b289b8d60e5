"""The append-only records store: hash chain, triggers, concurrency, tampering, export."""

from __future__ import annotations

import csv
import hashlib
import json
import multiprocessing
import sqlite3
from pathlib import Path

import pytest

from speccheck.errors import RecordsError
from speccheck.evaluation.result import (
    CheckResult,
    MeasurementRecord,
    RequirementResult,
    ValueRecord,
)
from speccheck.records.store import (
    GENESIS_HASH,
    RecordsStore,
    canonical_json,
    default_db_path,
    record_hash,
)


def make_result(
    ra_um: float, *, part: str = "KFP-2041", verdict: str = "conforming"
) -> CheckResult:
    """A small CheckResult built by hand (the store only reads its fields)."""
    sha = hashlib.sha256(f"profile {ra_um}".encode()).hexdigest()
    req = RequirementResult(
        text="Ra 0.4",
        parameter="Ra",
        upper=0.4,
        lower=None,
        unit="µm",
        rule="16%",
        decision_rule="simple",
        uncertainty=None,
        verdict=verdict,  # type: ignore[arg-type]
        reason=None,
        explanation="",
        next=None,
        values=[ValueRecord(measurement=0, value=ra_um, unit="µm", zone="within")],
    )
    meas = MeasurementRecord(
        index=0,
        path="p.csv",
        sha256=sha,
        format="csv",
        points=1000,
        spacing_um=0.5,
        length_mm=0.5,
        status="evaluated",
    )
    return CheckResult(
        verdict=verdict,  # type: ignore[arg-type]
        reason=None,
        requirements=[req],
        measurements=[meas],
        spec={"path": "s.yaml", "sha256": "a" * 64, "part": part},
        software={"name": "speccheck", "version": "test"},
        created="2026-01-01T00:00:00Z",
    )


def test_canonical_json_and_hash_definition():
    # The record hash is SHA-256(prev_hash ‖ canonical JSON), as documented; computed here with
    # hashlib directly on the expected text.
    assert canonical_json({"b": 1, "a": [1, 2]}) == '{"a":[1,2],"b":1}'
    expected = hashlib.sha256(("0" * 64 + '{"a":1}').encode()).hexdigest()
    assert record_hash(GENESIS_HASH, {"a": 1}) == expected


def test_append_get_list_and_chain(tmp_path: Path):
    db = tmp_path / "r.sqlite"
    with RecordsStore.open(db) as store:
        ids = [store.append_check(make_result(0.1 * i)) for i in range(1, 4)]
        assert ids == [1, 2, 3]
        recs = store.list()
        assert [r.id for r in recs] == [1, 2, 3]
        assert recs[0].prev_hash == GENESIS_HASH
        assert recs[1].prev_hash == recs[0].record_hash
        assert recs[2].record_hash == record_hash(recs[2].prev_hash, recs[2].content())
        r2 = store.get(2)
        assert r2.part == "KFP-2041" and r2.spec_sha256 == "a" * 64 and r2.verdict == "conforming"
        assert CheckResult.from_dict(r2.result).requirements[0].values[0].value == pytest.approx(
            0.2
        )
        assert r2.result_json == canonical_json(make_result(0.2).to_dict())
        assert store.list(limit=2)[0].id == 2
        assert store.audit().intact
    # reopened: the chain continues
    with RecordsStore.open(db) as store:
        assert store.append_check(make_result(0.5), report_sha256="b" * 64, signer="QA") == 4
        assert store.get(4).report_sha256 == "b" * 64
        assert store.audit().records == 4


def test_triggers_refuse_update_and_delete(tmp_path: Path):
    db = tmp_path / "r.sqlite"
    with RecordsStore.open(db) as store:
        store.append_check(make_result(0.1))
    conn = sqlite3.connect(db)
    with pytest.raises(sqlite3.IntegrityError, match="append-only: UPDATE refused"):
        conn.execute("UPDATE records SET verdict = 'nonconforming' WHERE id = 1")
    with pytest.raises(sqlite3.IntegrityError, match="append-only: DELETE refused"):
        conn.execute("DELETE FROM records WHERE id = 1")
    conn.close()


def _drop_triggers(db: Path) -> sqlite3.Connection:
    """What an attacker with a general SQLite tool would do first."""
    conn = sqlite3.connect(db, isolation_level=None)
    for name in ("records_no_update", "records_no_delete"):
        conn.execute(f"DROP TRIGGER {name}")
    return conn


def _store_with(tmp_path: Path, n: int) -> Path:
    db = tmp_path / "r.sqlite"
    with RecordsStore.open(db) as store:
        for i in range(n):
            store.append_check(make_result(0.1 + 0.01 * i))
    return db


def test_audit_detects_edited_row(tmp_path: Path):
    db = _store_with(tmp_path, 6)
    conn = _drop_triggers(db)
    conn.execute("UPDATE records SET verdict = 'nonconforming' WHERE id = 4")
    conn.close()
    with RecordsStore.open(db) as store:
        res = store.audit()
    assert not res.intact
    assert [(f.record_id, f.kind) for f in res.findings] == [(0, "guards"), (4, "edited")]
    assert res.findings[1].message == "record 4 does not match its record_hash (edited)"


def test_audit_detects_edit_with_rehash(tmp_path: Path):
    # An attacker who also recomputes record 3's own hash breaks record 4's link.
    db = _store_with(tmp_path, 5)
    conn = _drop_triggers(db)
    with RecordsStore.open(db) as store:
        r3 = store.get(3)
    content = {**r3.content(), "verdict": "nonconforming"}
    conn.execute(
        "UPDATE records SET verdict = ?, record_hash = ? WHERE id = 3",
        ("nonconforming", record_hash(r3.prev_hash, content)),
    )
    conn.close()
    with RecordsStore.open(db) as store:
        res = store.audit()
    assert [(f.record_id, f.kind) for f in res.findings] == [(0, "guards"), (3, "chain")]
    assert "record 3 was altered or replaced" in res.findings[1].message


def test_audit_detects_deleted_row(tmp_path: Path):
    db = _store_with(tmp_path, 6)
    conn = _drop_triggers(db)
    conn.execute("DELETE FROM records WHERE id = 3")
    conn.close()
    with RecordsStore.open(db) as store:
        res = store.audit()
    assert not res.intact
    assert [(f.record_id, f.kind) for f in res.findings] == [(0, "guards"), (4, "deleted")]
    assert res.findings[1].message == "record 3 missing before record 4 (deleted)"


def _writer(db: str, worker: int, count: int) -> None:
    with RecordsStore.open(db) as store:
        for i in range(count):
            store.append_check(make_result(worker + i / 1000, part=f"W{worker}"))


def test_concurrent_writers_lose_nothing(tmp_path: Path):
    # 4 processes x 200 records: every record present, ids 1..800, chain intact.
    db = tmp_path / "r.sqlite"
    RecordsStore.open(db).close()  # created once; the writers then race on appends only
    ctx = multiprocessing.get_context("spawn")
    procs = [ctx.Process(target=_writer, args=(str(db), w, 200)) for w in range(4)]
    for p in procs:
        p.start()
    for p in procs:
        p.join(timeout=300)
        assert p.exitcode == 0
    with RecordsStore.open(db) as store:
        recs = store.list()
        assert [r.id for r in recs] == list(range(1, 801))
        for w in range(4):
            assert len(store.list(part=f"W{w}")) == 200
        res = store.audit()
    assert res.intact and res.records == 800


def test_concurrent_writers_create_the_store(tmp_path: Path):
    # The first writers race on creating the schema too.
    db = tmp_path / "new.sqlite"
    ctx = multiprocessing.get_context("spawn")
    procs = [ctx.Process(target=_writer, args=(str(db), w, 20)) for w in range(4)]
    for p in procs:
        p.start()
    for p in procs:
        p.join(timeout=300)
        assert p.exitcode == 0
    with RecordsStore.open(db) as store:
        assert store.audit().intact and len(store.list()) == 80


def test_export_csv_and_json(tmp_path: Path):
    db = _store_with(tmp_path, 3)
    with RecordsStore.open(db) as store:
        assert store.export_csv(tmp_path / "r.csv") == 3
        assert store.export_json(tmp_path / "r.json") == 3
        recs = store.list()
    with (tmp_path / "r.csv").open(encoding="utf-8", newline="") as f:
        rows = list(csv.DictReader(f))
    assert [int(r["id"]) for r in rows] == [1, 2, 3]
    assert [r["record_hash"] for r in rows] == [r.record_hash for r in recs]
    assert json.loads(rows[1]["result_json"]) == recs[1].result
    doc = json.loads((tmp_path / "r.json").read_text(encoding="utf-8"))
    assert doc["head_hash"] == recs[-1].record_hash
    # the JSON export carries everything needed to recompute the chain
    prev = GENESIS_HASH
    for d in doc["records"]:
        content = {k: d[k] for k in d if k not in ("result", "prev_hash", "record_hash")}
        content["result_json"] = canonical_json(d["result"])
        assert d["prev_hash"] == prev
        assert record_hash(prev, content) == d["record_hash"]
        prev = d["record_hash"]


def test_not_a_records_store(tmp_path: Path):
    junk = tmp_path / "junk.sqlite"
    junk.write_bytes(b"this is not sqlite at all" * 100)
    with pytest.raises(RecordsError, match="not a speccheck records store"):
        RecordsStore.open(junk)
    other = tmp_path / "other.sqlite"
    conn = sqlite3.connect(other)
    conn.execute("CREATE TABLE t (x)")
    conn.commit()
    conn.close()
    with pytest.raises(RecordsError, match="an SQLite database of something else"):
        RecordsStore.open(other)
    with pytest.raises(RecordsError, match="no records store here"):
        RecordsStore.open(tmp_path / "absent.sqlite", create=False)
    assert not (tmp_path / "absent.sqlite").exists()


def test_get_missing_record_names_it(tmp_path: Path):
    db = _store_with(tmp_path, 1)
    with RecordsStore.open(db) as store, pytest.raises(RecordsError) as info:
        store.get(7)
    assert info.value.one_line() == f"{db}:record 7: no such record"


def test_default_db_path(monkeypatch):
    monkeypatch.delenv("SPECCHECK_DB", raising=False)
    assert default_db_path() == Path("speccheck-records.sqlite")
    monkeypatch.setenv("SPECCHECK_DB", "/x/y.sqlite")
    assert default_db_path() == Path("/x/y.sqlite")
    assert default_db_path("z.sqlite") == Path("z.sqlite")


def test_audit_reports_missing_triggers_by_name(tmp_path: Path):
    db = _store_with(tmp_path, 2)
    _drop_triggers(db).close()
    with RecordsStore.open(db) as store:
        res = store.audit()
    assert res.chain_intact and not res.intact and res.integrity == "ok"
    assert res.findings[0].message.startswith(
        "append-only triggers missing: records_no_update, records_no_delete"
    )


def test_audit_names_a_corrupt_row(tmp_path: Path):
    """A row whose result is not JSON (a torn write or a hand edit): a finding, no traceback."""
    db = _store_with(tmp_path, 3)
    conn = _drop_triggers(db)
    conn.execute('UPDATE records SET result_json = \'{"verdict": "conf\' WHERE id = 2')
    conn.execute("UPDATE records SET signer = x'00ff' WHERE id = 3")
    conn.close()
    with RecordsStore.open(db) as store:
        res = store.audit()
    assert [(f.record_id, f.kind) for f in res.findings][1:] == [(2, "corrupt"), (3, "corrupt")]
    assert res.findings[1].message == "record 2 is corrupt: its result is not valid JSON"
    assert res.findings[2].message == "record 3 is corrupt: signer is not text"
    assert not res.chain_intact
    with RecordsStore.open(db) as store:
        assert store.list()[1].to_dict()["result"] is None  # listed, not a traceback
        with pytest.raises(RecordsError, match="corrupt: its result is not valid JSON"):
            store.get(2)


def test_audit_runs_sqlite_integrity_check(tmp_path: Path):
    """Damage inside the file: PRAGMA integrity_check (SQLite documentation, 'PRAGMA
    integrity_check') reports it, and audit shows it as a finding."""
    db = _store_with(tmp_path, 40)
    conn = sqlite3.connect(db, isolation_level=None)
    conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    root = conn.execute("SELECT rootpage FROM sqlite_master WHERE name = 'records_part'")
    page = root.fetchone()[0]
    size = conn.execute("PRAGMA page_size").fetchone()[0]
    conn.close()
    data = bytearray(db.read_bytes())
    start = (page - 1) * size
    data[start + 8 : start + size] = bytes(size - 8)  # the part index page: cells zeroed
    db.write_bytes(bytes(data))
    with RecordsStore.open(db) as store:
        res = store.audit()
    assert res.integrity != "ok" and not res.intact
    assert any(f.kind == "integrity" for f in res.findings)
