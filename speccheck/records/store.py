"""The append-only records store: every check and lot decision, hash-chained, in SQLite.

One SQLite file (stdlib :mod:`sqlite3`) holds a ``meta`` table (store format and version) and
a ``records`` table. Each record carries ``prev_hash`` (the ``record_hash`` of the record before
it, 64 zeros for the first) and ``record_hash`` = SHA-256 of ``prev_hash`` followed by the
record's canonical content (JSON, sorted keys, no whitespace; see :func:`record_hash`).

Two defences, for two kinds of change:

- Triggers refuse ``UPDATE`` and ``DELETE`` on both tables, so ordinary tools cannot change a
  record by mistake.
- The hash chain shows edits and deletions made around the triggers (a tool that drops them
  first): :meth:`RecordsStore.audit` recomputes every hash, checks every ``prev_hash`` and
  that ids run 1, 2, 3 … without gaps, and names the first record that does not fit.
  Removing the *last* records leaves a shorter chain that is still consistent; keep the
  latest ``record_hash`` somewhere else (a signed report, a ticket) to detect that.

Writers from several processes are serialised by ``BEGIN IMMEDIATE`` with a busy timeout in
WAL mode, so each appended record sees the true last record and the chain stays linear.
"""

from __future__ import annotations

import builtins
import csv
import datetime as _dt
import hashlib
import io
import json
import os
import sqlite3
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from speccheck._atomic import atomic_write_text, claim_output, note_input
from speccheck.errors import RecordsError

__all__ = [
    "DB_ENV",
    "DEFAULT_DB_NAME",
    "GENESIS_HASH",
    "Record",
    "AuditFinding",
    "AuditResult",
    "RecordsStore",
    "canonical_json",
    "record_hash",
    "default_db_path",
]

DB_ENV = "SPECCHECK_DB"
DEFAULT_DB_NAME = "speccheck-records.sqlite"
GENESIS_HASH = "0" * 64
STORE_FORMAT = "speccheck-records"
STORE_VERSION = "1"
BUSY_TIMEOUT_S = 60.0

_APPEND_ONLY = "BEGIN SELECT RAISE(ABORT, 'speccheck records are append-only: {op} refused'); END"
_SCHEMA: tuple[str, ...] = (
    "CREATE TABLE IF NOT EXISTS meta (key TEXT PRIMARY KEY, value TEXT NOT NULL)",
    """CREATE TABLE IF NOT EXISTS records (
        id              INTEGER PRIMARY KEY,
        time            TEXT NOT NULL,
        kind            TEXT NOT NULL,
        part            TEXT,
        spec_sha256     TEXT,
        profile_sha256s TEXT NOT NULL,
        verdict         TEXT NOT NULL,
        result_json     TEXT NOT NULL,
        report_sha256   TEXT,
        signer          TEXT,
        prev_hash       TEXT NOT NULL,
        record_hash     TEXT NOT NULL UNIQUE
    )""",
    "CREATE INDEX IF NOT EXISTS records_part ON records (part)",
    "CREATE TRIGGER IF NOT EXISTS records_no_update BEFORE UPDATE ON records "
    + _APPEND_ONLY.format(op="UPDATE"),
    "CREATE TRIGGER IF NOT EXISTS records_no_delete BEFORE DELETE ON records "
    + _APPEND_ONLY.format(op="DELETE"),
    "CREATE TRIGGER IF NOT EXISTS meta_no_update BEFORE UPDATE ON meta "
    + _APPEND_ONLY.format(op="UPDATE"),
    "CREATE TRIGGER IF NOT EXISTS meta_no_delete BEFORE DELETE ON meta "
    + _APPEND_ONLY.format(op="DELETE"),
)

#: The append-only triggers of the SQLite store; audit reports any that are gone.
SQLITE_GUARDS: tuple[str, ...] = (
    "records_no_update",
    "records_no_delete",
    "meta_no_update",
    "meta_no_delete",
)

