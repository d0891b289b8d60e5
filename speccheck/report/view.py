"""The report's view model: plain data, every string already worded, for logic-free templates."""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

__all__ = [
    "CAUTIONS",
    "VERDICT_WORDS",
    "PlotView",
    "ValueRow",
    "RequirementView",
    "MeasurementView",
    "FeatureRow",
    "SignatureView",
    "ReportView",
    "format_number",
    "plain_number",
    "build_view",
]

VERDICT_WORDS = {
    "conforming": "CONFORMING",
    "nonconforming": "NONCONFORMING",
    "undecided": "UNDECIDED",
}
_VERDICT_SENTENCES = {
    "conforming": "Every requirement of the specification is met under the rules stated below.",
    "nonconforming": "At least one requirement of the specification is not met.",
    "undecided": (
        "The measurements do not yet decide at least one requirement: see the next step "
        "given for it. Do not release or reject the part on this record."
    ),
}
_RULE_WORDS = {"16%": "16 % rule", "max": "max rule (no value may exceed)"}
_DECISION_WORDS = {
    "simple": "simple acceptance (no guard band)",
    "guarded-acceptance": "guarded acceptance (limits tightened by U)",
    "guarded-rejection": "guarded rejection (limits widened by U)",
}
_ZONE_WORDS = {
    "within": "inside",
    "uncertain": "within U of a limit",
    "outside": "outside",
}
_STATUS_WORDS = {
    "evaluated": "evaluated",
    "insufficient-data": "not evaluated: insufficient data",
    "other-conditions": "not evaluated: measured under other conditions",
    "dropouts": "not evaluated: too many missing points",
}

SHORT_CAUTION = (
    "The governing drawing, the contract and the applicable standards take precedence over this "
    "record; it assists, and does not replace, the judgement of qualified inspectors. "
    "See the cautions at the end."
)

CAUTIONS = (
    "This record is only as good as the measurement behind it: the instrument must be "
    "calibrated, traceable to national standards and used within its stated uncertainty.",
    "Measurements and their interpretation are for qualified personnel.",
    "The governing drawing, the contract and the applicable standards take precedence over "
    "this record. Where they differ from the specification file used here, they govern.",
    "speccheck assists the inspector; it does not replace the inspector's judgement. A "
    "surface that conforms here can still be unfit, for example with a defect outside the traces.",
    "The customer's quality requirements govern acceptance and release of the parts.",
    "Anyone can check this record: 'speccheck verify' tests the digital signature and "
    "recomputes the result from the specification and profile files attached to this PDF.",
)


def format_number(value: float | None, unit: str = "") -> str:
    """Four significant digits in fixed notation (no exponent), with the unit after a space."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "—"
    v = float(value)
    if v == 0:
        text = "0"
    else:
        decimals = max(0, 3 - int(math.floor(math.log10(abs(v)))))
        text = f"{v:.{min(decimals, 8)}f}"
    return f"{text} {unit}".strip()


@dataclass(frozen=True)
class PlotView:
    title: str
    src: str  # data: URI of an SVG
    caption: str
    wide: bool = True

    @property
    def css_class(self) -> str:
        return "wide" if self.wide else "half"


@dataclass(frozen=True)
class ValueRow:
    measurement: str  # "1"
    file: str
    section: str
    value: str
    zone: str
    counts_as: str
    note: str


@dataclass(frozen=True)
class RequirementView:
    number: int
    callout: str
    parameter: str
    limits: str
    rule: str
    decision_rule: str
    decision_short: str  # "guarded acceptance, U 0.03 µm" for the summary table
    uncertainty: str
    conditions: str
    sources: str
    verdict_word: str
    verdict_class: str
    explanation: str
    next_step: str
    tally: str
    values: list[ValueRow]


@dataclass(frozen=True)
class FeatureRow:
    requirement: str
    measurement: str
    position: str
    depth: str
    width: str
    note: str


@dataclass(frozen=True)
class MeasurementView:
    number: int
    file: str
    sha256: str
    format: str
    points: str
    spacing: str
    length: str
    status: str
    key_values: str
    plots: list[PlotView] = field(default_factory=list)
    plot_note: str = ""
    css_class: str = ""  # "page-start": begins a new page


@dataclass(frozen=True)
class SignatureView:
    signed: bool
    status: str  # "NOT SIGNED" or "Digitally signed (PAdES)"
    signer: str
    role: str
    date: str
    fingerprint: str
    note: str  # demo-key warning or how to verify
    summary: str = ""  # one line for page 1: "name (org), role, date"
    chain: str = ""  # the records store's head when this record was written, if recorded

    @property
    def css_class(self) -> str:
        return "signed" if self.signed else "unsigned"


@dataclass(frozen=True)
class ReportView:
    title: str
    part_line: str
    identity: list[tuple[str, str, str]]  # (label, value, CSS class)
    verdict_word: str
    verdict_class: str
    verdict_sentence: str
    verdict_reason: str
    next_steps: list[str]  # "Requirement 2 (Rz 6.3): measure ..." for every undecided requirement
    signature: SignatureView
    requirements: list[RequirementView]
    measurements: list[MeasurementView]
    features: list[FeatureRow]
    cautions: Sequence[str]
    short_caution: str
    attachments: list[tuple[str, str]]  # (file name, what it is)
    footer: str
    created: str
    software: str


def plain_number(value: float | None, unit: str = "") -> str:
    """A stated number (limit, cut-off) as written: shortest form, no trailing zeros."""
    if value is None:
        return "—"
    return f"{float(value):.10g} {unit}".strip()


def _limits_text(upper: float | None, lower: float | None, unit: str) -> str:
    if upper is not None and lower is not None:
        return f"{plain_number(lower)} to {plain_number(upper, unit)}"
    if upper is not None:
        return f"upper {plain_number(upper, unit)}"
    if lower is not None:
        return f"lower {plain_number(lower, unit)}"
    return "none stated"


def _value_text(v: Any, req: Any) -> str:
    """A value in the drawing's unit (µin on inch drawings), else in its own unit."""
    du, dv = getattr(req, "drawing_unit", None), getattr(v, "drawing_value", None)
    if du and dv is not None:
        return format_number(dv, du)
    return format_number(v.value, v.unit)


