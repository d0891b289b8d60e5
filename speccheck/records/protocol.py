"""The records-store interface every backend implements, and the choice of backend by location.

Two implementations: :class:`speccheck.records.store.RecordsStore` (SQLite, one file, the
embedded default) and :class:`speccheck.records.postgres.PostgresStore` (a shared server for a
plant). Both keep the same table, the same canonical content and the same hash chain, so a
record's ``record_hash`` does not depend on where it is stored (``records migrate`` proves it).
"""

from __future__ import annotations

import os
from collections.abc import Mapping
from pathlib import Path
from typing import TYPE_CHECKING, Any, Protocol

if TYPE_CHECKING:
    from speccheck.records.store import AuditResult, Record

__all__ = ["Store", "is_postgres_url", "store_location", "redacted_location"]

_PG_SCHEMES = ("postgresql://", "postgres://")


def is_postgres_url(location: str | os.PathLike[str]) -> bool:
    """True for ``postgresql://...`` or ``postgres://...`` (a libpq connection URI)."""
    return isinstance(location, str) and location.startswith(_PG_SCHEMES)


def store_location(location: str | os.PathLike[str]) -> str | Path:
    """A PostgreSQL URL as it is; ``sqlite:FILE`` or a plain path as the SQLite file's path."""
    if is_postgres_url(location):
        return str(location)
    text = os.fspath(location)
    if isinstance(text, str) and text.startswith("sqlite:"):
        text = text[len("sqlite:") :]
        text = text[2:] if text.startswith("//") else text
    return Path(text)


def redacted_location(location: str) -> str:
    """The store's location fit for a record or a checkpoint: a server URL without password."""
    if is_postgres_url(location):
        import re

        return re.sub(r"(://[^/@:]*):[^/@]*@", r"\1:***@", location)
    return str(location)


class Store(Protocol):
    """What the ``records`` commands, ``check --record``, ``lot --record`` and replay use."""

    location: str

    def close(self) -> None: ...

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
    ) -> int: ...

    def list(
        self,
        *,
        kind: str | None = None,
        part: str | None = None,
        verdict: str | None = None,
        limit: int | None = None,
    ) -> list[Record]: ...

    def get(self, record_id: int) -> Record: ...

    def head_hash(self) -> str: ...

    def chain_head(self) -> dict[str, Any]: ...

    def audit(self, archive_dir: str | os.PathLike[str] | None = None) -> AuditResult: ...