_COLUMNS = (
    "id",
    "time",
    "kind",
    "part",
    "spec_sha256",
    "profile_sha256s",
    "verdict",
    "result_json",
    "report_sha256",
    "signer",
    "prev_hash",
    "record_hash",
)

_SELECT = f"SELECT {', '.join(_COLUMNS)} FROM records"
_INSERT = f"INSERT INTO records ({', '.join(_COLUMNS)}) VALUES ({', '.join('?' * len(_COLUMNS))})"


def canonical_json(obj: Any) -> str:
    """JSON with sorted keys and no whitespace: the form that is hashed and stored."""
    return json.dumps(
        obj, sort_keys=True, separators=(",", ":"), ensure_ascii=False, allow_nan=False
    )


def record_hash(prev_hash: str, content: Mapping[str, Any]) -> str:
    """SHA-256 (hex) of ``prev_hash`` (hex text) followed by ``canonical_json(content)``, UTF-8."""
    return hashlib.sha256((prev_hash + canonical_json(content)).encode("utf-8")).hexdigest()


def default_db_path(db: str | os.PathLike[str] | None = None) -> str | Path:
    """``db`` if given, else ``$SPECCHECK_DB``, else ``speccheck-records.sqlite`` here.

    A ``postgresql://`` URL comes back as text; ``sqlite:FILE`` and plain paths as a Path.
    """
    from speccheck.records.protocol import store_location

    return store_location(db or os.environ.get(DB_ENV) or DEFAULT_DB_NAME)


@dataclass(frozen=True)
class Record:
    """One stored record, as read back."""

    id: int
    time: str  # ISO 8601 UTC
    kind: str  # "check" or "lot" (or a caller's own kind of check)
    part: str | None
    spec_sha256: str | None  # of the spec file (check) or the inspection plan file (lot)
    profile_sha256s: tuple[str, ...]
    verdict: str  # check: conforming/nonconforming/undecided; lot: accept/reject/undecided
    result_json: str  # canonical JSON of the result
    report_sha256: str | None
    signer: str | None
    prev_hash: str
    record_hash: str

    @property
    def result(self) -> dict[str, Any]:
        return json.loads(self.result_json)

    def content(self) -> dict[str, Any]:
        """The fields covered by ``record_hash`` (everything but the two hashes)."""
        return {
            "id": self.id,
            "time": self.time,
            "kind": self.kind,
            "part": self.part,
            "spec_sha256": self.spec_sha256,
            "profile_sha256s": list(self.profile_sha256s),
            "verdict": self.verdict,
            "result_json": self.result_json,
            "report_sha256": self.report_sha256,
            "signer": self.signer,
        }

    def to_dict(self) -> dict[str, Any]:
        """Plain data for JSON export: the result is embedded as an object (None when the
        stored text is not JSON: a corrupt row, which ``records audit`` names)."""
        d = self.content()
        d.pop("result_json")
        try:
            d["result"] = self.result
        except (TypeError, ValueError):
            d["result"] = None
        d["prev_hash"] = self.prev_hash
        d["record_hash"] = self.record_hash
        return d


@dataclass(frozen=True)
class AuditFinding:
    """One problem found by the audit, naming the record."""

    record_id: int
    kind: str  # "edited", "deleted", "chain", "verdict", "not-reevaluated"
    message: str

    @property
    def tampering(self) -> bool:
        return self.kind != "not-reevaluated"


