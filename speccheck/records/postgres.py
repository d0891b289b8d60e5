"""The records store on a PostgreSQL server: one store for every bench of a plant.

Same table, same canonical content, same hash chain as the SQLite store
(:mod:`speccheck.records.store`); what differs is how the database keeps it:

- **Appends** run in one ``SERIALIZABLE`` transaction, entered only while holding an advisory
  lock that one appender at a time can hold (readers are not blocked): it reads the true last
  record and inserts the next link of the chain. A serialisation failure is retried.
- **Append-only**, twice over: triggers refuse ``UPDATE``, ``DELETE`` and ``TRUNCATE`` on both
  tables for everyone, the owner included; and benches connect as a role that was granted only
  ``SELECT`` and ``INSERT`` (:meth:`PostgresStore.grant_writer`, ``records writer-role``).
- **Audit** checks, as for SQLite, that the triggers are still there.

psycopg 3 is imported only here, and only when a ``postgresql://`` store is opened.
"""

from __future__ import annotations

import re
from collections.abc import Iterator, Mapping
from contextlib import contextmanager
from typing import Any

from speccheck.errors import RecordsError
from speccheck.records.store import (
    _COLUMNS,
    _SCHEMA,
    STORE_FORMAT,
    STORE_VERSION,
    Record,
    RecordsStore,
    _chained_row,
    _row_to_record,
    _verbatim_row,
)

__all__ = ["PostgresStore", "GUARD_TRIGGERS", "redact_url"]

_INSERT = (
    f"INSERT INTO records ({', '.join(_COLUMNS)}) VALUES ({', '.join(['%s'] * len(_COLUMNS))})"
)
_RETRIES = 20
_SCHEMA_LOCK_KEY = 0x5EC_C4EC  # pg_advisory_xact_lock key serialising schema creation
_APPEND_LOCK_KEY = 0x5EC_C4ED  # pg_advisory_lock key serialising appends

_GUARD_FUNCTION = """
CREATE OR REPLACE FUNCTION speccheck_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    RAISE EXCEPTION 'speccheck records are append-only: % refused', TG_OP;
END $$"""

#: (trigger name, table, event, level): every one must exist; audit reports those missing.
GUARD_TRIGGERS: tuple[tuple[str, str, str, str], ...] = tuple(
    (f"{table}_no_{event.lower()}", table, event, "STATEMENT" if event == "TRUNCATE" else "ROW")
    for table in ("records", "meta")
    for event in ("UPDATE", "DELETE", "TRUNCATE")
)


def redact_url(url: str) -> str:
    """The URL without its password, fit for messages and records."""
    return re.sub(r"(://[^/@:]*):[^/@]*@", r"\1:***@", url)


def _psycopg() -> Any:
    try:
        import psycopg
    except ImportError:
        raise RecordsError(
            "a PostgreSQL store needs psycopg 3: pip install 'speccheck[plant]'"
        ) from None
    return psycopg


def _message(exc: BaseException) -> str:
    text = str(exc).strip().splitlines()
    return text[0] if text else type(exc).__name__


def _schema_statements() -> list[str]:
    """The SQLite store's tables and indexes in PostgreSQL's dialect, then the guards."""
    out = []
    for statement in _SCHEMA:
        if statement.startswith(("CREATE TABLE", "CREATE INDEX")):
            out.append(statement.replace("INTEGER PRIMARY KEY", "BIGINT PRIMARY KEY"))
    out.append(_GUARD_FUNCTION)
    for name, table, event, level in GUARD_TRIGGERS:
        out.append(
            f"CREATE OR REPLACE TRIGGER {name} BEFORE {event} ON {table} "
            f"FOR EACH {level} EXECUTE FUNCTION speccheck_append_only()"
        )
    return out


