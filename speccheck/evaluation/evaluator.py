"""Apply a specification to measured profiles: values, acceptance rule, decision rule, verdict.

One measured value is one profile's parameter over its evaluation length (or one value per
section when the spec says ``measurement.value_per: section``). For every requirement:

1. measurement conditions from the requirement (λc, λs, sections, filter, form, profile letter);
   parameters are computed once per distinct conditions per profile;
2. a measurement is *not evaluated* for that requirement, and its value is unknown, when the
   profile has dropout gaps too wide to bridge (``dropouts``), its sampling spacing is coarser
   than ISO 3274 allows for the λc (``other-conditions``), its trace is too short for the
   evaluation length plus run-in and run-out (``insufficient-data``) or the parameter cannot be
   computed on it (``parameter-not-computed``, e.g. no core for Rk). It is never evaluated under
   other conditions instead;
3. each value is placed in its ISO 14253-1 zone and counted as exceeding or not by the decision
   rule (:mod:`speccheck.evaluation.decision`);
4. the acceptance rule (:mod:`speccheck.evaluation.rules`) gives the verdict; an unknown value
   leaves the verdict open only when it could change it.

The overall verdict is nonconforming if any requirement is, else undecided if any is, else
conforming. The result is deterministic: the same spec and files give the same result except
``created``.
"""

from __future__ import annotations

import math
import re
from collections.abc import Sequence
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path
from typing import TYPE_CHECKING, Any

from speccheck._version import __version__
from speccheck.errors import SpecError
from speccheck.evaluation.decision import (
    ILAC_G8_NAMES,
    DecisionRule,
    Side,
    at_most_70_percent,
    counts_as_exceeding,
    zone,
)
from speccheck.evaluation.fingerprint import height_fingerprint
from speccheck.evaluation.periodic import apply_periodic_test
from speccheck.evaluation.result import (
    CheckResult,
    MeasurementRecord,
    RequirementResult,
    ValueRecord,
    Verdict,
)
from speccheck.evaluation.rules import RuleOutcome, Sampling, apply_rule, combine_limits
from speccheck.spec.requirement import rule_words, rules_standard

if TYPE_CHECKING:
    from speccheck.evaluation.identity import Stated
    from speccheck.instrument.loader import LoadedInstrument
    from speccheck.parameters.compute import InsufficientData, ParameterSet
    from speccheck.parameters.conditions import Conditions
    from speccheck.profile import Profile
    from speccheck.spec.loader import LoadedSpec, Requirement

__all__ = [
    "evaluate",
    "evaluate_files",
    "load_inputs",
    "requirement_conditions",
    "max_spacing_for_um",
]

# statuses of a measurement for one requirement, in the order they are checked
_NOT_EVALUATED = ("dropouts", "other-conditions", "insufficient-data", "parameter-not-computed")
_RANK: dict[str, int] = {"nonconforming": 0, "undecided": 1, "conforming": 2}


@dataclass(frozen=True)
class _Unknown:
    status: str  # one of _NOT_EVALUATED
    note: str  # one line: why
    action: str  # what to do about it


@dataclass(frozen=True)
class _Value:
    measurement: int
    section: int | None
    value: float | None
    unknown: _Unknown | None = None
    u: float | None = None  # expanded uncertainty U estimated for this value, in the unit


def _fmt(x: float) -> str:
    return f"{x:g}"


def _unit_text(unit: str) -> str:
    return f" {unit}" if unit else ""


def max_spacing_for_um(lambda_c_mm: float) -> float:
    """Largest sampling spacing allowed for a cut-off λc, in µm (ISO 3274:1996 Table 1).

    For a λc that is not in the table, the spacing of the largest standard λc not above it is
    used (the stricter neighbour); below 0.08 mm it is scaled down in proportion to λc.
    The spacing column of ISO 3274 Table 1 is from memory (domain notes, section 1).
    """
    from speccheck.parameters.conditions import STANDARD_CUTOFFS_MM, instrument_settings

    lc = float(lambda_c_mm)
    below = [c for c in STANDARD_CUTOFFS_MM if c <= lc * (1 + 1e-9)]
    if not below:
        smallest = STANDARD_CUTOFFS_MM[0]
        return instrument_settings(smallest).max_spacing_um * lc / smallest
    return instrument_settings(below[-1]).max_spacing_um


