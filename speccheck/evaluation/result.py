"""The result of checking measurements against a specification: a plain data model.

This is the contract between the evaluator (which fills it), the report and records layers
(which read it) and other tools (which read its JSON). The JSON form is ``to_dict()``; field
names in it are stable. Every number carries its unit in a sibling ``unit`` field or in its name.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field
from typing import Any, Literal

from speccheck.schemas import SCHEMA_VERSION

__all__ = [
    "Verdict",
    "Zone",
    "ValueRecord",
    "RequirementResult",
    "MeasurementRecord",
    "CheckResult",
    "SCHEMA_VERSION",
    "in_current_form",
]

Verdict = Literal["conforming", "nonconforming", "undecided"]
# ISO 14253-1 zones of one measured value relative to one limit and its expanded uncertainty U:
# "within": inside the specification by more than U; "uncertain": within ±U of a limit;
# "outside": beyond a limit by more than U. With U = 0 "uncertain" never occurs.
Zone = Literal["within", "uncertain", "outside"]


@dataclass
class ValueRecord:
    """One measured value of one requirement's parameter."""

    measurement: int  # index into CheckResult.measurements (numbered from 1 in the JSON)
    value: float | None  # None when the measurement could not be evaluated
    unit: str
    zone: Zone | None = None
    counts_as: Literal["within", "exceeding"] | None = None  # after the decision rule
    section: int | None = None  # set when values are taken per section
    note: str | None = None
    # measured after the step procedure had decided (ISO 4288 5.2): shown, not counted
    after_decision: bool = False
    # the value in the drawing's unit when that differs from `unit` (µin on inch drawings)
    drawing_value: float | None = None
    # expanded uncertainty U of this value in `unit`: estimated for it, or the stated one
    uncertainty: float | None = None


@dataclass
class RequirementResult:
    text: str  # the callout as written, or a rendering of the structured form
    parameter: str  # canonical name: "Ra", "Rz3", "Rmr(0.5)", "Rpk", ...
    upper: float | None
    lower: float | None
    unit: str
    rule: Literal["16%", "max"]
    decision_rule: Literal["simple", "guarded-acceptance", "guarded-rejection"]
    uncertainty: float | None  # expanded uncertainty U (k = 2) in `unit`, or None
    verdict: Verdict
    reason: str | None  # machine-readable: "more-measurements", "uncertainty-range", ...
    explanation: str  # one sentence for people
    next: str | None  # what to do next, spelled out; None when decided
    values: list[ValueRecord] = field(default_factory=list)
    conditions: dict[str, Any] = field(
        default_factory=dict
    )  # lambda_c_mm, lambda_s_um, sections, ...
    diagnostics: list[dict[str, Any]] = field(default_factory=list)
    # 16 % rule: "sequential" (step procedure, decided at the first decisive step) or "fixed"
    sampling: Literal["sequential", "fixed"] = "sequential"
    # the drawing's unit when it differs from `unit` ("µin"), else None; limits in that unit
    drawing_unit: str | None = None
    drawing_limits: dict[str, float | None] | None = None  # upper, lower, uncertainty
    # "stated, not estimated", "estimated per value ..." or "not given"
    uncertainty_source: str = ""
    # `uncertainty: estimate`: one entry per value, {"measurement", "parameter", "value",
    # "unit", "expanded", "probability", "governing", "agree", "gum", "monte_carlo", "budget"
    # (input, source, u_input, input_unit, sensitivity, contribution, share, dof), "dominant"}
    uncertainty_budget: list[dict[str, Any]] = field(default_factory=list)


@dataclass
class MeasurementRecord:
    index: int
    path: str | None
    sha256: str | None
    format: str | None
    points: int
    spacing_um: float
    length_mm: float
    status: Literal["evaluated", "insufficient-data", "other-conditions", "dropouts"]
    reason: str | None = None
    dropouts: dict[str, Any] = field(default_factory=dict)
    parameters: dict[str, dict[str, Any]] = field(default_factory=dict)  # name -> {value, unit}
    fingerprint: str | None = None  # SHA-256 of the decoded heights (evaluation.fingerprint)


