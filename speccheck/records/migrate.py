"""Copy a records store to another backend, record for record, and prove the chains are equal.

Records are copied verbatim (ids, times, content, ``prev_hash``, ``record_hash``): the chain is
a property of the content, not of the database, so the copy audits exactly as the original.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from speccheck.errors import RecordsError
from speccheck.records.store import RecordsStore

__all__ = ["MigrationResult", "migrate"]


@dataclass(frozen=True)
class MigrationResult:
    """What was copied, and the evidence that both chains are the same chain."""

    source: str
    target: str
    records: int
    head_hash: str
    chains_equal: bool
    target_intact: bool

    def to_dict(self) -> dict[str, Any]:
        return {
            "source": self.source,
            "target": self.target,
            "records": self.records,
            "head_hash": self.head_hash,
            "chains_equal": self.chains_equal,
            "target_intact": self.target_intact,
        }


def migrate(source: str, target: str) -> MigrationResult:
    """Copy every record of ``source`` into the empty store ``target``; audit and compare both.

    Raises
    ------
    RecordsError
        The source is missing or its chain is not intact (a broken chain is not copied: audit
        it first), or the target already holds records.
    """
    with RecordsStore.open(source, create=False) as src:
        audit = src.audit()
        if not audit.chain_intact:
            first = audit.findings[0].message if audit.findings else "chain broken"
            raise RecordsError(
                f"source chain is not intact, not copied: {first}", path=src.location
            )
        records = src.list()
        with RecordsStore.open(target) as dst:
            if dst.list(limit=1):
                raise RecordsError(
                    "target store already holds records; migrate into an empty store",
                    path=dst.location,
                )
            if records:
                dst._insert_verbatim(records)
            copied = dst.list()
            target_audit = dst.audit()
            equal = [r.record_hash for r in copied] == [r.record_hash for r in records] and (
                target_audit.head_hash == audit.head_hash
            )
            return MigrationResult(
                source=src.location,
                target=dst.location,
                records=len(copied),
                head_hash=target_audit.head_hash,
                chains_equal=equal,
                target_intact=target_audit.chain_intact,
            )