def requirement_conditions(spec: LoadedSpec, req: Requirement) -> Conditions:
    """The measurement conditions of a requirement; SpecError at the requirement if impossible."""
    from speccheck.errors import SpeccheckError

    try:
        return req.conditions()
    except SpeccheckError as exc:
        raise SpecError(f"{req.text}: {exc.message}", path=spec.path, where=req.location) from exc


def _check_requirement(spec: LoadedSpec, req: Requirement) -> None:
    if req.upper is None and req.lower is None:
        raise SpecError(f"{req.text}: no limit", path=spec.path, where=req.location)
    if req.decision_rule != "simple" and req.uncertainty is None and not req.uncertainty_estimated:
        raise SpecError(
            f"{req.text}: decision rule {req.decision_rule} needs the expanded uncertainty U of "
            f"{req.parameter} (add it under 'uncertainty')",
            path=spec.path,
            where=req.location,
        )
    if req.uncertainty is not None and not (
        math.isfinite(req.uncertainty) and req.uncertainty >= 0
    ):
        raise SpecError(
            f"{req.text}: the uncertainty must be a number ≥ 0", path=spec.path, where=req.location
        )


def _prepare(profile: Profile) -> Profile:
    from speccheck.profile import DropoutReport, fill_dropouts

    if profile.dropouts != DropoutReport():
        return profile  # already processed
    return fill_dropouts(profile)


def _unusable(profile: Profile, cond: Conditions) -> _Unknown | None:
    """Why this profile cannot be evaluated under ``cond`` before computing (None: it can)."""
    d = profile.dropouts
    if not d.usable:
        gaps = ", ".join(f"{a:g}–{b:g} mm" for a, b in d.refused_gaps_mm)
        return _Unknown(
            "dropouts",
            f"gaps of invalid points too wide to bridge at {gaps}",
            "measure again beside the gap or after cleaning the surface",
        )
    limit_um = max_spacing_for_um(cond.lambda_c_mm)
    if profile.dx_um > limit_um * (1 + 1e-9):
        return _Unknown(
            "other-conditions",
            f"sampling spacing {_fmt(profile.dx_um)} µm is coarser than the {_fmt(limit_um)} µm "
            f"ISO 3274 allows for λc {_fmt(cond.lambda_c_mm)} mm",
            f"measure again with a sampling spacing of at most {_fmt(limit_um)} µm",
        )
    return None


def _too_short(missing: InsufficientData, cond: Conditions) -> _Unknown:
    if missing.kind == "flat":
        return _Unknown(
            "insufficient-data",
            missing.reason,
            "check the stylus contact and the file's height scale, then measure again",
        )
    required = round(missing.required_mm, 4)
    return _Unknown(
        "insufficient-data",
        f"trace {_fmt(round(missing.available_mm, 4))} mm is shorter than the {_fmt(required)} mm "
        f"needed for {cond.sections} × λc {_fmt(cond.lambda_c_mm)} mm plus run-in and run-out",
        f"measure again with a trace of at least {_fmt(required)} mm",
    )


def _parameter_values(
    spec: LoadedSpec, req: Requirement, index: int, ps: ParameterSet
) -> list[_Value]:
    name = req.parameter
    word = re.compile(rf"(^|[\s(]){re.escape(name)}($|[\s:,)])")
    notes = [n for n in ps.notes if n.startswith(f"{name}:")]
    notes += [n for n in ps.notes if word.search(n) and re.search(r"\bno(t)?\b", n)]
    note = notes[0] if notes else f"{name} could not be computed on this profile"
    missing = _Unknown(
        "parameter-not-computed",
        note,
        "check the profile and the measurement set-up, then measure again",
    )
    if spec.value_per == "section":
        if not ps.sections or name not in ps.sections[0]:
            why = _Unknown(
                "parameter-not-computed",
                f"{name} is defined over the evaluation length and has no value per section",
                "set measurement.value_per to evaluation-length for this parameter",
            )
            return [_Value(index, None, None, why)]
        out = []
        for k, sec in enumerate(ps.sections):
            pv = sec.get(name)
            if pv is None or not math.isfinite(pv.value):
                out.append(_Value(index, k, None, missing))
            else:
                out.append(_Value(index, k, float(pv.value)))
        return out
    pv = ps.values.get(name)
    if pv is None or not math.isfinite(pv.value):
        return [_Value(index, None, None, missing)]
    return [_Value(index, None, float(pv.value))]


