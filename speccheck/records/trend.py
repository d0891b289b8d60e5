"""Values of one parameter of one part over time, against its limits, with Cp and Cpk.

Values come from the records store: every check record of the part, and every sampled part
inside its lot records. Capability indices follow the NIST/SEMATECH e-Handbook of Statistical
Methods, 6.1.6 (process capability), with σ estimated by the sample standard deviation s:

    Cp  = (USL − LSL) / 6s
    Cpk = min(USL − μ, μ − LSL) / 3s      (one limit only: that side alone, Cp undefined)

With fewer than :data:`MIN_VALUES_FOR_INDEX` values the indices are computed but flagged as
not meaningful.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from typing import Any

from speccheck.evaluation.result import in_current_form

__all__ = [
    "MIN_VALUES_FOR_INDEX",
    "TrendPoint",
    "Capability",
    "Trend",
    "capability",
    "collect_trend",
    "trend_svg",
]

# Fewer values than this give capability indices too uncertain to act on (common practice,
# no source).
MIN_VALUES_FOR_INDEX = 25


@dataclass(frozen=True)
class TrendPoint:
    """One measured value: where it is recorded and what it was."""

    record_id: int
    time: str  # ISO 8601 UTC of the record
    value: float
    label: str  # "record 12, measurement 2" or "record 3, part S-0106, measurement 1"


@dataclass(frozen=True)
class Capability:
    """Mean, sample standard deviation and capability indices of a set of values.

    ``cp`` is None unless both limits are given; ``cpk`` is None when s = 0 or no limit is
    given. ``meaningful`` is False with fewer than :data:`MIN_VALUES_FOR_INDEX` values.
    """

    n: int
    mean: float | None
    sd: float | None
    lower: float | None
    upper: float | None
    cp: float | None
    cpk: float | None
    cpu: float | None
    cpl: float | None
    meaningful: bool
    note: str

    def to_dict(self) -> dict[str, Any]:
        return dict(self.__dict__)


def capability(
    values: Sequence[float], *, lower: float | None = None, upper: float | None = None
) -> Capability:
    """Cp and Cpk of ``values`` against the limits (NIST/SEMATECH e-Handbook 6.1.6).

    Parameters
    ----------
    values:
        Measured values, all in the limits' unit.
    lower, upper:
        LSL and USL; either may be None (one-sided Cpk).

    Returns
    -------
    Capability

    Notes
    -----
    σ is estimated by the sample standard deviation s (n − 1 in the denominator), as in the
    handbook's estimators Ĉp = (USL − LSL)/(6s), Ĉpk = min(Ĉpu, Ĉpl), Ĉpu = (USL − x̄)/(3s),
    Ĉpl = (x̄ − LSL)/(3s).

    References
    ----------
    NIST/SEMATECH e-Handbook of Statistical Methods, 6.1.6 "What is Process Capability?".
    """
    xs = [float(v) for v in values if v is not None and math.isfinite(float(v))]
    n = len(xs)
    if n < 2:
        return Capability(
            n, xs[0] if xs else None, None, lower, upper, None, None, None, None, False,
            f"{n} value(s): at least 2 are needed for a standard deviation",
        )  # fmt: skip
    mean = math.fsum(xs) / n
    sd = math.sqrt(math.fsum((x - mean) ** 2 for x in xs) / (n - 1))
    cpu = (upper - mean) / (3 * sd) if upper is not None and sd > 0 else None
    cpl = (mean - lower) / (3 * sd) if lower is not None and sd > 0 else None
    cp = (upper - lower) / (6 * sd) if upper is not None and lower is not None and sd > 0 else None
    sides = [c for c in (cpu, cpl) if c is not None]
    cpk = min(sides) if sides else None
    meaningful = n >= MIN_VALUES_FOR_INDEX
    if upper is None and lower is None:
        note = "no limits: no capability index"
    elif sd == 0:
        note = "all values equal: capability indices undefined"
    elif not meaningful:
        note = (
            f"only {n} values: fewer than {MIN_VALUES_FOR_INDEX}, too few for a meaningful "
            "capability index (common practice, no source)"
        )
    else:
        note = f"{n} values"
    if cp is None and cpk is not None:
        note += "; one limit only: one-sided Cpk, no Cp"
    return Capability(n, mean, sd, lower, upper, cp, cpk, cpu, cpl, meaningful, note)


@dataclass
class Trend:
    """Everything ``speccheck records trend`` shows."""

    part: str
    parameter: str
    unit: str
    upper: float | None
    lower: float | None
    points: list[TrendPoint]
    capability: Capability
    notes: list[str] = field(default_factory=list)

    def to_dict(self) -> dict[str, Any]:
        return {
            "part": self.part,
            "parameter": self.parameter,
            "unit": self.unit,
            "upper": self.upper,
            "lower": self.lower,
            "points": [p.__dict__ for p in self.points],
            "capability": self.capability.to_dict(),
            "notes": list(self.notes),
        }


def _checks_of(record: Any, surface: str | None) -> Iterable[tuple[str, dict[str, Any]]]:
    """Each check result in a record, in today's JSON form (measurements counted from 1)."""
    result = record.result
    if record.kind == "lot":
        for part in result.get("parts", []):
            for name, check in part.get("surfaces", {}).items():
                if surface is None or name == surface:
                    yield f"record {record.id}, part {part.get('serial')}", in_current_form(check)
    elif surface is None or (result.get("spec") or {}).get("surface") == surface:
        yield f"record {record.id}", in_current_form(result)