@dataclass
class AuditResult:
    """What :meth:`RecordsStore.audit` found."""

    path: str
    records: int
    head_hash: str
    findings: list[AuditFinding] = field(default_factory=list)
    reevaluated: int = 0
    integrity: str = "not run"  # the database engine's own check: "ok", or what it found
    anchors: int = 0  # checkpoints and signed records the chain was compared with

    @property
    def chain_intact(self) -> bool:
        """No record edited, deleted or out of chain."""
        return not any(
            f.kind in ("edited", "deleted", "chain", "corrupt", "anchor") for f in self.findings
        )

    @property
    def verdicts_differ(self) -> int:
        return sum(f.kind == "verdict" for f in self.findings)

    @property
    def intact(self) -> bool:
        """Chain intact and every re-evaluated verdict reproduced."""
        return not any(f.tampering for f in self.findings)

    def to_dict(self) -> dict[str, Any]:
        return {
            "path": self.path,
            "records": self.records,
            "head_hash": self.head_hash,
            "intact": self.intact,
            "chain_intact": self.chain_intact,
            "reevaluated": self.reevaluated,
            "integrity": self.integrity,
            "anchors": self.anchors,
            "findings": [
                {"record": f.record_id, "kind": f.kind, "message": f.message} for f in self.findings
            ],
        }


def _utc_now() -> str:
    now = _dt.datetime.now(_dt.UTC)
    return now.isoformat(timespec="microseconds").replace("+00:00", "Z")


def _row_to_record(row: sqlite3.Row | tuple) -> Record:
    d = dict(zip(_COLUMNS, row, strict=True))
    try:
        shas = tuple(json.loads(d["profile_sha256s"]))
    except (TypeError, ValueError):
        shas = ()
    d["profile_sha256s"] = shas
    return Record(**d)


def _chained_row(last: Any, fields: Mapping[str, Any]) -> tuple[Any, ...]:
    """The row to insert after ``last`` (its ``(id, record_hash)``, None for an empty store).

    Called inside the backend's writing transaction, so ``last`` is the true last record.
    """
    new_id, prev = (int(last[0]) + 1, str(last[1])) if last else (1, GENESIS_HASH)
    rec = Record(id=new_id, time=_utc_now(), prev_hash=prev, record_hash="", **fields)
    h = record_hash(prev, rec.content())
    row = {**rec.content(), "profile_sha256s": json.dumps(list(rec.profile_sha256s))}
    row.update(prev_hash=prev, record_hash=h)
    return tuple(row[c] for c in _COLUMNS)


def _verbatim_row(rec: Record) -> tuple[Any, ...]:
    row = {**rec.content(), "profile_sha256s": json.dumps(list(rec.profile_sha256s))}
    row.update(prev_hash=rec.prev_hash, record_hash=rec.record_hash)
    return tuple(row[c] for c in _COLUMNS)