def _sides(req: Requirement) -> list[tuple[Side, float]]:
    out: list[tuple[Side, float]] = []
    if req.upper is not None:
        out.append(("upper", float(req.upper)))
    if req.lower is not None:
        out.append(("lower", float(req.lower)))
    return out


def _u(req: Requirement, v: _Value) -> float | None:
    """U of one value: estimated for it, else the requirement's stated U."""
    return v.u if v.u is not None else req.uncertainty


def _judge(
    req: Requirement, values: list[_Value], decision_rule: DecisionRule, sampling: Sampling
) -> tuple[RuleOutcome, list[RuleOutcome]]:
    outcomes = []
    for side, limit in _sides(req):
        flags: list[bool | None] = [
            None
            if v.value is None
            else counts_as_exceeding(
                v.value,
                limit=limit,
                side=side,
                decision_rule=decision_rule,
                uncertainty=_u(req, v),
            )
            for v in values
        ]
        first_low: bool | None = False
        # the 70 % step looks at the first value: the first one evaluated in the sequential
        # procedure (a measurement that gave no value is not a step), else the first given
        first = values[0] if values else None
        if sampling == "sequential":
            first = next((v for v in values if v.value is not None), None)
        if side == "upper" and first is not None and first.value is not None:
            first_low = at_most_70_percent(
                first.value,
                limit=limit,
                decision_rule=decision_rule,
                uncertainty=_u(req, first),
            )
        outcomes.append(
            apply_rule(
                req.rule,
                flags,
                first_at_most_70pct=first_low,
                shortcut=side == "upper",
                sampling=sampling,
            )
        )
    return combine_limits(outcomes), outcomes


def _where_text(req: Requirement) -> str:
    if req.upper is not None and req.lower is not None:
        return "where the highest and the lowest values are expected"
    if req.lower is not None:
        return "where the lowest values are expected"
    return "where the highest values are expected"


def _limits_text(req: Requirement) -> str:
    from speccheck.units import to_drawing_unit

    du = req.drawing_unit if req.drawing_unit == "µin" else ""
    u = _unit_text(du or req.unit)

    def f(v: float) -> str:  # in the drawing's unit (µin on inch drawings)
        return f"{to_drawing_unit(v, du):.6g}" if du else _fmt(v)

    if req.upper is not None and req.lower is not None:
        return f"limits {f(req.lower)}{u} to {f(req.upper)}{u}"
    if req.upper is not None:
        return f"upper limit {f(req.upper)}{u}"
    assert req.lower is not None
    return f"lower limit {f(req.lower)}{u}"


