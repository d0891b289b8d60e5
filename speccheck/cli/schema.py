"""``speccheck schema``: the JSON Schema of the files speccheck reads and the JSON it writes.

Input files (spec, plan, instrument) come from their pydantic models
(:func:`speccheck.spec.models.spec_json_schema`, :func:`speccheck.lot.plan.plan_json_schema`,
:func:`speccheck.instrument.instrument_json_schema`); output documents from
:func:`speccheck.schemas.schema`.
"""

from __future__ import annotations

import json
from typing import Any

import click

from speccheck.schemas import DOCUMENTS

_INPUTS = ("spec", "plan", "instrument")


def _input_schema(what: str) -> dict[str, Any]:
    if what == "plan":
        from speccheck.lot.plan import plan_json_schema

        return plan_json_schema()
    if what == "instrument":
        from speccheck.instrument import instrument_json_schema

        return instrument_json_schema()
    from speccheck.spec.models import spec_json_schema

    return spec_json_schema()


@click.command("schema")
@click.option(
    "--what",
    type=click.Choice([*_INPUTS, *DOCUMENTS]),
    default="spec",
    show_default=True,
    help="Which schema: an input file (spec, plan, instrument) or a JSON document speccheck "
    "writes (result of check, lot, params, error, records, ...).",
)
def command(what: str) -> int:
    """Print a JSON Schema (draft 2020-12): of spec, plan or instrument files, or of a JSON
    document speccheck writes (its schema_version is stated in the schema).

    Calls speccheck.spec.models.spec_json_schema, speccheck.lot.plan.plan_json_schema,
    speccheck.instrument.instrument_json_schema or speccheck.schemas.schema.
    """
    from speccheck.schemas import schema

    doc = _input_schema(what) if what in _INPUTS else schema(what)
    click.echo(json.dumps(doc, indent=2, ensure_ascii=False))
    return 0