class RecordsStore:
    """An open records database. Use :meth:`open`; close with :meth:`close` or ``with``."""

    def __init__(self, path: Path | str, conn: Any):
        self.path = path
        self.location = str(path)
        self._conn = conn

    # -- opening -------------------------------------------------------------------------

    @classmethod
    def open(cls, path: str | os.PathLike[str], *, create: bool = True) -> RecordsStore:
        """Open (and with ``create`` make) the records store at ``path``.

        Raises
        ------
        RecordsError
            The file does not exist (and ``create`` is False), is not SQLite, or is an SQLite
            database that is not a speccheck records store.
        """
        from speccheck.records.protocol import is_postgres_url

        if is_postgres_url(path):
            from speccheck.records.postgres import PostgresStore

            return PostgresStore.connect(str(path), create=create)
        p = Path(path)
        if create:
            claim_output(p, "records store")
        else:
            note_input(p, "records store")
        if not p.exists() and not create:
            raise RecordsError("no records store here (nothing has been recorded yet)", path=str(p))
        if not p.exists() and not p.parent.is_dir() and str(p.parent):
            raise RecordsError(f"folder {str(p.parent)!r} does not exist", path=str(p))
        existed = p.exists()
        try:
            conn = sqlite3.connect(p, timeout=BUSY_TIMEOUT_S, isolation_level=None)
        except sqlite3.Error as exc:
            raise _sqlite_error(exc, p, "cannot open the records store") from None
        store = cls(p, conn)
        try:
            store._prepare(create=create)
        except BaseException:
            conn.close()
            if not existed:  # a store this run began to make is not left half-made
                for leftover in (p, Path(f"{p}-wal"), Path(f"{p}-shm"), Path(f"{p}-journal")):
                    leftover.unlink(missing_ok=True)
            raise
        return store

    def _prepare(self, *, create: bool) -> None:
        c = self._conn
        try:
            tables = {r[0] for r in c.execute("SELECT name FROM sqlite_master WHERE type='table'")}
        except sqlite3.Error as exc:
            raise _sqlite_error(exc, self.path, "cannot read the records store") from None
        if tables and "meta" not in tables:
            raise RecordsError(
                "not a speccheck records store (an SQLite database of something else)",
                path=str(self.path),
            )
        try:
            if not tables:
                if not create:
                    raise RecordsError(
                        "not a speccheck records store (empty database)", path=str(self.path)
                    )
                c.execute("PRAGMA journal_mode=WAL")
                c.execute("BEGIN IMMEDIATE")
                try:
                    for statement in _SCHEMA:
                        c.execute(statement)
                    c.execute(
                        "INSERT OR IGNORE INTO meta (key, value) VALUES ('format', ?)",
                        (STORE_FORMAT,),
                    )
                    c.execute(
                        "INSERT OR IGNORE INTO meta (key, value) VALUES ('version', ?)",
                        (STORE_VERSION,),
                    )
                    c.execute("COMMIT")
                except BaseException:
                    c.execute("ROLLBACK")
                    raise
            meta = dict(c.execute("SELECT key, value FROM meta").fetchall())
        except sqlite3.Error as exc:
            raise _sqlite_error(exc, self.path, "cannot read the records store") from None
        if meta.get("format") != STORE_FORMAT or "records" not in {
            r[0] for r in c.execute("SELECT name FROM sqlite_master WHERE type='table'")
        }:
            raise RecordsError(
                "not a speccheck records store (no store format marker)", path=str(self.path)
            )
        if meta.get("version") != STORE_VERSION:
            raise RecordsError(
                f"records store version {meta.get('version')!r} is not supported "
                f"(this speccheck reads {STORE_VERSION})",
                path=str(self.path),
            )

    def close(self) -> None:
        self._conn.close()

    def __enter__(self) -> RecordsStore:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    # -- appending -----------------------------------------------------------------------

    def append(
        self,
        *,
        kind: str,
        part: str | None,
        spec_sha256: str | None,
        profile_sha256s: list[str] | tuple[str, ...],
        verdict: str,
        result: Mapping[str, Any],
        report_sha256: str | None = None,
        signer: str | None = None,
    ) -> int:
        """Append one record and return its id (the general form of the two below)."""
        try:
            result_json = canonical_json(result)
        except ValueError as exc:  # NaN or infinity in a result
            raise RecordsError(
                f"result cannot be stored as JSON ({exc})", path=str(self.path)
            ) from None
        fields = {
            "kind": kind,
            "part": part,
            "spec_sha256": spec_sha256,
            "profile_sha256s": tuple(profile_sha256s),
            "verdict": verdict,
            "result_json": result_json,
            "report_sha256": report_sha256,
            "signer": signer,
        }
        return self._append_fields(fields)

    def _append_fields(self, fields: Mapping[str, Any]) -> int:
        """Insert the next record of the chain in one writing transaction; return its id."""
        c = self._conn
        try:
            c.execute("BEGIN IMMEDIATE")
        except sqlite3.Error as exc:
            raise _sqlite_error(exc, self.path, "cannot write to the records store") from None
        try:
            last = c.execute(
                "SELECT id, record_hash FROM records ORDER BY id DESC LIMIT 1"
            ).fetchone()
            values = _chained_row(last, fields)
            c.execute(_INSERT, values)
            c.execute("COMMIT")
        except BaseException as exc:
            c.execute("ROLLBACK")
            if isinstance(exc, sqlite3.Error):
                raise RecordsError(
                    f"cannot write to the records store ({exc})", path=str(self.path)
                ) from None
            raise
        return int(values[0])

    def _insert_verbatim(self, records: list[Record]) -> None:
        """Insert records exactly as they are (ids, times, hashes), in one transaction."""
        c = self._conn
        try:
            c.execute("BEGIN IMMEDIATE")
            try:
                c.executemany(_INSERT, [_verbatim_row(r) for r in records])
                c.execute("COMMIT")
            except BaseException:
                c.execute("ROLLBACK")
                raise
        except sqlite3.Error as exc:
            raise _sqlite_error(exc, self.path, "cannot write to the records store") from None

    def append_check(
        self,
        result: Any,
        *,
        report_sha256: str | None = None,
        signer: str | None = None,
        kind: str = "check",
    ) -> int:
        """Append a :class:`~speccheck.evaluation.result.CheckResult` (or its ``to_dict()``)."""
        d = result.to_dict() if hasattr(result, "to_dict") else dict(result)
        spec = d.get("spec") or {}
        shas = [m.get("sha256") for m in d.get("measurements", []) if m.get("sha256")]
        return self.append(
            kind=kind,
            part=spec.get("part"),
            spec_sha256=spec.get("sha256"),
            profile_sha256s=shas,
            verdict=d["verdict"],
            result=d,
            report_sha256=report_sha256,
            signer=signer,
        )

    def append_lot(
        self,
        lot: Any,
        *,
        report_sha256: str | None = None,
        signer: str | None = None,
    ) -> int:
        """Append a lot result (``speccheck.lot.LotResult`` or its ``to_dict()``).

        The record's ``part`` is the lot's part number, ``spec_sha256`` the inspection plan's
        SHA-256, ``verdict`` the lot disposition (accept, reject, undecided) and the profile
        hashes those of every sampled part.
        """
        d = lot.to_dict() if hasattr(lot, "to_dict") else dict(lot)
        shas: list[str] = []
        for part in d.get("parts", []):
            for check in part.get("surfaces", {}).values():
                shas += [m["sha256"] for m in check.get("measurements", []) if m.get("sha256")]
        return self.append(
            kind="lot",
            part=(d.get("lot") or {}).get("part"),
            spec_sha256=(d.get("plan") or {}).get("sha256"),
            profile_sha256s=shas,
            verdict=d["disposition"],
            result=d,
            report_sha256=report_sha256,
            signer=signer,
        )

    # -- reading -------------------------------------------------------------------------

    def _rows(self, sql: str, params: tuple = ()) -> Iterator[Record]:
        try:
            for row in self._conn.execute(sql, params):
                yield _row_to_record(row)
        except sqlite3.Error as exc:
            raise _sqlite_error(exc, self.path, "cannot read the records store") from None

    def list(
        self,
        *,
        kind: str | None = None,
        part: str | None = None,
        verdict: str | None = None,
        limit: int | None = None,
    ) -> list[Record]:
        """Records in id order, optionally only those of one kind, part or verdict."""
        where: list[str] = []
        params: list[Any] = []
        for col, val in (("kind", kind), ("part", part), ("verdict", verdict)):
            if val is not None:
                where.append(f"{col} = ?")
                params.append(val)
        sql = _SELECT
        if where:
            sql += " WHERE " + " AND ".join(where)
        sql += " ORDER BY id"
        if limit is not None:
            newest_first = sql.replace(" ORDER BY id", " ORDER BY id DESC")
            sql = f"SELECT * FROM ({newest_first} LIMIT ?) AS newest ORDER BY id"
            params.append(int(limit))
        return list(self._rows(sql, tuple(params)))

    def get(self, record_id: int) -> Record:
        """The record with this id; :class:`RecordsError` naming it if there is none or it is
        corrupt (``records audit`` says more)."""
        rows = list(self._rows(f"{_SELECT} WHERE id = ?", (int(record_id),)))
        if not rows:
            raise RecordsError("no such record", path=str(self.path), where=f"record {record_id}")
        corrupt = _corruption(rows[0])
        if corrupt:
            raise RecordsError(
                f"corrupt: {corrupt}", path=str(self.path), where=f"record {record_id}"
            )
        return rows[0]

    def chain_head(self) -> dict[str, Any]:
        """``{"records": n, "head_hash": h}``: how many records the store holds and the last
        record's hash (64 zeros when it is empty); what a signed record or checkpoint carries."""
        row = self._conn.execute(
            "SELECT COUNT(*), (SELECT record_hash FROM records ORDER BY id DESC LIMIT 1) "
            "FROM records"
        ).fetchone()
        return {"records": int(row[0]), "head_hash": str(row[1] or GENESIS_HASH)}

    def head_hash(self) -> str:
        """``record_hash`` of the last record (64 zeros when the store is empty)."""
        row = self._conn.execute(
            "SELECT record_hash FROM records ORDER BY id DESC LIMIT 1"
        ).fetchone()
        return row[0] if row else GENESIS_HASH

    # -- export --------------------------------------------------------------------------

    def export_csv(self, path: str | os.PathLike[str]) -> int:
        """Write every record as CSV (one row per record, result JSON in the last column)."""
        buf = io.StringIO()
        w = csv.writer(buf, lineterminator="\n")
        w.writerow(_COLUMNS)
        n = 0
        for r in self._rows(f"{_SELECT} ORDER BY id"):
            w.writerow(
                [
                    r.id,
                    r.time,
                    r.kind,
                    r.part or "",
                    r.spec_sha256 or "",
                    " ".join(r.profile_sha256s),
                    r.verdict,
                    r.result_json,
                    r.report_sha256 or "",
                    r.signer or "",
                    r.prev_hash,
                    r.record_hash,
                ]
            )
            n += 1
        atomic_write_text(Path(path), buf.getvalue())
        return n

    def export_json(self, path: str | os.PathLike[str]) -> int:
        """Write every record as a JSON document ``{"records": [...]}`` (results embedded)."""
        records = [r.to_dict() for r in self._rows(f"{_SELECT} ORDER BY id")]
        doc = {
            "format": STORE_FORMAT,
            "version": int(STORE_VERSION),
            "head_hash": self.head_hash(),
            "records": records,
        }
        text = json.dumps(doc, indent=2, ensure_ascii=False, allow_nan=False) + "\n"
        if str(path) == "-":
            import sys

            sys.stdout.write(text)
        else:
            atomic_write_text(Path(path), text)
        return len(records)

    # -- audit ---------------------------------------------------------------------------

    def audit(self, archive_dir: str | os.PathLike[str] | None = None) -> AuditResult:
        """Check the hash chain and, given an archive of the original files, the verdicts.

        Parameters
        ----------
        archive_dir:
            A folder holding the original spec and profile files (any names, any sub-folders;
            they are found by SHA-256). Each check record whose files are all there is
            evaluated again and its verdict compared; lot records re-evaluate each part's
            surfaces the same way.

        Returns
        -------
        AuditResult
            ``intact`` is False when a record was edited, deleted, the chain is broken or a
            verdict does not reproduce; each finding names the record.
        """
        rows = list(self._rows(f"{_SELECT} ORDER BY id"))
        out = AuditResult(
            path=str(self.path),
            records=len(rows),
            head_hash=rows[-1].record_hash if rows else GENESIS_HASH,
        )
        expected_id, prev_hash = 1, GENESIS_HASH
        for r in rows:
            if r.id != expected_id:
                missing = (
                    f"record {expected_id}"
                    if r.id == expected_id + 1
                    else f"records {expected_id}–{r.id - 1}"
                )
                out.findings.append(
                    AuditFinding(
                        r.id, "deleted", f"{missing} missing before record {r.id} (deleted)"
                    )
                )
            corrupt = _corruption(r)
            if corrupt:
                out.findings.append(
                    AuditFinding(r.id, "corrupt", f"record {r.id} is corrupt: {corrupt}")
                )
                expected_id, prev_hash = _next_id(r.id, expected_id), str(r.record_hash)
                continue
            computed = record_hash(r.prev_hash, r.content())
            if computed != r.record_hash:
                out.findings.append(
                    AuditFinding(
                        r.id, "edited", f"record {r.id} does not match its record_hash (edited)"
                    )
                )
            elif r.prev_hash != prev_hash and r.id == expected_id:
                out.findings.append(
                    AuditFinding(
                        r.id - 1,
                        "chain",
                        f"record {r.id - 1} was altered or replaced "
                        f"(record {r.id}'s prev_hash does not match it)",
                    )
                )
            expected_id, prev_hash = r.id + 1, r.record_hash
        self._check_guards(out)
        if archive_dir is not None:
            _reevaluate([r for r in rows if not _corruption(r)], Path(archive_dir), out)
        return out

    def _check_guards(self, out: AuditResult) -> None:
        """The engine's integrity check and the append-only triggers, as findings on record 0."""
        problems = self.integrity_problems()
        if problems is None:
            out.integrity = "not available for this kind of store"
        else:
            out.integrity = "ok" if not problems else "; ".join(problems)
        if problems:
            out.findings.insert(
                0, AuditFinding(0, "integrity", "integrity check failed: " + out.integrity)
            )
        missing = self.missing_guards()
        if missing:
            out.findings.insert(
                0,
                AuditFinding(
                    0,
                    "guards",
                    "append-only triggers missing: "
                    + ", ".join(missing)
                    + " (records could have been changed in place; the chain shows whether)",
                ),
            )

    def missing_guards(self) -> builtins.list[str]:
        """Names of append-only triggers that are not (or no longer) in the database."""
        rows = self._conn.execute("SELECT name FROM sqlite_master WHERE type = 'trigger'")
        present = {r[0] for r in rows}
        return [name for name in SQLITE_GUARDS if name not in present]

    def integrity_problems(self) -> builtins.list[str] | None:
        """What SQLite's ``PRAGMA integrity_check`` reports (empty when it says ok)."""
        try:
            rows = [str(r[0]) for r in self._conn.execute("PRAGMA integrity_check(20)")]
        except sqlite3.DatabaseError as exc:
            return [f"cannot run ({exc})"]
        return [] if rows == ["ok"] else rows