def _further_text(n: int, per_section: bool, sections: int) -> str:
    if per_section:
        profiles = -(-n // sections)
        return f"{profiles} more profile{'s' if profiles != 1 else ''} ({n} more section values)"
    return f"{n} more profile{'s' if n != 1 else ''}"


def _reference_line(req: Requirement, cond: Conditions) -> str:
    """The mean line the value is measured from, in words (names.reference_line)."""
    from speccheck.parameters.names import parse_parameter_name, reference_line

    parsed = parse_parameter_name(req.parameter)
    assert parsed is not None
    if cond.profile == "P":
        return "least-squares line of the evaluated portion (ISO 4287)"
    return reference_line(parsed.base, cond.filter)


def _basis(req: Requirement, cond: Conditions) -> str:
    """ "field" or "section": how the requirement's parameter is computed (names.basis)."""
    from speccheck.parameters.names import basis, parse_parameter_name

    parsed = parse_parameter_name(req.parameter)
    assert parsed is not None  # requirement_conditions refused unknown names
    if cond.profile == "P" or cond.sections == 1:  # one section is the evaluation length
        return "field"
    return basis(parsed.base, cond.definitions)


def _u_text(req: Requirement, values: list[_Value]) -> str:
    """ "U = 0.05 µm (stated, not estimated)" or the range of the estimated U."""
    unit = _unit_text(req.unit)
    if not req.uncertainty_estimated:
        return f"U = {_fmt(req.uncertainty or 0.0)}{unit} (stated, not estimated)"
    us = [v.u for v in values if v.u is not None]
    if not us:
        return "U estimated per value (no value to estimate)"
    span = f"{min(us):.3g}{unit}" if max(us) == min(us) else f"{min(us):.3g} to {max(us):.3g}{unit}"
    return f"U estimated per value, {span} (95 %)"


def _requirement_result(
    spec: LoadedSpec, req: Requirement, cond: Conditions, values: list[_Value]
) -> RequirementResult:
    outcome, per_side = _judge(req, values, req.decision_rule, spec.sampling)
    verdict: Verdict = outcome.verdict
    u = req.uncertainty
    hinges = False
    in_range = 0
    records: list[ValueRecord] = []
    for v in values:
        if v.value is None:
            assert v.unknown is not None
            records.append(
                ValueRecord(
                    v.measurement,
                    None,
                    req.unit,
                    None,
                    None,
                    v.section,
                    f"{v.unknown.status}: {v.unknown.note}",
                )
            )
            continue
        uv = _u(req, v)
        z = zone(v.value, upper=req.upper, lower=req.lower, uncertainty=uv)
        in_range += z == "uncertain"
        exceeding = any(
            counts_as_exceeding(
                v.value, limit=lim, side=side, decision_rule=req.decision_rule, uncertainty=uv
            )
            for side, lim in _sides(req)
        )
        record = ValueRecord(
            v.measurement, v.value, req.unit, z, "exceeding" if exceeding else "within", v.section
        )
        record.uncertainty = uv
        records.append(record)
    if (u is not None or req.uncertainty_estimated) and in_range:
        # uncertainty range counted exceeding, then counted within
        low, _ = _judge(req, values, "guarded-acceptance", spec.sampling)
        high, _ = _judge(req, values, "guarded-rejection", spec.sampling)
        hinges = low.verdict != high.verdict

    late = _mark_after_decision(records, outcome.decided_at)
    rule_text = rule_words(spec.convention, req.rule, spec.sampling)
    ref = rules_standard(spec.convention)
    side_texts = []
    for (side, _lim), o in zip(_sides(req), per_side, strict=True):
        step = o.step
        if side == "lower":  # the rules count "exceeding"; for a lower limit that is "below"
            step = step.replace("exceeds", "falls below").replace("exceed", "fall below")
        side_texts.append(f"{side} limit: {step}" if len(per_side) > 1 else step)
    explanation = (
        f"{req.parameter} against the {_limits_text(req)}, {rule_text}: {'; '.join(side_texts)}"
    )
    if u is not None or req.uncertainty_estimated:
        explanation += (
            f"; {_u_text(req, values)}, {ILAC_G8_NAMES[req.decision_rule]}"
            f", {in_range} value{'s' if in_range != 1 else ''} in the uncertainty range"
        )
    explanation += _after_decision_text(late) + "."

    reason: str | None = None
    next_step: str | None = None
    per_section = spec.value_per == "section"
    unknowns = [v for v in values if v.unknown is not None]
    if verdict == "undecided":
        parts = []
        if outcome.unknown_decisive and unknowns:
            by_measurement: dict[int, _Unknown] = {}
            for v in unknowns:
                assert v.unknown is not None
                by_measurement.setdefault(v.measurement, v.unknown)
            reason = next(iter(by_measurement.values())).status
            for i, unk in by_measurement.items():
                parts.append(f"measurement {i + 1}: {unk.note}; {unk.action}")
            if outcome.further is not None:
                more = _further_text(outcome.further, per_section, req.sections)
                parts.append(f"or measure {more} {_where_text(req)} ({ref})")
        else:
            reason = "more-measurements"
            by_measurement = {}
            for v in unknowns:  # sequential procedure: they gave no value and are not steps
                assert v.unknown is not None
                by_measurement.setdefault(v.measurement, v.unknown)
            for i, unk in by_measurement.items():
                reason = reason if reason != "more-measurements" else unk.status
                parts.append(f"measurement {i + 1}: {unk.note}; {unk.action}")
            more = _further_text(outcome.further or 1, per_section, req.sections)
            parts.append(f"measure {more} {_where_text(req)} ({ref})")
        next_step = "; ".join(parts)
    elif hinges:
        reason = "uncertainty-range"
        if req.decision_rule == "guarded-acceptance" and verdict == "nonconforming":
            explanation = (
                explanation[:-1]
                + "; conformity is not proven because values lie within U of a limit."
            )
        elif req.decision_rule == "simple":
            explanation = (
                explanation[:-1]
                + "; decided by simple acceptance although values lie within U of a limit."
            )
        elif req.decision_rule == "guarded-rejection" and verdict == "conforming":
            explanation = (
                explanation[:-1]
                + "; non-conformity is not proven because values lie within U of a limit."
            )

    conditions = {
        "lambda_c_mm": cond.lambda_c_mm,
        "lambda_c_source": req.lambda_c_source,
        "lambda_s_um": cond.lambda_s_um,
        "lambda_s_source": req.lambda_s_source,
        "lambda_f_mm": cond.lambda_f_mm,
        "lambda_f_source": req.lambda_f_source or None,
        "sections": cond.sections,
        "evaluation_length_mm": cond.evaluation_length_mm,
        "required_trace_mm": cond.required_trace_mm,
        "ends": cond.ends,
        "ends_source": req.ends_source,
        "max_spacing_um": max_spacing_for_um(cond.lambda_c_mm),
        "filter": cond.filter,
        "reference_line": _reference_line(req, cond),
        "form": cond.form,
        "profile": cond.profile,
        "definitions": cond.definitions,
        "basis": _basis(req, cond),
        "cutoff_table": req.cutoff_table,
        "rule_source": req.rule_source,
        "value_per": spec.value_per,
        "location": req.location,
    }
    return RequirementResult(
        text=req.text,
        parameter=req.parameter,
        upper=req.upper,
        lower=req.lower,
        unit=req.unit,
        rule=req.rule,
        decision_rule=req.decision_rule,
        uncertainty=u,
        verdict=verdict,
        reason=reason,
        explanation=explanation,
        next=next_step,
        values=records,
        conditions=conditions,
        # Diagnostics (isolated features, influence of few points) are attached in
        # _attach_diagnostics below; this list stays empty until then.
        diagnostics=[],
        sampling=spec.sampling,
        uncertainty_source=req.uncertainty_source,
        **_in_drawing_unit(req, records),
    )


def _in_drawing_unit(req: Requirement, records: list[ValueRecord]) -> dict[str, Any]:
    """Values and limits in the drawing's unit (µin) beside the µm ones, when it differs."""
    from speccheck.units import to_drawing_unit

    du = req.drawing_unit
    if not du or du == req.unit:
        return {}

    def conv(v: float | None) -> float | None:
        return None if v is None else to_drawing_unit(v, du)

    for r in records:
        r.drawing_value = conv(r.value)
    limits = {
        "upper": conv(req.upper),
        "lower": conv(req.lower),
        "uncertainty": conv(req.uncertainty),
    }
    return {"drawing_unit": du, "drawing_limits": limits}


def _mark_after_decision(records: list[ValueRecord], decided_at: int | None) -> list[ValueRecord]:
    """Flag the values after the deciding one (ISO 4288 5.2 step procedure); return them."""
    if decided_at is None:
        return []
    for r in records[decided_at:]:
        r.after_decision = True
    return records[decided_at:]


def _after_decision_text(late: list[ValueRecord]) -> str:
    if not late:
        return ""
    n = len(late)
    text = f"; {n} value{'s' if n != 1 else ''} after the decision, not counted"
    beyond = sum(1 for r in late if r.counts_as == "exceeding")
    if beyond:
        text += f" ({beyond} of them exceed{'s' if beyond == 1 else ''} a limit)"
    return text


def _with_estimates(vals: list[_Value], est: Any, budget: list[dict[str, Any]]) -> list[_Value]:
    """Values with their estimated U; the estimate's budget appended to ``budget``."""
    from dataclasses import replace

    if est is None:
        return vals
    out = []
    for v in vals:
        if v.value is None:
            out.append(v)
            continue
        out.append(replace(v, u=est.expanded))
        budget.append({"measurement": v.measurement, **est.to_dict()})
    return out


def _attach_diagnostics(
    spec: LoadedSpec,
    results: list[RequirementResult],
    conds: list[Conditions],
    computed: dict[tuple[int, Conditions], Any],
) -> None:
    """Attach robustness diagnostics to each requirement; apply the spec's opt-in policy.

    Diagnostics never change a verdict unless the spec says ``isolated_features: undecided``;
    then a decided requirement whose parameter rests on isolated features becomes undecided
    with reason ``isolated-features``.
    """
    from speccheck.diagnostics import diagnose, policy_outcome

    for res, cond in zip(results, conds, strict=True):
        found = []
        diags = []
        for (i, c), ps in sorted(computed.items(), key=lambda kv: kv[0][0]):
            if c != cond or not ps:
                continue
            for d in diagnose(ps, requested=[res.parameter]):
                diags.append(d)
                found.append({"measurement": i, **d.to_dict()})
        res.diagnostics = found
        if res.verdict == "undecided" or not found:
            continue
        if policy_outcome(diags, spec.isolated_features) is None:
            continue
        where = ", ".join(
            f"profile {d['measurement'] + 1} at x = {f['x_mm']:.3f} mm"
            for d in found
            for f in d.get("features", [])
        )
        res.verdict = "undecided"
        res.reason = "isolated-features"
        res.explanation = (
            f"{res.parameter} rests on isolated features ({where}); the specification asks "
            "for such results to be decided by inspection, not by the value alone."
        )
        res.next = (
            "examine the surface at the features named; if they are damage, judge them under "
            "the drawing's surface-imperfection requirements and re-measure clear of them"
        )


def _parse_time(created: str) -> datetime | None:
    """The evaluation time from its ISO 8601 text ('Z' or an offset; naive taken as UTC)."""
    try:
        t = datetime.fromisoformat(created.replace("Z", "+00:00"))
    except ValueError:
        return None
    return t if t.tzinfo else t.replace(tzinfo=UTC)


def _undecided_by_calibration(results: list[RequirementResult], cal: dict[str, Any]) -> None:
    """An instrument out of calibration decides nothing: every requirement becomes undecided
    with the calibration as its reason; the values stay on the record, not judged."""
    from speccheck.evaluation.identity import OUT_OF_CALIBRATION

    if cal["status"] not in OUT_OF_CALIBRATION:
        return
    for res in results:
        res.verdict = "undecided"
        res.reason = f"calibration-{cal['status']}"
        res.explanation = f"{cal['text']} The values are shown, not judged."
        res.next = (
            "have the instrument calibrated (or use one in calibration), update its instrument "
            "file and measure again"
        )


def _overall(results: list[RequirementResult]) -> tuple[Verdict, str | None]:
    if not results:
        return "undecided", "more-measurements"
    worst = min(results, key=lambda r: _RANK[r.verdict])
    return worst.verdict, worst.reason


def evaluate(
    spec: LoadedSpec,
    profiles: Sequence[Profile],
    *,
    created: str | None = None,
    instrument: LoadedInstrument | None = None,
    stated: Stated | None = None,
) -> CheckResult:
    """Check measured profiles against a loaded specification.

    Parameters
    ----------
    spec:
        From :func:`speccheck.spec.loader.load_spec`.
    profiles:
        The measured profiles in measurement order (the order matters for the first step of
        the 16 % rule).
    created:
        ISO 8601 UTC time stamp to record; now when None.
    instrument:
        The instrument file (:func:`speccheck.instrument.load_instrument`); its calibration
        data give every value its own U under ``uncertainty: estimate``, and its identity
        and calibration date go on the record.
    stated:
        Part serial, operator, order and note for the record; the spec's ``record.require``
        says which must be given. ``created`` is the evaluation time the calibration age is
        counted to when the profiles state no measurement date.

    Returns
    -------
    CheckResult
        Verdicts per requirement and overall, every value with its zone, every measurement
        with its status.

    Raises
    ------
    SpecError
        A requirement that cannot be applied (a guarded decision rule without U, an impossible
        set of conditions), naming the spec file and the requirement's line.

    References
    ----------
    ISO 4288:1996 5.2, 5.3 (acceptance rules); ISO 14253-1:2017 (decision rules); ISO 3274:1996
    Table 1 (sampling spacing).
    """
    from speccheck.evaluation.identity import record_identity
    from speccheck.parameters.compute import compute_parameters

    created = created or datetime.now(UTC).strftime("%Y-%m-%dT%H:%M:%SZ")
    identity = record_identity(spec, profiles, instrument, stated, _parse_time(created))
    prepared = [_prepare(p) for p in profiles]
    reqs = apply_periodic_test(list(spec.requirements), prepared)
    conds = []
    for req in reqs:
        _check_requirement(spec, req)
        conds.append(requirement_conditions(spec, req))
    # parametrised names ("Rmr(0.5)") each set of conditions must compute, in a fixed order
    extras: dict[Conditions, list[str]] = {}
    for req, cond in zip(reqs, conds, strict=True):
        lst = extras.setdefault(cond, [])
        if "(" in req.parameter and req.parameter not in lst:
            lst.append(req.parameter)

    computed: dict[tuple[int, Conditions], Any] = {}
    from speccheck.evaluation.estimate import estimator_for

    estimator = estimator_for(spec, instrument, reqs, conds)

    def params(i: int, cond: Conditions) -> Any:
        key = (i, cond)
        if key not in computed:
            p = prepared[i]
            try:
                computed[key] = compute_parameters(
                    p.z_um, dx_um=p.dx_um, conditions=cond, extra=tuple(extras[cond])
                )
            except ValueError as exc:
                req = next(r for r, c in zip(reqs, conds, strict=True) if c == cond)
                raise SpecError(f"{req.text}: {exc}", path=spec.path, where=req.location) from exc
        return computed[key]

    statuses: list[list[_Unknown]] = [[] for _ in prepared]
    results: list[RequirementResult] = []
    found: list[dict[str, dict[str, Any]]] = [{} for _ in prepared]
    for req, cond in zip(reqs, conds, strict=True):
        values: list[_Value] = []
        budget: list[dict[str, Any]] = []
        for i, p in enumerate(prepared):
            unknown = _unusable(p, cond)
            ps = params(i, cond) if unknown is None else None
            if unknown is None and ps is not None and not ps:
                unknown = _too_short(ps, cond)
            if unknown is not None or ps is None:
                assert unknown is not None
                statuses[i].append(unknown)
                values.append(_Value(i, None, None, unknown))
                continue
            vals = _parameter_values(spec, req, i, ps)
            if estimator is not None and req.uncertainty_estimated:
                vals = _with_estimates(vals, estimator.get(i, p, cond, ps, req.parameter), budget)
            values.extend(vals)
            pv = ps.values.get(req.parameter)
            if pv is not None:
                key = req.parameter
                entry = {
                    "value": float(pv.value) if math.isfinite(pv.value) else None,
                    "unit": pv.unit,
                    "lambda_c_mm": cond.lambda_c_mm,
                    "sections": cond.sections,
                }
                if key in found[i] and found[i][key] != entry:
                    key = f"{key} (λc {_fmt(cond.lambda_c_mm)} mm, {cond.sections} sections)"
                found[i][key] = entry
        results.append(_requirement_result(spec, req, cond, values))
        results[-1].uncertainty_budget = budget

    _attach_diagnostics(spec, results, conds, computed)
    _undecided_by_calibration(results, identity["calibration"])

    measurements = []
    for i, (raw, p) in enumerate(zip(profiles, prepared, strict=True)):
        st = statuses[i]
        status = next((u for s in _NOT_EVALUATED[:3] for u in st if u.status == s), None)
        d = p.dropouts
        measurements.append(
            MeasurementRecord(
                index=i,
                path=raw.source.path,
                sha256=raw.source.sha256,
                format=raw.source.format,
                points=raw.n_points,
                spacing_um=raw.dx_um,
                length_mm=raw.length_mm,
                status=status.status if status else "evaluated",  # type: ignore[arg-type]
                reason=status.note if status else None,
                dropouts={
                    "invalid_points": d.invalid_points,
                    "interpolated_points": d.interpolated_points,
                    "runs": d.runs,
                    "longest_run_points": d.longest_run_points,
                    "refused_gaps_mm": [list(g) for g in d.refused_gaps_mm],
                },
                parameters=found[i],
                fingerprint=height_fingerprint(raw),
            )
        )
    verdict, reason = _overall(results)
    return CheckResult(
        verdict=verdict,
        reason=reason,
        requirements=results,
        measurements=measurements,
        spec={
            "path": spec.path,
            "sha256": spec.sha256,
            # flat, as documented in result.py: "part" is the part number
            "part": spec.part.get("number"),
            "part_number": spec.part.get("number"),
            **{k: v for k, v in sorted(spec.part.items()) if k != "number"},
            "convention": spec.convention,
            "decision_rule": spec.decision_rule,
            "value_per": spec.value_per,
            "isolated_features": spec.isolated_features,
            "sampling": spec.sampling,
        },
        software={"name": "speccheck", "version": __version__},
        created=created,
        identity=identity,
    )


def load_inputs(
    spec_path: str | Path,
    profile_paths: Sequence[str | Path],
    *,
    fmt: str | None = None,
    dx: Any = None,
    decimal: str = ".",
    stated: Stated | None = None,
) -> tuple[LoadedSpec, list[Profile]]:
    """Load a spec file and the measured profile files (each with its SHA-256).

    Parameters
    ----------
    spec_path:
        The YAML specification.
    profile_paths:
        Measured profile files, in measurement order.
    fmt, dx, decimal:
        Passed to :func:`speccheck.readers.read_profile` (format, spacing of z-only text files
        such as ``"0.5um"``, decimal separator).
    stated:
        The identity stated for the record: what the spec's ``record.require`` asks for is
        checked before any profile is read.

    Raises
    ------
    SpeccheckError
        Bad spec (SpecError) or unreadable profile (InputError), naming the file and place;
        required identity not stated (SpecError at ``record.require``).
    """
    from speccheck.evaluation.identity import Stated
    from speccheck.readers import read_profile
    from speccheck.spec.loader import load_spec
    from speccheck.spec.record import missing_identity

    spec = load_spec(spec_path)
    stated_fields = (stated or Stated()).to_dict()
    error = missing_identity(spec, stated_fields, fields=("serial", "operator", "order", "note"))
    if error is not None:
        raise error
    # read_profile records the SHA-256 of each file's bytes in Profile.source
    profiles = [read_profile(p, fmt=fmt, dx=dx, decimal=decimal) for p in profile_paths]
    return spec, profiles


def evaluate_files(
    spec_path: str | Path,
    profile_paths: Sequence[str | Path],
    *,
    fmt: str | None = None,
    dx: Any = None,
    decimal: str = ".",
    created: str | None = None,
    instrument_path: str | Path | None = None,
    stated: Stated | None = None,
) -> CheckResult:
    """Load a spec file and profile files (:func:`load_inputs`), then :func:`evaluate` them;
    ``instrument_path`` is the instrument file (identity, calibration date, and the data for
    ``uncertainty: estimate``), ``stated`` the identity stated for the record."""
    spec, profiles = load_inputs(
        spec_path, profile_paths, fmt=fmt, dx=dx, decimal=decimal, stated=stated
    )
    instrument = None
    if instrument_path is not None:
        from speccheck.instrument import load_instrument

        instrument = load_instrument(instrument_path)
    return evaluate(spec, profiles, created=created, instrument=instrument, stated=stated)
