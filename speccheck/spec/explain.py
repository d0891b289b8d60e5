"""Say in plain words what a resolved requirement asks for, and where each setting came from."""

from __future__ import annotations

from speccheck.spec.requirement import LoadedSpec, Requirement

__all__ = ["explain_requirement", "explain_sentence", "explain_spec", "trace_lengths_note"]

_FILTER_WORDS = {
    "gaussian": "Gaussian filter (ISO 16610-21)",
    "robust": "robust Gaussian regression filter (ISO 16610-31)",
}
_FORM_WORDS = {
    "line": "least-squares line",
    "arc": "least-squares arc",
    "none": "nothing (no form removal)",
}
_DECISION_WORDS = {
    "simple": "simple acceptance (ILAC G8), no guard band",
    "guarded-acceptance": "guarded acceptance (ISO 14253-1): within only if inside the limit by U",
    "guarded-rejection": (
        "guarded rejection (ISO 14253-1): exceeding only if outside the limit by more than U"
    ),
}
_CONVENTION_WORDS = {
    "iso1302": "ISO 1302 drawing indication (ISO 4287 / ISO 4288 parameters and rules)",
    "iso21920": "ISO 21920 drawing indication (ISO 21920-2 / ISO 21920-3)",
    "asme": "ASME Y14.36 drawing indication (ASME B46.1 parameters)",
}


def _sampling_words(sampling: str, convention: str) -> str:
    """How the 16 % rule takes its values, citing the convention's rules standard."""
    from speccheck.spec.requirement import rules_standard

    ref = rules_standard(convention)
    ref += " 5.2" if ref == "ISO 4288" else ""
    if sampling == "sequential":
        return (
            f"the step procedure ({ref}) — decided at the first decisive step; values "
            "measured after it are listed but cannot reverse it"
        )
    return (
        f"a fixed sample ({ref}) — at most 16 % of all values may exceed; at least 12 "
        "values, chosen in advance"
    )


def _num(value: float, unit: str) -> str:
    if unit == "%":
        return f"{value:g} %"
    return f"{value:g} {unit}".strip()


def _limit_words(req: Requirement) -> str:
    p, u = req.parameter, req.unit

    def num(value: float) -> str:
        if req.drawing_unit == "µin":  # the drawing's unit first, µm beside it
            from speccheck.units import to_drawing_unit

            return f"{to_drawing_unit(value, 'µin'):.6g} µin ({_num(value, u)})"
        return _num(value, u)

    if req.upper is not None and req.lower is not None:
        return f"{num(req.lower)} ≤ {p} ≤ {num(req.upper)} (lower and upper limit)"
    if req.upper is not None:
        return f"{p} ≤ {num(req.upper)} (upper limit)"
    assert req.lower is not None
    return f"{p} ≥ {num(req.lower)} (lower limit)"


def _form_words(form: str) -> str:
    if form.startswith("poly"):
        return f"least-squares polynomial of degree {form[4:]}"
    return _FORM_WORDS.get(form, form)


def _basis_words(req: Requirement) -> str:
    from speccheck.parameters.names import basis_words, parse_parameter_name

    parsed = parse_parameter_name(req.parameter)
    if parsed is None:
        return "unknown parameter"
    sections = 1 if parsed.letter == "P" else req.sections
    if sections == 1:
        return "one section: the value over the evaluation length"
    src = "convention iso21920" if req.definitions == "iso21920-2" else "convention iso1302 or asme"
    return f"{basis_words(parsed.base, req.definitions, sections)} — {src}"


def _trace_mm(req: Requirement) -> float | None:
    from speccheck.errors import SpeccheckError

    try:
        return req.conditions().required_trace_mm
    except SpeccheckError:
        return None


def _trace_words(req: Requirement) -> str:
    from speccheck.errors import SpeccheckError

    try:
        c = req.conditions()
    except SpeccheckError as exc:
        return f"cannot be evaluated: {exc.message}"
    if c.ends == "moment":
        return (
            f"at least {c.required_trace_mm:g} mm, all of it evaluated (filters run to the "
            f"trace ends by the ISO 16610-28 moment criterion) — speccheck"
        )
    return (
        f"at least {c.required_trace_mm:g} mm ({c.evaluation_length_mm:g} mm evaluated, "
        f"{c.run_in_mm:g} mm run-in and run-out each) — speccheck"
    )


def trace_lengths_note(requirements: tuple[Requirement, ...] | list[Requirement]) -> str | None:
    """One line when the requirements need traces of different lengths, else None.

    The longest trace serves every requirement (each is evaluated on its own centred window),
    the shorter ones only some: the line names each requirement's length.
    """
    lengths = [(i, r, _trace_mm(r)) for i, r in enumerate(requirements, start=1)]
    known = [(i, r, t) for i, r, t in lengths if t is not None]
    if len({t for _, _, t in known}) < 2:
        return None
    each = ", ".join(f"[{i}] {r.text}: {t:g} mm (λc {r.lambda_c_mm:g} mm)" for i, r, t in known)
    longest = max(t for _, _, t in known)
    return (
        f"the requirements need traces of different lengths: {each}; a trace of {longest:g} mm "
        "serves all, each requirement evaluated on its own centred window"
    )