#: SQLite result codes (sqlite.org/rescode.html) that are the file's or the disk's condition.
_SQLITE_REASONS = {
    13: "no space left on the device (or the database is full)",  # SQLITE_FULL
    8: "read-only: the file or its folder cannot be written",  # SQLITE_READONLY
    3: "permission denied",  # SQLITE_PERM
    23: "permission denied",  # SQLITE_AUTH
    14: "the file or its folder cannot be opened",  # SQLITE_CANTOPEN
    10: "input/output error of the device",  # SQLITE_IOERR
}


def _sqlite_error(exc: sqlite3.Error, path: str | os.PathLike[str], doing: str) -> RecordsError:
    """One line for an SQLite failure: a file that is not SQLite says so, a full disk says so."""
    code = getattr(exc, "sqlite_errorcode", None)
    primary = code & 0xFF if isinstance(code, int) else None
    if primary in (26, 11):  # SQLITE_NOTADB, SQLITE_CORRUPT
        what = "not an SQLite database" if primary == 26 else f"damaged database: {exc}"
        return RecordsError(f"not a speccheck records store ({what})", path=str(path))
    reason = _SQLITE_REASONS.get(primary or -1) or str(exc)
    if primary in (8, 10, 13, 14):
        reason = _disk_reason(Path(path)) or reason
    return RecordsError(f"{doing}: {reason}", path=str(path))