@dataclass
class CheckResult:
    verdict: Verdict
    reason: str | None
    requirements: list[RequirementResult]
    measurements: list[MeasurementRecord]
    spec: dict[str, Any]  # path, sha256, part, revision, surface, convention, ...
    software: dict[str, str]  # name, version
    created: str  # ISO 8601 UTC
    schema_version: str = SCHEMA_VERSION
    # who measured which part on which instrument (speccheck.evaluation.identity): "serial",
    # "operator", "order", "note" as stated; "instrument" (id, manufacturer, model, serial,
    # version, probing_system, stylus_tip_radius, calibration_date, calibration_interval_days,
    # calibration_certificate, file, label, sources, warnings) or None; "calibration" (status,
    # date, as_of, as_of_source, age_days, max_age_days, max_age_source, text)
    identity: dict[str, Any] = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        """The result JSON: in memory measurements count from 0, in the JSON from 1."""
        d = asdict(self)
        d = {"schema_version": d.pop("schema_version"), **d}
        d["measurements"] = [{"number": m.pop("index") + 1, **m} for m in d["measurements"]]
        _renumber(d["requirements"], +1)
        return d

    @classmethod
    def from_dict(cls, d: dict[str, Any]) -> CheckResult:
        """A result from its JSON: this schema version, or the earlier ``format_version: 1``
        (measurements counted from 0, kept as it was recorded)."""
        d = dict(d)
        if d.pop("format_version", None) is not None:
            meas = [MeasurementRecord(**m) for m in d["measurements"]]
            reqs_in = d["requirements"]
        else:
            meas = [
                MeasurementRecord(index=m["number"] - 1, **_without(m, "number"))
                for m in d["measurements"]
            ]
            reqs_in = [dict(r) for r in d["requirements"]]
            _renumber(reqs_in, -1)
        reqs = [
            RequirementResult(**{**r, "values": [ValueRecord(**v) for v in r.get("values", [])]})
            for r in reqs_in
        ]
        rest = {k: v for k, v in d.items() if k not in ("requirements", "measurements")}
        return cls(requirements=reqs, measurements=meas, **rest)


def in_current_form(d: dict[str, Any]) -> dict[str, Any]:
    """A check result's JSON in the current form: one recorded in the earlier form
    (``format_version: 1``, measurements counted from 0) is renumbered from 1 (a copy); any
    other document is returned as it is."""
    if "format_version" not in d:
        return d
    out = {"schema_version": SCHEMA_VERSION, **_without(d, "format_version")}
    meas = out.get("measurements")
    if isinstance(meas, list):
        out["measurements"] = [
            {"number": m["index"] + 1, **_without(m, "index")}
            if isinstance(m, dict) and isinstance(m.get("index"), int)
            else m
            for m in meas
        ]
    reqs = out.get("requirements")
    if isinstance(reqs, list):
        out["requirements"] = [dict(r) if isinstance(r, dict) else r for r in reqs]
        _renumber([r for r in out["requirements"] if isinstance(r, dict)], +1)
    return out


def _without(d: dict[str, Any], key: str) -> dict[str, Any]:
    return {k: v for k, v in d.items() if k != key}


def _renumber(requirements: list[dict[str, Any]], by: int) -> None:
    """Shift every measurement number in requirement dicts by ``by`` (in place, copying lists)."""
    for r in requirements:
        for key in ("values", "diagnostics", "uncertainty_budget"):
            entries = []
            for e in r.get(key) or []:
                if isinstance(e, dict) and isinstance(e.get("measurement"), int):
                    e = {**e, "measurement": e["measurement"] + by}
                entries.append(e)
            if key in r:
                r[key] = entries