def collect_trend(
    records: Iterable[Any], *, part: str, parameter: str, surface: str | None = None
) -> Trend:
    """Gather the values of ``parameter`` for ``part`` from records (in record order).

    Values are those of the first requirement on that parameter in each check result; the
    limits are the tightest over those requirements in the latest record that has one. When no
    requirement names the parameter, the computed values of each measurement are used, without
    limits.
    """
    points: list[TrendPoint] = []
    upper = lower = None
    unit = ""
    limit_sets: set[tuple[float | None, float | None]] = set()
    notes: list[str] = []
    for rec in records:
        if rec.part != part:
            continue
        for label, check in _checks_of(rec, surface):
            reqs = [r for r in check.get("requirements", []) if r.get("parameter") == parameter]
            if reqs:
                uppers = [r["upper"] for r in reqs if r.get("upper") is not None]
                lowers = [r["lower"] for r in reqs if r.get("lower") is not None]
                upper = min(uppers) if uppers else None
                lower = max(lowers) if lowers else None
                limit_sets.add((upper, lower))
                unit = reqs[0].get("unit", "")
                for v in reqs[0].get("values", []):
                    if v.get("value") is not None:
                        where = f"{label}, measurement {v['measurement']}"
                        if v.get("section") is not None:
                            where += f", section {v['section'] + 1}"
                        points.append(TrendPoint(rec.id, rec.time, float(v["value"]), where))
            else:
                for m in check.get("measurements", []):
                    pv = (m.get("parameters") or {}).get(parameter)
                    if pv and pv.get("value") is not None:
                        unit = pv.get("unit", unit)
                        points.append(
                            TrendPoint(
                                rec.id,
                                rec.time,
                                float(pv["value"]),
                                f"{label}, measurement {m['number']}",
                            )
                        )
    if len(limit_sets) > 1:
        notes.append("the limits changed between records: the latest limits are shown")
    if not points:
        notes.append(f"no recorded values of {parameter} for part {part}")
    cap = capability([p.value for p in points], lower=lower, upper=upper)
    return Trend(part, parameter, unit, upper, lower, points, cap, notes)


def trend_svg(trend: Trend, *, width_cm: float = 17.0, height_cm: float = 8.0) -> str:
    """Values in record order against the limits, with the mean and the indices, as SVG."""
    import io

    import matplotlib
    from matplotlib.figure import Figure

    rc: Any = {  # matplotlib rc settings
        "font.family": "DejaVu Sans",
        "font.size": 7.5,
        "svg.fonttype": "path",
        "svg.hashsalt": "speccheck-trend",
        "axes.grid": True,
        "grid.color": "0.85",
        "grid.linewidth": 0.4,
    }
    cm = 1 / 2.54
    cap = trend.capability
    with matplotlib.rc_context(rc):
        fig = Figure(figsize=(width_cm * cm, height_cm * cm))
        ax = fig.subplots()
        xs = list(range(1, len(trend.points) + 1))
        ax.plot(
            xs,
            [p.value for p in trend.points],
            color="black",
            marker="o",
            markersize=2.5,
            linewidth=0.6,
        )
        for lim, name in ((trend.upper, "USL"), (trend.lower, "LSL")):
            if lim is not None:
                ax.axhline(lim, color="black", linestyle="--", linewidth=0.9)
                ax.annotate(f"{name} {lim:g}", (1.0, lim), xycoords=("axes fraction", "data"),
                            xytext=(-2, 2), textcoords="offset points", ha="right")  # fmt: skip
        if cap.mean is not None:
            ax.axhline(cap.mean, color="0.4", linestyle=":", linewidth=0.8)
        unit = f" ({trend.unit})" if trend.unit else ""
        ax.set_xlabel("value number, in record order")
        ax.set_ylabel(f"{trend.parameter}{unit}")
        idx = []
        if cap.cp is not None:
            idx.append(f"Cp {cap.cp:.2f}")
        if cap.cpk is not None:
            idx.append(f"Cpk {cap.cpk:.2f}")
        flag = (
            "" if cap.meaningful else f" — fewer than {MIN_VALUES_FOR_INDEX} values, not meaningful"
        )
        head = f"{trend.part} {trend.parameter}: {len(trend.points)} values"
        ax.set_title(f"{head}; {', '.join(idx) or 'no index'}{flag}", loc="left", fontsize=8)
        fig.tight_layout(pad=0.4)
        buf = io.BytesIO()
        fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None})
        return buf.getvalue().decode("utf-8")
