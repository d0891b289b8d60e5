"""Options shared by several commands, defined once."""

from __future__ import annotations

import json
import sys
from pathlib import Path
from typing import Any

import click

json_flag = click.option("--json", "as_json", is_flag=True, help="Print JSON instead of a table.")


def json_out_option(
    help_: str = "Write the result as JSON to FILE ('-' for standard output).",
) -> Any:
    return click.option("--json", "json_out", metavar="FILE", default=None, help=help_)


format_option = click.option(
    "--format",
    "fmt",
    type=click.Choice(["csv", "tsv", "txt", "x3p", "sdf"]),
    default=None,
    help="File format (default: from the file's extension).",
)
dx_option = click.option(
    "--dx",
    default=None,
    metavar="LENGTH",
    help="Sampling spacing for z-only text files, e.g. 0.5um.",
)
decimal_option = click.option(
    "--decimal",
    type=click.Choice([".", ","]),
    default=".",
    show_default=True,
    help="Decimal separator of text files.",
)
cutoff_option = click.option(
    "--cutoff", default=None, metavar="LENGTH", help="Cut-off λc, e.g. 0.8mm."
)


def write_json(obj: Any, dest: str) -> None:
    """Write JSON to ``dest`` ('-' = stdout) atomically: a temp file renamed into place."""
    text = json.dumps(obj, indent=2, ensure_ascii=False, allow_nan=False) + "\n"
    if dest == "-":
        sys.stdout.write(text)
        return
    from speccheck._atomic import atomic_write_text

    atomic_write_text(Path(dest), text)


report_option = click.option(
    "--report", "report_out", metavar="OUT.pdf", default=None, help="Write the record as PDF."
)
sign_option = click.option(
    "--sign", "sign_p12", metavar="KEY.p12", default=None, help="Sign the PDF with this key."
)
passphrase_file_option = click.option(
    "--passphrase-file",
    metavar="FILE",
    default=None,
    help="File whose first line is the key's passphrase (else $SPECCHECK_PASSPHRASE).",
)
record_flag = click.option(
    "--record", "record", is_flag=True, help="Append the result to the records store."
)
db_option = click.option(
    "--db",
    default=None,
    metavar="STORE",
    help="Records store: a file (SQLite) or postgresql://... "
    "(default: $SPECCHECK_DB, else speccheck-records.sqlite here).",
)
