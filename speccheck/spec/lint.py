"""Find mistakes and risky choices in specification files.

Errors (the file must be fixed): everything :func:`speccheck.spec.loader.check_spec` refuses
(YAML, schema, callout grammar, unknown parameters, limits ≤ 0 or in the wrong order, values
without units, ISO 21920 without a stated rule, zero sections) and a cut-off outside the standard
series. Warnings (the file can be used): a λs/λc pair that is not the ISO 3274 one, a surface
controlled only through a parameter that rests on a few points, an uncertainty no requirement
uses, requirements that need traces of different lengths. A guarded decision rule without U and
measurement conditions that cannot go together are errors, found by the same resolution
``check`` runs.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Literal

from speccheck.diagnostics import sensitive_parameter_advice
from speccheck.errors import SpeccheckError
from speccheck.parameters.names import parse_parameter_name
from speccheck.spec._yaml import Document, KeyPath
from speccheck.spec.explain import trace_lengths_note
from speccheck.spec.loader import check_spec
from speccheck.spec.requirement import Requirement
from speccheck.spec.resolve import (
    iso3274_lambda_s_um,
    requirement_conflicts,
    standard_cutoffs_mm,
)

__all__ = ["Finding", "lint_file", "lint_paths"]


@dataclass(frozen=True)
class Finding:
    """One lint finding; ``line``/``col`` are None when the whole file is concerned."""

    path: str
    line: int | None
    col: int | None
    severity: Literal["error", "warning"]
    message: str

    def __str__(self) -> str:
        place = f"{self.path}:{self.line}:{self.col}" if self.line is not None else self.path
        tag = "warning: " if self.severity == "warning" else ""
        return f"{place}: {tag}{self.message}"


def _position(where: str | None) -> tuple[int | None, int | None]:
    if not where or not where.startswith("line "):
        return None, None
    try:
        line_part, col_part = where.split(",")
        return int(line_part.split()[1]), int(col_part.split()[1])
    except (ValueError, IndexError):
        return None, None


def _from_error(err: SpeccheckError, path: str) -> Finding:
    line, col = _position(err.where)
    message = err.message if line is not None or not err.where else f"{err.where}: {err.message}"
    return Finding(err.path or path, line, col, "error", message)


def _at(doc: Document, key_path: KeyPath) -> tuple[int, int]:
    return doc.position(key_path)


def _req_position(req: Requirement) -> tuple[int | None, int | None]:
    return _position(req.location)


# Ra values common on inch drawings, in µin (common practice, no source).
_UIN_SERIES = (16.0, 32.0, 63.0, 125.0, 250.0, 500.0)


def _unit_doubt(req: Requirement) -> str | None:
    """A warning when an Ra/Rq limit looks written in the other drawing unit."""
    from speccheck.units import to_drawing_unit

    if req.parameter not in ("Ra", "Rq") or req.upper is None:
        return None
    shown = to_drawing_unit(req.upper, req.drawing_unit)
    if req.drawing_unit == "µm" and any(abs(shown - v) < 1e-9 for v in _UIN_SERIES):
        return (
            f"{req.parameter} {shown:g} µm is coarser than most machined surfaces and "
            f"{shown:g} is a common microinch value: if the drawing is in inches, set "
            "'units: uin'"
        )
    if req.drawing_unit == "µin" and shown < 1.0:
        return (
            f"{req.parameter} {shown:g} µin ({req.upper:g} µm) is finer than almost any "
            "machined surface: if the drawing is metric, set 'units: um'"
        )
    return None


def lint_file(path: str | Path) -> list[Finding]:
    """All errors and warnings of one specification file, in file order (errors first per place).

    Parameters
    ----------
    path:
        The YAML file.

    Returns
    -------
    list[Finding]
        Empty when the file is clean.
    """
    p = str(path)
    check = check_spec(path)
    findings = [_from_error(e, p) for e in check.errors]
    if check.spec is None or check.document is None:
        return findings
    doc, spec = check.document, check.spec
    series = standard_cutoffs_mm()
    names = {r.parameter for r in spec.requirements}
    seen: set[tuple[int | None, int | None, str]] = set()

    def add(
        line: int | None, col: int | None, severity: Literal["error", "warning"], message: str
    ) -> None:
        if (line, col, message) in seen:
            return
        seen.add((line, col, message))
        findings.append(Finding(p, line, col, severity, message))

    for req in spec.requirements:
        line, col = _req_position(req)
        if req.lambda_c_source.startswith("measurement.cutoff"):
            line, col = _at(doc, ("measurement", "cutoff"))
        standard = any(abs(req.lambda_c_mm - s) <= 1e-9 * s for s in series)
        if not standard:
            listed = ", ".join(f"{s:g}" for s in series)
            add(
                line,
                col,
                "error",
                f"cut-off λc {req.lambda_c_mm:g} mm is not in the standard series ({listed} mm; "
                "ISO 4288:1996, ISO 3274:1996 Table 1)",
            )
        elif req.lambda_s_um is not None:
            try:
                expected = iso3274_lambda_s_um(req.lambda_c_mm)
            except SpeccheckError:  # pragma: no cover - standard λc always has a row
                expected = None
            if expected is not None and abs(req.lambda_s_um - expected) > 1e-9 * expected:
                ls_line, ls_col = _req_position(req)
                if req.lambda_s_source.startswith("measurement.ls"):
                    ls_line, ls_col = _at(doc, ("measurement", "ls"))
                add(
                    ls_line,
                    ls_col,
                    "warning",
                    f"λs {req.lambda_s_um:g} µm with λc {req.lambda_c_mm:g} mm is not the ISO "
                    "3274:1996 "
                    f"Table 1 pair (λs {expected:g} µm); results differ from a standard "
                    "measurement",
                )
        unit_doubt = _unit_doubt(req)
        if unit_doubt:
            r_line, r_col = _req_position(req)
            add(r_line, r_col, "warning", unit_doubt)
        try:  # the conditions check evaluates under: refused here exactly as there
            req.conditions()
        except SpeccheckError as exc:
            r_line, r_col = _req_position(req)
            add(r_line, r_col, "error", f"{req.text}: {exc.message}")
    if check.model is not None and isinstance(check.model.uncertainty, dict):
        for key in check.model.uncertainty:
            parsed = parse_parameter_name(str(key))
            if parsed is not None and parsed.name not in names:
                u_line, u_col = _at(doc, ("uncertainty", key))
                add(
                    u_line,
                    u_col,
                    "warning",
                    f"uncertainty for {parsed.name} but no requirement on {parsed.name}",
                )
    # A function controlled only through parameters that rest on a few points: the advice of
    # speccheck.diagnostics, placed at the first requirement it names.
    sensitive = [
        r
        for r in spec.requirements
        if (pn := parse_parameter_name(r.parameter)) is not None and pn.info.single_point_sensitive
    ]
    for text in sensitive_parameter_advice([r.parameter for r in spec.requirements]):
        at = next((r for r in sensitive if r.parameter in text), sensitive[0])
        a_line, a_col = _req_position(at)
        add(a_line, a_col, "warning", text)
    for kind, req, message in requirement_conflicts(spec.requirements):
        if kind == "duplicate":
            d_line, d_col = _req_position(req)
            add(d_line, d_col, "warning", message)
    note = trace_lengths_note(spec.requirements)
    if note and spec.requirements:
        t_line, t_col = _req_position(spec.requirements[0])
        add(t_line, t_col, "warning", note)
    order = {"error": 0, "warning": 1}
    findings.sort(key=lambda f: (f.line or 0, f.col or 0, order[f.severity]))
    return findings


def lint_paths(paths: list[str | Path]) -> tuple[list[Finding], bool]:
    """Lint several files; returns all findings and whether any is an error."""
    findings: list[Finding] = []
    for path in paths:
        findings.extend(lint_file(path))
    return findings, any(f.severity == "error" for f in findings)