def _disk_reason(path: Path) -> str | None:
    """What of the file system explains a failure on ``path``: full, read-only, or not
    writable by this user (SQLite's own codes do not tell these apart); None if none."""
    here = path if path.exists() else path.parent
    try:
        st = os.statvfs(here)
    except OSError:
        return None
    if st.f_flag & os.ST_RDONLY:
        return "read-only file system"
    if st.f_bavail == 0:
        return "no space left on the device"
    if not os.access(here, os.W_OK):
        return "permission denied"
    return None


def _next_id(record_id: Any, expected: int) -> int:
    return record_id + 1 if isinstance(record_id, int) else expected + 1


def _corruption(r: Record) -> str | None:
    """Why a row cannot be a record as written (wrong types, unreadable JSON), or None."""
    text_fields = ("time", "kind", "verdict", "result_json", "prev_hash", "record_hash")
    if not isinstance(r.id, int):
        return f"id is {r.id!r}, not a number"
    for name in text_fields:
        if not isinstance(getattr(r, name), str):
            return f"{name} is not text"
    for name in ("part", "spec_sha256", "report_sha256", "signer"):
        if getattr(r, name) is not None and not isinstance(getattr(r, name), str):
            return f"{name} is not text"
    try:
        result = json.loads(r.result_json)
    except ValueError:
        return "its result is not valid JSON"
    if not isinstance(result, dict):
        return "its result is not a JSON object"
    return None


