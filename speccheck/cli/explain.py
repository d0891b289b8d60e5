"""``speccheck explain FILE``: a spec's requirements or an inspection plan, in plain words.

For a spec: each requirement, with where each setting came from. For a plan (a file with a
top-level ``plan_version``): lot size, ISO 2859-1 code letter, sample size, acceptance number,
the OC curve's key points and which spec applies to which surface
(:func:`speccheck.lot.explain.explain_plan`).

Calls :func:`speccheck.spec.load_spec` and :func:`speccheck.spec.explain.explain_spec`.
"""

from __future__ import annotations

import click

from speccheck.cli.options import InputPath


@click.command("explain")
@click.argument("spec", type=InputPath("specification"))
def command(spec: str) -> int:
    """Explain what each requirement of SPEC asks for, and where each setting came from.

    Given an inspection plan, explain its sampling (code letter, n, c, OC key points) and which
    spec applies to which surface. Calls speccheck.spec.explain.explain_spec or
    speccheck.lot.explain.explain_plan.
    """
    from speccheck.lot.plan import is_plan_document

    if is_plan_document(spec):
        from speccheck.lot.explain import explain_plan
        from speccheck.lot.plan import load_plan

        click.echo(explain_plan(load_plan(spec)))
        return 0
    from speccheck.spec.explain import explain_spec
    from speccheck.spec.loader import load_spec

    click.echo(explain_spec(load_spec(spec)))
    return 0