def _drawing_limits_text(req: Any) -> str:
    """Limits in the drawing's unit with the µm values beside them when the two differ."""
    own = _limits_text(req.upper, req.lower, req.unit)
    du, dl = getattr(req, "drawing_unit", None), getattr(req, "drawing_limits", None)
    if not du or not dl:
        return own
    return f"{_limits_text(dl.get('upper'), dl.get('lower'), du)} ({own})"


def _conditions_text(c: Mapping[str, Any]) -> str:
    parts = []
    if c.get("lambda_c_mm") is not None:
        parts.append(f"λc {plain_number(c['lambda_c_mm'], 'mm')}")
    if "lambda_s_um" in c:
        ls = c.get("lambda_s_um")
        parts.append(f"λs {plain_number(ls, 'µm')}" if ls is not None else "no λs filter")
    if c.get("lambda_f_mm") is not None:
        parts.append(f"λf {plain_number(c['lambda_f_mm'], 'mm')}")
    if c.get("sections") is not None:
        parts.append(f"{c['sections']} sections")
    if c.get("evaluation_length_mm") is not None:
        parts.append(f"evaluation length {plain_number(c['evaluation_length_mm'], 'mm')}")
    if c.get("reference_line"):
        parts.append(f"measured from the {c['reference_line']}")
    elif c.get("filter"):
        parts.append(f"{c['filter']} filter")
    if c.get("basis"):
        edition = "ISO 21920-2" if c.get("definitions") == "iso21920-2" else "ISO 4287"
        what = "field value" if c["basis"] == "field" else "mean of section values"
        parts.append(f"{what} ({edition})")
    if c.get("form"):
        parts.append(f"form removed: {c['form']}")
    if c.get("max_spacing_um") is not None:
        parts.append(f"sampling spacing at most {plain_number(c['max_spacing_um'], 'µm')}")
    if c.get("required_trace_mm") is not None:
        parts.append(f"trace of at least {plain_number(c['required_trace_mm'], 'mm')}")
    if c.get("ends") == "moment":
        parts.append("filters run to the trace ends (ISO 16610-28 moment criterion)")
    elif c.get("ends") == "run-in":
        parts.append("one cut-off of run-in and run-out")
    if c.get("value_per") == "section":
        parts.append("one value per section")
    return "; ".join(parts) if parts else "not recorded"


_SOURCE_LABELS = (
    ("lambda_c_source", "λc"),
    ("lambda_s_source", "λs"),
    ("rule_source", "rule"),
    ("cutoff_table", "cut-off table"),
    ("location", "specification"),
)


def _sources_text(c: Mapping[str, Any]) -> str:
    parts = [f"{label}: {c[key]}" for key, label in _SOURCE_LABELS if c.get(key)]
    return "; ".join(parts)