def _sha256_file(path: Path) -> str:
    h = hashlib.sha256()
    with path.open("rb") as f:
        for chunk in iter(lambda: f.read(1 << 20), b""):
            h.update(chunk)
    return h.hexdigest()


def _archive_index(folder: Path) -> dict[str, Path]:
    if not folder.is_dir():
        raise RecordsError("archive folder does not exist", path=str(folder))
    index: dict[str, Path] = {}
    for p in sorted(folder.rglob("*")):
        if p.is_file():
            index.setdefault(_sha256_file(p), p)
    return index


def _reevaluate(rows: list[Record], archive: Path, out: AuditResult) -> None:
    index = _archive_index(archive)
    for r in rows:
        try:
            result = r.result
        except ValueError:
            continue  # already reported as edited if the hash does not match
        if r.kind == "lot":
            checks = [
                (f"part {p.get('serial')}, surface {name}", check)
                for p in result.get("parts", [])
                for name, check in p.get("surfaces", {}).items()
            ]
        else:
            checks = [("", result)]
        for label, check in checks:
            _reevaluate_one(r.id, label, check, index, out)


_FORMATS = {"csv", "tsv", "txt", "x3p", "sdf"}


def _reevaluate_one(
    record_id: int, label: str, check: dict[str, Any], index: dict[str, Path], out: AuditResult
) -> None:
    from speccheck.errors import SpeccheckError

    what = f"record {record_id}" + (f" ({label})" if label else "")
    spec_sha = (check.get("spec") or {}).get("sha256")
    meas = check.get("measurements", [])
    wanted = [spec_sha] + [m.get("sha256") for m in meas]
    missing = [s for s in wanted if not s or s not in index]
    if missing:
        out.findings.append(
            AuditFinding(
                record_id, "not-reevaluated", f"{what}: {len(missing)} file(s) not in the archive"
            )
        )
        return
    formats = {m.get("format") for m in meas}
    fmt = formats.pop() if len(formats) == 1 else None
    fmt = fmt if fmt in _FORMATS else None
    try:
        from speccheck.evaluation.evaluator import evaluate_files

        again = evaluate_files(index[str(spec_sha)], [index[m["sha256"]] for m in meas], fmt=fmt)
    except SpeccheckError as exc:
        out.findings.append(AuditFinding(record_id, "not-reevaluated", f"{what}: {exc.one_line()}"))
        return
    out.reevaluated += 1
    if again.verdict != check.get("verdict"):
        out.findings.append(
            AuditFinding(
                record_id,
                "verdict",
                f"{what}: recorded verdict {check.get('verdict')!r}, "
                f"re-evaluation gives {again.verdict!r}",
            )
        )
