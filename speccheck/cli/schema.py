"""``speccheck schema``: the JSON Schema of specification files.

Calls :func:`speccheck.spec.models.spec_json_schema`.
"""

from __future__ import annotations

import json

import click


@click.command("schema")
def command() -> int:
    """Print the JSON Schema (draft 2020-12) of specification files.

    Calls speccheck.spec.models.spec_json_schema.
    """
    from speccheck.spec.models import spec_json_schema

    click.echo(json.dumps(spec_json_schema(), indent=2, ensure_ascii=False))
    return 0
