"""What the revised spec would have changed: flips, reject rates with intervals, lots.

Counts are folded in as results stream back (:meth:`ReplaySummary.add_batch`); nothing is kept
per job but its verdict after replay. The reject rate is the share of nonconforming verdicts
among the checks replayed; its 95 % interval is the Clopper–Pearson exact binomial interval
(Clopper & Pearson, Biometrika 26 (1934) 404; computed with scipy.stats.beta).
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from speccheck.replay.jobs import LotContext, ReplayJob
from speccheck.schemas import SCHEMA_VERSION

__all__ = ["Outcome", "ReplaySummary", "clopper_pearson", "combine_verdicts"]

Outcome = tuple[str, str, str | None]  # (job key, verdict after, reason)


def clopper_pearson(k: int, n: int, confidence: float = 0.95) -> tuple[float, float]:
    """Exact two-sided binomial interval for k successes in n trials (0 ≤ k ≤ n, n ≥ 1)."""
    from scipy.stats import beta

    a = (1 - confidence) / 2
    lo = 0.0 if k == 0 else float(beta.ppf(a, k, n - k + 1))
    hi = 1.0 if k == n else float(beta.ppf(1 - a, k + 1, n - k))
    return lo, hi


def combine_verdicts(verdicts: list[str]) -> str:
    """A part's verdict from its surfaces: any nonconforming, else undecided, else conforming."""
    if "nonconforming" in verdicts:
        return "nonconforming"
    if "undecided" in verdicts or "not-replayed" in verdicts:
        return "undecided"
    return "conforming"


def _rate(verdicts: list[str]) -> dict[str, Any]:
    n = len(verdicts)
    k = sum(v == "nonconforming" for v in verdicts)
    lo, hi = clopper_pearson(k, n) if n else (None, None)
    return {"checks": n, "nonconforming": k, "rate": (k / n if n else None), "ci95": [lo, hi]}


@dataclass
class ReplaySummary:
    """Filled while results stream in; :meth:`to_dict` is the replay JSON."""

    spec: str | Path
    part: str
    jobs: list[ReplayJob]
    lots: list[LotContext]
    scheduler: str
    after: dict[str, str] = field(default_factory=dict)
    not_replayed: dict[str, str] = field(default_factory=dict)

    def missing(self, key: str, reason: str) -> None:
        self.not_replayed.setdefault(key, reason)

    def add_batch(self, outcomes: list[Outcome]) -> None:
        for key, verdict, reason in outcomes:
            if verdict == "not-replayed":
                self.missing(key, reason or "not replayed")
            else:
                self.after[key] = verdict

    # -- what changed -----------------------------------------------------------------------

    def replayed(self) -> list[ReplayJob]:
        return [j for j in self.jobs if j.key in self.after]

    def flips(self) -> list[dict[str, Any]]:
        return [
            {
                "key": j.key,
                "record": j.record_id,
                "supplier": j.supplier,
                "lot": j.lot,
                "serial": j.serial,
                "before": j.before,
                "after": self.after[j.key],
            }
            for j in self.replayed()
            if self.after[j.key] != j.before
        ]

    def by_supplier(self) -> dict[str, dict[str, Any]]:
        out: dict[str, dict[str, Any]] = {}
        for supplier in sorted({j.supplier for j in self.replayed()}):
            mine = [j for j in self.replayed() if j.supplier == supplier]
            out[supplier] = {
                "before": _rate([j.before for j in mine]),
                "after": _rate([self.after[j.key] for j in mine]),
                "flips": sum(self.after[j.key] != j.before for j in mine),
            }
        return out

    def lot_changes(self) -> list[dict[str, Any]]:
        from speccheck.lot.result import dispose

        out = []
        for ctx in self.lots:
            verdicts = []
            for serial in ctx.serials:
                new = self.after.get(f"{ctx.record_id}/{serial}")
                if new is None:  # surface not covered, or not replayed
                    new = (
                        "not-replayed" if f"{ctx.record_id}/{serial}" in self.not_replayed else None
                    )
                verdicts.append(
                    combine_verdicts(ctx.other_surfaces.get(serial, []) + ([new] if new else []))
                )
            counts = Counter(verdicts)
            disposition, reason = dispose(
                counts["nonconforming"], counts["undecided"], ctx.acceptance_number
            )
            out.append(
                {
                    "record": ctx.record_id,
                    "lot": ctx.lot,
                    "supplier": ctx.supplier,
                    "before": ctx.disposition,
                    "after": disposition,
                    "reason": reason,
                    "changed": disposition != ctx.disposition,
                }
            )
        return out

    def to_dict(self) -> dict[str, Any]:
        replayed = self.replayed()
        lots = self.lot_changes()
        return {
            "schema_version": SCHEMA_VERSION,
            "kind": "replay",
            "spec": str(self.spec),
            "part": self.part,
            "scheduler": self.scheduler,
            "checks": len(self.jobs),
            "replayed": len(replayed),
            "not_replayed": [{"key": k, "reason": v} for k, v in sorted(self.not_replayed.items())],
            "before": _rate([j.before for j in replayed]),
            "after": _rate([self.after[j.key] for j in replayed]),
            "flips": self.flips(),
            "suppliers": self.by_supplier(),
            "lots": lots,
            "lots_changed": sum(lot["changed"] for lot in lots),
        }
