"""``speccheck explain SPEC``: each requirement in plain words, with where each setting came from.

Calls :func:`speccheck.spec.load_spec` and :func:`speccheck.spec.explain.explain_spec`.
"""

from __future__ import annotations

import click

from speccheck.cli.options import InputPath


@click.command("explain")
@click.argument("spec", type=InputPath("specification"))
def command(spec: str) -> int:
    """Explain what each requirement of SPEC asks for, and where each setting came from.

    Calls speccheck.spec.explain.explain_spec.
    """
    from speccheck.spec.explain import explain_spec
    from speccheck.spec.loader import load_spec

    click.echo(explain_spec(load_spec(spec)))
    return 0
