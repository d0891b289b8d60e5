"""Find mistakes and risky choices in inspection plan files, and in the specs they name.

Errors: everything :func:`speccheck.lot.plan.check_plan` refuses (YAML, unknown or missing
keys, wrong types, a spec file that does not exist, a lot too small for a code letter), and any
error of a spec file the plan names (each such finding names the plan's line). Warnings: a
sample that takes every part of the lot, an acceptance number that can never reject.
Findings print as ``FILE:LINE:COL: message``, as spec lint does.
"""

from __future__ import annotations

from pathlib import Path

from speccheck.lot.plan import check_plan
from speccheck.spec.lint import Finding, _from_error, lint_file

__all__ = ["lint_plan"]


def _sampling_warnings(check, p: str) -> list[Finding]:
    plan, doc = check.plan, check.document
    smp = plan.sampling
    out = []
    line, col = doc.position(("sampling",))
    if smp.acceptance_number >= smp.sample_size:
        out.append(
            Finding(
                p,
                line,
                col,
                "warning",
                f"acceptance number c = {smp.acceptance_number} with sample size n = "
                f"{smp.sample_size}: the lot is accepted whatever the sample shows",
            )
        )
    elif smp.every_part:
        out.append(
            Finding(
                p,
                line,
                col,
                "warning",
                f"sample size reaches the lot size {smp.lot_size}: every part is inspected",
            )
        )
    return out


def lint_plan(path: str | Path) -> list[Finding]:
    """All errors and warnings of one plan file and of the spec files it names.

    Parameters
    ----------
    path:
        The plan's YAML file.

    Returns
    -------
    list[Finding]
        The plan's own findings in file order, then each named spec's findings (in the spec
        file, their message naming the surface and the plan's ``FILE:LINE:COL``). Empty when
        everything is clean.
    """
    p = str(path)
    check = check_plan(path)
    findings = [_from_error(e, p) for e in check.errors]
    if check.plan is not None:
        findings.extend(_sampling_warnings(check, p))
    findings.sort(key=lambda f: (f.line or 0, f.col or 0, f.severity != "error"))
    base = Path(p).parent  # spec paths as the user would type them from here
    doc = check.document
    if doc is None or not isinstance(doc.data, dict):
        return findings
    surfaces = doc.data.get("surfaces")
    if not isinstance(surfaces, dict):
        return findings
    for name, entry in surfaces.items():
        spec = entry.get("spec") if isinstance(entry, dict) else None
        if not isinstance(spec, str) or not spec or not (base / spec).is_file():
            continue  # reported above by check_plan (or not a surface at all)
        line, col = doc.position(("surfaces", name, "spec"))
        via = f"surface {name}, named at {p}:{line}:{col}"
        for f in lint_file(base / spec):
            findings.append(Finding(f.path, f.line, f.col, f.severity, f"{f.message} ({via})"))
    return findings