def _file_name(path: str | None) -> str:
    if not path:
        return "—"
    return path.replace("\\", "/").rsplit("/", 1)[-1]


def _feature_dicts(diag: Mapping[str, Any]) -> list[dict[str, Any]]:
    if "x_mm" in diag:
        return [dict(diag)]
    feats = diag.get("features")
    if isinstance(feats, list):
        out = []
        for f in feats:
            if isinstance(f, Mapping):
                d = dict(f)
                d.setdefault("measurement", diag.get("measurement"))
                d.setdefault("message", diag.get("message") or diag.get("summary"))
                out.append(d)
        return out
    return []


def features_by_measurement(result: Any) -> dict[int, list[dict[str, Any]]]:
    """Isolated features of all requirements' diagnostics, grouped by measurement index."""
    out: dict[int, list[dict[str, Any]]] = {}
    for req in result.requirements:
        for diag in req.diagnostics or []:
            for f in _feature_dicts(diag):
                m = f.get("measurement")
                if isinstance(m, int):
                    out.setdefault(m, []).append(f)
    return out


def build_view(
    result: Any,
    *,
    signature: SignatureView,
    plots: Mapping[int, list[PlotView]] | None = None,
    plot_notes: Mapping[int, str] | None = None,
    attachments: Sequence[tuple[str, str]] = (),
    spec_identity: Sequence[tuple[str, str]] = (),
) -> ReportView:
    """Word every field of a :class:`~speccheck.evaluation.result.CheckResult` for the templates.

    Parameters
    ----------
    result:
        The check result.
    signature:
        What to say in the signature block.
    plots, plot_notes:
        Per measurement index, the plots to show and a note (e.g. why there is no plot).
    attachments:
        (file name, description) of each file attached to the PDF.
    spec_identity:
        Extra (label, value) rows about the specification.
    """
    plots = plots or {}
    plot_notes = plot_notes or {}
    spec = result.spec or {}
    part_raw = spec.get("part")
    part: Mapping[str, Any] = part_raw if isinstance(part_raw, Mapping) else {}
    number = (
        part.get("number")
        or spec.get("part_number")
        or (part_raw if isinstance(part_raw, str) else None)
        or "—"
    )
    revision = part.get("revision") or spec.get("revision")
    surface = part.get("surface") or spec.get("surface")
    part_line = f"Part {number}" + (f" rev. {revision}" if revision else "")
    if surface:
        part_line += f", surface {surface}"

    identity: list[tuple[str, str]] = [("Part number", str(number))]
    for label, key in (
        ("Revision", "revision"),
        ("Part name", "name"),
        ("Surface", "surface"),
        ("Drawing", "drawing"),
        ("Supplier", "supplier"),
    ):
        v = part.get(key) or spec.get(key) or spec.get(f"part_{key}")
        if v:
            identity.append((label, str(v)))
    identity.append(("Specification file", _file_name(spec.get("path"))))
    if spec.get("sha256"):
        identity.append(("Specification SHA-256", str(spec["sha256"])))
    if spec.get("convention"):
        identity.append(("Convention", str(spec["convention"])))
    identity.extend(spec_identity)
    sw = result.software or {}
    software = f"{sw.get('name', 'speccheck')} {sw.get('version', '')}".strip()
    identity.append(("Evaluated with", software))
    identity.append(("Evaluated at (UTC)", result.created))
    identity_rows = [(k, v, "hash" if "SHA-256" in k else "") for k, v in identity]

    files = {m.index: _file_name(m.path) for m in result.measurements}

    requirements = []
    for i, req in enumerate(result.requirements, start=1):
        rows = []
        exceeding = 0
        late = sum(1 for v in req.values if getattr(v, "after_decision", False))
        for v in req.values:
            after = bool(getattr(v, "after_decision", False))
            if v.counts_as == "exceeding" and not after:
                exceeding += 1
            rows.append(
                ValueRow(
                    measurement=str(v.measurement + 1),
                    file=files.get(v.measurement, "—"),
                    section=str(v.section + 1) if v.section is not None else "",
                    value=_value_text(v, req),
                    zone=_ZONE_WORDS.get(v.zone or "", "—"),
                    counts_as={"within": "within", "exceeding": "EXCEEDING"}.get(
                        v.counts_as or "", "—"
                    ),
                    note="; ".join(
                        n for n in (v.note, "after the decision, not counted" if after else "") if n
                    ),
                )
            )
        counted = sum(
            1 for v in req.values if v.value is not None and not getattr(v, "after_decision", 0)
        )
        tally = f"{counted} value{'s' if counted != 1 else ''}, {exceeding} exceeding"
        if late:
            tally += f"; {late} after the decision, not counted"
        unc = (
            f"U = {plain_number(req.uncertainty, req.unit)} (k = 2)"
            if req.uncertainty is not None
            else "not stated (taken as 0)"
        )
        requirements.append(
            RequirementView(
                number=i,
                callout=req.text,
                parameter=req.parameter,
                limits=_drawing_limits_text(req),
                rule=_RULE_WORDS.get(req.rule, req.rule),
                decision_rule=_DECISION_WORDS.get(req.decision_rule, req.decision_rule),
                decision_short=req.decision_rule.replace("-", " ")
                + (f", U {plain_number(req.uncertainty, req.unit)}" if req.uncertainty else ""),
                uncertainty=unc,
                conditions=_conditions_text(req.conditions or {}),
                sources=_sources_text(req.conditions or {}),
                verdict_word=VERDICT_WORDS.get(req.verdict, req.verdict.upper()),
                verdict_class=f"v-{req.verdict}",
                explanation=req.explanation,
                next_step=req.next or "none: decided",
                tally=tally,
                values=rows,
            )
        )

    measurements: list[MeasurementView] = []
    for m in result.measurements:
        kv = []
        for name in ("Ra", "Rz", "Rsk", "Rk", "Rpk", "Rvk"):
            p = (m.parameters or {}).get(name)
            if isinstance(p, Mapping) and p.get("value") is not None:
                kv.append(f"{name} {format_number(p['value'], p.get('unit', ''))}")
        status = _STATUS_WORDS.get(m.status, m.status)
        if m.reason:
            status += f" ({m.reason})"
        measurements.append(
            MeasurementView(
                number=m.index + 1,
                file=_file_name(m.path),
                sha256=m.sha256 or "—",
                format=m.format or "—",
                points=str(m.points),
                spacing=plain_number(m.spacing_um, "µm"),
                length=plain_number(m.length_mm, "mm"),
                status=status,
                key_values=", ".join(kv) if kv else "",
                plots=list(plots.get(m.index, [])),
                plot_note=plot_notes.get(m.index, ""),
                css_class="page-start" if measurements else "",
            )
        )

    features = []
    for i, req in enumerate(result.requirements, start=1):
        for diag in req.diagnostics or []:
            feats = _feature_dicts(diag)
            if not feats:
                msg = (
                    diag.get("message")
                    or diag.get("summary")
                    or "; ".join(f"{k}: {v}" for k, v in diag.items())
                )
                m = diag.get("measurement")
                features.append(
                    FeatureRow(
                        requirement=f"{i} ({req.parameter})",
                        measurement=str(m + 1) if isinstance(m, int) else "—",
                        position="—",
                        depth="—",
                        width="—",
                        note=str(msg),
                    )
                )
            for f in feats:
                m = f.get("measurement")
                features.append(
                    FeatureRow(
                        requirement=f"{i} ({req.parameter})",
                        measurement=str(m + 1) if isinstance(m, int) else "—",
                        position=format_number(f.get("x_mm"), "mm"),
                        depth=(
                            format_number(f.get("depth_um"), "µm") + " deep"
                            if f.get("depth_um") is not None
                            else format_number(f.get("height_um"), "µm") + " high"
                            if f.get("height_um") is not None
                            else "—"
                        ),
                        width=format_number(f.get("width_um"), "µm"),
                        note=" ".join(str(t) for t in (f.get("kind"), f.get("message")) if t),
                    )
                )

    verdict = result.verdict
    return ReportView(
        title="Surface finish conformance record",
        part_line=part_line,
        identity=identity_rows,
        verdict_word=VERDICT_WORDS.get(verdict, verdict.upper()),
        verdict_class=f"v-{verdict}",
        verdict_sentence=_VERDICT_SENTENCES.get(verdict, ""),
        verdict_reason=result.reason or "",
        next_steps=[
            f"Requirement {r.number} ({r.callout}): {r.next_step}"
            for r in requirements
            if r.verdict_class != "v-conforming" and r.next_step != "none: decided"
        ],
        signature=signature,
        requirements=requirements,
        measurements=measurements,
        features=features,
        cautions=CAUTIONS,
        short_caution=SHORT_CAUTION,
        attachments=list(attachments),
        footer=f"{part_line} — {VERDICT_WORDS.get(verdict, verdict)} — {signature.status}",
        created=result.created,
        software=software,
    )