class PostgresStore(RecordsStore):
    """A records store in a PostgreSQL database; open it with ``RecordsStore.open(url)``."""

    @classmethod
    def connect(cls, url: str, *, create: bool = True) -> PostgresStore:
        """Connect to ``url`` (libpq URI) and, with ``create``, make the tables if missing."""
        psycopg = _psycopg()
        shown = redact_url(url)
        try:
            conn = psycopg.connect(url, autocommit=True, connect_timeout=10)
        except psycopg.Error as exc:
            raise RecordsError(
                f"cannot connect to the records server ({_message(exc)})", path=shown
            ) from None
        store = cls(shown, conn)
        try:
            store._prepare(create=create)  # READ COMMITTED: sees tables made by a racing bench
        except BaseException:
            conn.close()
            raise
        # Appends: LOCK TABLE comes before the first SELECT, so the snapshot is taken after the
        # lock is held and the last record read is the true last record.
        conn.isolation_level = psycopg.IsolationLevel.SERIALIZABLE
        return store

    def _error(self, what: str, exc: BaseException) -> RecordsError:
        return RecordsError(f"{what} ({_message(exc)})", path=str(self.path))

    def _prepare(self, *, create: bool) -> None:
        psycopg = _psycopg()
        c = self._conn
        try:
            with c.transaction():
                c.execute("SELECT pg_advisory_xact_lock(%s)", (_SCHEMA_LOCK_KEY,))
                have = c.execute(
                    "SELECT to_regclass('records') IS NOT NULL, to_regclass('meta') IS NOT NULL"
                ).fetchone()
                if not any(have):
                    if not create:
                        raise RecordsError("no records store in this database", path=str(self.path))
                    for statement in _schema_statements():
                        c.execute(statement)
                    c.execute(
                        "INSERT INTO meta (key, value) VALUES ('format', %s), ('version', %s) "
                        "ON CONFLICT DO NOTHING",
                        (STORE_FORMAT, STORE_VERSION),
                    )
                elif not all(have):
                    raise RecordsError(
                        "not a speccheck records store (a database of something else)",
                        path=str(self.path),
                    )
                meta = dict(c.execute("SELECT key, value FROM meta").fetchall())
        except psycopg.Error as exc:
            raise self._error("cannot read the records store", exc) from None
        if meta.get("format") != STORE_FORMAT:
            raise RecordsError(
                "not a speccheck records store (no store format marker)", path=str(self.path)
            )
        if meta.get("version") != STORE_VERSION:
            raise RecordsError(
                f"records store version {meta.get('version')!r} is not supported "
                f"(this speccheck reads {STORE_VERSION})",
                path=str(self.path),
            )

    def _append_fields(self, fields: Mapping[str, Any]) -> int:
        psycopg = _psycopg()
        c = self._conn
        for _ in range(_RETRIES):
            try:
                with self._append_lock(), c.transaction():
                    last = c.execute(
                        "SELECT id, record_hash FROM records ORDER BY id DESC LIMIT 1"
                    ).fetchone()
                    values = _chained_row(last, fields)
                    c.execute(_INSERT, values)
                return int(values[0])
            except psycopg.errors.SerializationFailure:
                continue
            except psycopg.Error as exc:
                raise self._error("cannot write to the records store", exc) from None
        raise RecordsError(
            f"cannot write to the records store (still conflicting after {_RETRIES} tries)",
            path=str(self.path),
        )

    @contextmanager
    def _append_lock(self) -> Iterator[None]:
        """One appender at a time per database: a session advisory lock, taken *before* the
        transaction begins, so the transaction's snapshot already shows the true last record.
        (LOCK TABLE would need UPDATE or DELETE rights, which a writer role must not have.)"""
        self._conn.execute("SELECT pg_advisory_lock(%s)", (_APPEND_LOCK_KEY,))
        try:
            yield
        finally:
            self._conn.execute("SELECT pg_advisory_unlock(%s)", (_APPEND_LOCK_KEY,))

    def _insert_verbatim(self, records: list[Record]) -> None:
        psycopg = _psycopg()
        c = self._conn
        try:
            with self._append_lock(), c.transaction():
                with c.cursor() as cur:
                    cur.executemany(_INSERT, [_verbatim_row(r) for r in records])
        except psycopg.Error as exc:
            raise self._error("cannot write to the records store", exc) from None

    def _rows(self, sql: str, params: tuple = ()) -> Iterator[Record]:
        psycopg = _psycopg()
        try:
            rows = self._conn.execute(sql.replace("?", "%s"), params).fetchall()
        except psycopg.Error as exc:
            raise self._error("cannot read the records store", exc) from None
        for row in rows:
            yield _row_to_record(row)

    def head_hash(self) -> str:
        psycopg = _psycopg()
        try:
            return super().head_hash()
        except psycopg.Error as exc:
            raise self._error("cannot read the records store", exc) from None

    def chain_head(self) -> dict[str, Any]:
        psycopg = _psycopg()
        try:
            return super().chain_head()
        except psycopg.Error as exc:
            raise self._error("cannot read the records store", exc) from None

    def missing_guards(self) -> list[str]:
        """Names of append-only triggers that are not (or no longer) on their tables."""
        rows = self._conn.execute(
            "SELECT t.tgname FROM pg_trigger t JOIN pg_class c ON c.oid = t.tgrelid "
            "WHERE c.relname IN ('records', 'meta') AND NOT t.tgisinternal AND t.tgenabled <> 'D'"
        ).fetchall()
        present = {r[0] for r in rows}
        return [name for name, *_ in GUARD_TRIGGERS if name not in present]

    def integrity_problems(self) -> list[str] | None:
        """None: PostgreSQL has no whole-database check like SQLite's; it keeps page checksums
        (when the cluster was made with them) and reports a damaged page when it reads one."""
        return None

    def grant_writer(self, role: str) -> None:
        """Let ``role`` read and append, nothing else (creates a LOGIN role if missing)."""
        psycopg = _psycopg()
        from psycopg import sql

        ident = sql.Identifier(role)
        try:
            with self._conn.transaction():
                exists = self._conn.execute(
                    "SELECT 1 FROM pg_roles WHERE rolname = %s", (role,)
                ).fetchone()
                if not exists:
                    self._conn.execute(sql.SQL("CREATE ROLE {} LOGIN").format(ident))
                for table in ("records", "meta"):
                    t = sql.Identifier(table)
                    self._conn.execute(sql.SQL("REVOKE ALL ON {} FROM {}").format(t, ident))
                    self._conn.execute(sql.SQL("GRANT SELECT, INSERT ON {} TO {}").format(t, ident))
        except psycopg.Error as exc:
            raise self._error(f"cannot grant {role!r} append-only access", exc) from None
