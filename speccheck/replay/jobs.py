"""Turn the records of one part into re-evaluation jobs: one job per past check of that surface.

A check record is one job. A lot record gives one job per sampled part whose surface the revised
spec covers; the other surfaces of that part keep their recorded verdicts when the lot is
disposed of again.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, field
from typing import Any

from speccheck.records.store import Record

__all__ = ["ReplayJob", "LotContext", "jobs_for_part"]


@dataclass(frozen=True)
class ReplayJob:
    """One past check to evaluate again: where it was recorded and what it decided then."""

    key: str  # "12" for check record 12, "12/S-004" for part S-004 of lot record 12
    record_id: int
    time: str
    supplier: str
    lot: str | None
    serial: str | None
    profiles: tuple[str, ...]  # SHA-256 of each profile, in measurement order
    formats: tuple[str | None, ...]
    before: str  # the recorded verdict


@dataclass
class LotContext:
    """What is needed to dispose of a lot again: acceptance number and the other surfaces."""

    record_id: int
    lot: str
    supplier: str
    acceptance_number: int
    disposition: str
    surface: str
    # serial -> verdicts of the surfaces the revised spec does not cover
    other_surfaces: dict[str, list[str]] = field(default_factory=dict)
    serials: list[str] = field(default_factory=list)


def _covers(check: dict[str, Any], part_number: str, surface: str | None) -> bool:
    spec = check.get("spec") or {}
    if spec.get("part") != part_number:
        return False
    return surface is None or spec.get("surface") in (None, surface)


def _job(record: Record, key: str, check: dict[str, Any], **where: Any) -> ReplayJob:
    meas = check.get("measurements", [])
    return ReplayJob(
        key=key,
        record_id=record.id,
        time=record.time,
        profiles=tuple(str(m.get("sha256")) for m in meas),
        formats=tuple(m.get("format") for m in meas),
        before=str(check.get("verdict")),
        **where,
    )


def _lot_jobs(record: Record, part_number: str, surface: str | None):
    d = record.result
    lot = d.get("lot") or {}
    ctx = LotContext(
        record_id=record.id,
        lot=str(lot.get("id") or f"record {record.id}"),
        supplier=str(lot.get("supplier") or "(no supplier)"),
        acceptance_number=int((d.get("sampling") or {}).get("acceptance_number", 0)),
        disposition=str(d.get("disposition")),
        surface=surface or "",
    )
    jobs = []
    for part in d.get("parts", []):
        serial = str(part.get("serial"))
        ctx.serials.append(serial)
        others = ctx.other_surfaces.setdefault(serial, [])
        for check in (part.get("surfaces") or {}).values():
            if _covers(check, part_number, surface):
                jobs.append(
                    _job(
                        record,
                        f"{record.id}/{serial}",
                        check,
                        supplier=ctx.supplier,
                        lot=ctx.lot,
                        serial=serial,
                    )
                )
            else:
                others.append(str(check.get("verdict")))
    return jobs, ctx


def jobs_for_part(
    records: Iterable[Record], part_number: str, surface: str | None, *, as_of: str | None = None
) -> tuple[list[ReplayJob], list[LotContext]]:
    """Jobs for every record of ``part_number`` (and ``surface``) up to ``as_of`` (ISO date)."""
    jobs: list[ReplayJob] = []
    lots: list[LotContext] = []
    for r in records:
        if as_of is not None and r.time[: len(as_of)] > as_of:
            continue
        if r.kind == "lot":
            found, ctx = _lot_jobs(r, part_number, surface)
            if found:
                jobs += found
                lots.append(ctx)
        elif r.kind == "check" and _covers(r.result, part_number, surface):
            spec = r.result.get("spec") or {}
            jobs.append(
                _job(
                    r,
                    str(r.id),
                    r.result,
                    supplier=str(spec.get("supplier") or "(no supplier)"),
                    lot=None,
                    serial=None,
                )
            )
    return jobs, lots
