"""``speccheck lint FILE...``: errors and warnings in specification and inspection plan files.

Calls :func:`speccheck.spec.lint.lint_file`, or :func:`speccheck.lot.lint.lint_plan` for a file
with a top-level ``plan_version`` (which also lints the spec files the plan names). Prints
``FILE:LINE:COL: message`` per error and ``FILE:LINE:COL: warning: message`` per warning; exit
status 2 if any file has an error, else 0.
"""

from __future__ import annotations

import click

from speccheck.cli.options import InputPath
from speccheck.errors import ExitStatus


@click.command("lint")
@click.argument("specs", nargs=-1, required=True, type=InputPath("specification"))
def command(specs: tuple[str, ...]) -> int:
    """Find mistakes (exit 2) and risky choices (warnings, exit 0) in spec and plan files.

    A file with 'plan_version' is an inspection plan: it is checked, and so is every spec file
    it names. Calls speccheck.spec.lint.lint_file or speccheck.lot.lint.lint_plan.
    """
    from speccheck.lot.lint import lint_plan
    from speccheck.lot.plan import is_plan_document
    from speccheck.spec.lint import lint_file

    failed = False
    for spec in specs:
        findings = lint_plan(spec) if is_plan_document(spec) else lint_file(spec)
        for finding in findings:
            click.echo(str(finding))
        errors = sum(f.severity == "error" for f in findings)
        warnings = len(findings) - errors
        failed = failed or errors > 0
        if not errors:
            tail = f", {warnings} warning{'s' if warnings != 1 else ''}" if warnings else ""
            click.echo(f"{spec}: ok{tail}")
    return int(ExitStatus.ERROR if failed else 0)
