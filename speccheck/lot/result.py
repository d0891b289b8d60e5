"""The result of inspecting a lot: per-part verdicts and the lot disposition.

A part is nonconforming if any of its surfaces is, else undecided if any is, else conforming.
With d nonconforming and u undecided parts in the sample and acceptance number c:

- d > c: **reject** (the undecided parts cannot save the lot);
- d + u ≤ c: **accept** (even if every undecided part turned out nonconforming);
- otherwise **undecided**: the undecided parts could change the outcome; measure them again.

Undecided parts are listed for re-measurement in every case.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Literal

from speccheck.errors import ExitStatus
from speccheck.evaluation.result import CheckResult, in_current_form
from speccheck.schemas import SCHEMA_VERSION

__all__ = [
    "Disposition",
    "PartResult",
    "LotResult",
    "part_verdict",
    "dispose",
    "lot_in_current_form",
]

Disposition = Literal["accept", "reject", "undecided"]

_EXIT = {
    "accept": ExitStatus.CONFORMING,
    "reject": ExitStatus.NONCONFORMING,
    "undecided": ExitStatus.UNDECIDED,
}


def part_verdict(surface_verdicts: list[str]) -> str:
    """Nonconforming if any surface is, else undecided if any is, else conforming."""
    if "nonconforming" in surface_verdicts:
        return "nonconforming"
    if "undecided" in surface_verdicts:
        return "undecided"
    return "conforming"


def dispose(nonconforming: int, undecided: int, acceptance_number: int) -> tuple[Disposition, str]:
    """Lot disposition and one sentence saying why (single sampling, acceptance number c)."""
    d, u, c = nonconforming, undecided, acceptance_number
    parts = "part" if d == 1 else "parts"
    if d > c:
        return (
            "reject",
            f"{d} nonconforming {parts} in the sample, more than the acceptance number {c}: "
            "reject the lot.",
        )
    if d + u <= c:
        extra = f" ({u} undecided part(s) cannot change this)" if u else ""
        return (
            "accept",
            f"{d} nonconforming {parts} in the sample, at most the acceptance number {c}: "
            f"accept the lot{extra}.",
        )
    return (
        "undecided",
        f"{d} nonconforming {parts} and {u} undecided in the sample, acceptance number {c}: "
        f"the undecided parts decide the lot; measure them again.",
    )


@dataclass
class PartResult:
    """One sampled part: its serial, verdict and one check result per surface."""

    serial: str
    verdict: str
    surfaces: dict[str, CheckResult]

    def to_dict(self) -> dict[str, Any]:
        return {
            "serial": self.serial,
            "verdict": self.verdict,
            "surfaces": {k: v.to_dict() for k, v in self.surfaces.items()},
        }

    @classmethod
    def from_dict(cls, d: dict[str, Any]) -> PartResult:
        return cls(
            serial=d["serial"],
            verdict=d["verdict"],
            surfaces={k: CheckResult.from_dict(v) for k, v in d["surfaces"].items()},
        )


@dataclass
class LotResult:
    """Everything decided about one lot; ``to_dict()`` is the lot JSON (stable field names)."""

    plan: dict[str, Any]  # path, sha256, plan_version, pattern, notes
    lot: dict[str, Any]  # id, supplier, part, size, received, ...
    surfaces: dict[str, dict[str, Any]]  # name -> {spec, spec_sha256, measurements}
    sampling: dict[str, Any]  # SamplingPlan.to_dict()
    parts: list[PartResult]
    nonconforming: int
    undecided: int
    remeasure: list[str]
    disposition: Disposition
    reason: str
    software: dict[str, str]
    created: str
    data_dir: str | None = None
    kind: str = field(default="lot")
    schema_version: str = SCHEMA_VERSION

    @property
    def exit_status(self) -> ExitStatus:
        return _EXIT[self.disposition]

    def to_dict(self) -> dict[str, Any]:
        return {
            "schema_version": self.schema_version,
            "kind": self.kind,
            "plan": self.plan,
            "lot": self.lot,
            "surfaces": self.surfaces,
            "sampling": self.sampling,
            "parts": [p.to_dict() for p in self.parts],
            "nonconforming": self.nonconforming,
            "undecided": self.undecided,
            "remeasure": list(self.remeasure),
            "disposition": self.disposition,
            "reason": self.reason,
            "software": self.software,
            "created": self.created,
            "data_dir": self.data_dir,
        }

    @classmethod
    def from_dict(cls, d: dict[str, Any]) -> LotResult:
        rest = {k: v for k, v in d.items() if k not in ("parts", "format_version")}
        return cls(parts=[PartResult.from_dict(p) for p in d["parts"]], **rest)


def lot_in_current_form(d: dict[str, Any]) -> dict[str, Any]:
    """A lot result's JSON in the current form: one recorded in the earlier form
    (``format_version: 1``) gets ``schema_version`` and every part's check results are
    renumbered from 1 (a copy); any other document is returned as it is."""
    if "format_version" not in d:
        return d
    out: dict[str, Any] = {
        "schema_version": SCHEMA_VERSION,
        **{k: v for k, v in d.items() if k != "format_version"},
    }
    parts = out.get("parts")
    if isinstance(parts, list):
        out["parts"] = [_part_in_current_form(p) for p in parts]
    return out


def _part_in_current_form(part: Any) -> Any:
    if not isinstance(part, dict) or not isinstance(part.get("surfaces"), dict):
        return part
    surfaces = {
        k: in_current_form(v) if isinstance(v, dict) else v for k, v in part["surfaces"].items()
    }
    return {**part, "surfaces": surfaces}