def _filter_words(req: Requirement) -> str:
    from speccheck.parameters.names import parse_parameter_name, reference_line

    parsed = parse_parameter_name(req.parameter)
    if parsed is None:
        return _FILTER_WORDS[req.filter]
    return reference_line(parsed.base, req.filter)


def _waviness_band(req: Requirement) -> list[tuple[str, str]]:
    if req.lambda_f_mm is None:
        return []
    return [
        (
            "band",
            f"waviness band λc {req.lambda_c_mm:g} mm – λf {req.lambda_f_mm:g} mm "
            f"(W = mean line at λc − mean line at λf) — {req.lambda_f_source}",
        )
    ]


def explain_requirement(req: Requirement) -> list[tuple[str, str]]:
    """(label, text) pairs for ``req``; each setting is followed by " — " and its source."""
    rule_words = "16 % rule" if req.rule == "16%" else "max rule (no measured value may exceed)"
    source = req.rule_source.replace(" (16 % rule)", "")  # "ISO 1302 default (16 % rule)"
    rule = f"{rule_words} — {source}"
    ls = (
        f"λs {req.lambda_s_um:g} µm — {req.lambda_s_source}"
        if req.lambda_s_um is not None
        else f"no λs filter — {req.lambda_s_source}"
    )
    section = req.lambda_f_mm if req.lambda_f_mm is not None else req.lambda_c_mm
    if req.uncertainty is not None:
        u = f"U = {_num(req.uncertainty, req.unit)} (k = 2) — {req.uncertainty_source}"
    elif req.uncertainty_estimated:
        u = "U of each value estimated from the instrument file — 'uncertainty: estimate'"
    else:
        u = "U not given"
    return [
        ("limit", _limit_words(req)),
        ("rule", rule),
        ("cut-off", f"λc {req.lambda_c_mm:g} mm — {req.lambda_c_source}"),
        (
            "length",
            f"{req.sections} sections of {section:g} mm = evaluation length "
            f"{req.sections * section:g} mm — {req.sections_source}",
        ),
        ("value", _basis_words(req)),
        ("trace", _trace_words(req)),
        ("short-wave", ls),
        *_waviness_band(req),
        ("filter", f"{_filter_words(req)} — {req.filter_source}"),
        ("form", f"{_form_words(req.form)} removed first — {req.form_source}"),
        ("decision", f"{_DECISION_WORDS[req.decision_rule]}; {u}"),
    ]


def explain_sentence(req: Requirement) -> str:
    """The explanation of ``req`` as one line."""
    parts = [text for _, text in explain_requirement(req)]
    parts[-1] = "decision rule: " + parts[-1]
    return ", ".join(parts)


def explain_spec(spec: LoadedSpec) -> str:
    """The whole specification in plain words, one block per requirement."""
    part = spec.part
    number, revision = part.get("number", "?"), part.get("revision", "?")
    head = f"Part {number} rev. {revision}, surface: {part.get('surface', '?')}"
    if part.get("name"):
        head += f" ({part['name']})"
    lines = [head]
    if part.get("supplier"):
        lines.append(f"Supplier: {part['supplier']}")
    if part.get("drawing"):
        lines.append(f"Drawing: {part['drawing']}")
    lines.append(f"Convention: {_CONVENTION_WORDS[spec.convention]}")
    per = (
        "one value per evaluation length"
        if spec.value_per == "evaluation-length"
        else "one value per section"
    )
    lines.append(f"Measured values: {per}")
    if any(r.rule == "16%" for r in spec.requirements):
        lines.append(f"16 % rule taken as: {_sampling_words(spec.sampling, spec.convention)}")
    iso = (
        "reported beside the verdict"
        if spec.isolated_features == "report"
        else "make the verdict undecided (measure again)"
    )
    lines.append(f"Values resting on a few isolated points: {iso}")
    for i, req in enumerate(spec.requirements, start=1):
        lines.append("")
        line_col = req.location.replace("line ", "").replace(", col ", ":")
        lines.append(f"[{i}] {req.text}    ({spec.path}:{line_col})")
        width = max(len(label) for label, _ in explain_requirement(req))
        for label, text in explain_requirement(req):
            lines.append(f"    {label + ':':<{width + 1}} {text}")
    note = trace_lengths_note(spec.requirements)
    if note:
        lines += ["", f"Traces: {note}."]
    if spec.notes:
        lines += ["", f"Notes: {spec.notes.strip()}"]
    lines += [
        "",
        "The governing drawing, the contract and the applicable standards take precedence over "
        "this",
        "reading. Measurements need a calibrated instrument and qualified personnel.",
    ]
    return "\n".join(lines)
