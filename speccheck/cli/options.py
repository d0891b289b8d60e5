"""Options shared by several commands, defined once."""

from __future__ import annotations

import json
import os
import sys
from pathlib import Path
from typing import Any

import click


class InputPath(click.Path):
    """A file the command reads; noted so that no output of the run may overwrite it."""

    def __init__(self, role: str, **kwargs: Any):
        super().__init__(**kwargs)  # folders are refused below, in speccheck's words
        self.role = role

    def convert(self, value: Any, param: click.Parameter | None, ctx: click.Context | None) -> Any:
        value = super().convert(value, param, ctx)
        import os

        from speccheck._atomic import note_input
        from speccheck.errors import SpeccheckError

        if os.path.isdir(value):
            raise SpeccheckError(f"{self.role} is a folder, not a file", path=os.fspath(value))

        note_input(value, self.role)
        return value


class OutputPath(click.Path):
    """A file the command writes ('-' = standard output where the option allows it).

    Claimed at once, so a clash with an input or another output is refused before any work.
    """

    def __init__(self, role: str, **kwargs: Any):
        kwargs.setdefault("allow_dash", True)  # folders are refused by claim_output
        super().__init__(**kwargs)
        self.role = role

    def convert(self, value: Any, param: click.Parameter | None, ctx: click.Context | None) -> Any:
        value = super().convert(value, param, ctx)
        if value != "-":
            from speccheck._atomic import claim_output

            claim_output(value, self.role)
        return value


json_flag = click.option("--json", "as_json", is_flag=True, help="Print JSON instead of a table.")


def json_out_option(
    help_: str = "Write the result as JSON to FILE ('-' for standard output).",
) -> Any:
    return click.option(
        "--json", "json_out", metavar="FILE", default=None, type=OutputPath("--json"), help=help_
    )


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
columns_option = click.option(
    "--columns",
    default=None,
    metavar="SPEC",
    help="Text files: which columns hold x and z, by header name or number from 1, unit "
    "optional, e.g. 'z=Height' or 'x=1[mm],z=3[um]' (default: by the header's names; other "
    "columns are kept out).",
)
cutoff_option = click.option(
    "--cutoff", default=None, metavar="LENGTH", help="Cut-off λc, e.g. 0.8mm."
)


color_option = click.option(
    "--color",
    type=click.Choice(["auto", "always", "never"]),
    default="auto",
    show_default=True,
    help="Colour in the verdict table: auto = only on a terminal and without $NO_COLOR.",
)
quiet_option = click.option(
    "-q", "--quiet", is_flag=True, help="Print only the verdict line (the exit status says it too)."
)


def wants_color(choice: str) -> bool:
    """Whether to colour standard output: ``--color always|never``, else a terminal without
    ``NO_COLOR`` set to a non-empty value (the no-color.org convention)."""
    if choice != "auto":
        return choice == "always"
    return sys.stdout.isatty() and not os.environ.get("NO_COLOR")


def json_text(doc: Any, document: str, *, strict: bool = True) -> str:
    """One JSON document as speccheck writes it, ``schema_version`` first.

    ``document`` names its schema (``speccheck schema --what DOCUMENT``); ``strict`` refuses
    NaN and infinities, which JSON cannot carry.
    """
    from speccheck.schemas import SCHEMA_VERSION

    if isinstance(doc, dict) and "schema_version" not in doc:
        doc = {"schema_version": SCHEMA_VERSION, **doc}
    return json.dumps(doc, indent=2, ensure_ascii=False, allow_nan=not strict) + "\n"


def echo_json(doc: Any, document: str, *, strict: bool = True) -> None:
    """Print one JSON document (see :func:`json_text`) on standard output."""
    click.echo(json_text(doc, document, strict=strict), nl=False)


def write_json(obj: Any, dest: str, *, document: str) -> None:
    """Write JSON to ``dest`` ('-' = stdout) atomically: a temp file renamed into place."""
    text = json_text(obj, document)
    if dest == "-":
        sys.stdout.write(text)
        return
    from speccheck._atomic import atomic_write_text

    atomic_write_text(Path(dest), text, role="--json")


report_option = click.option(
    "--report",
    "report_out",
    metavar="OUT.pdf",
    default=None,
    type=OutputPath("--report", allow_dash=False),
    help="Write the record as PDF.",
)
sign_option = click.option(
    "--sign",
    "sign_p12",
    metavar="KEY.p12",
    default=None,
    type=InputPath("signing key --sign"),
    help="Sign the PDF with this key.",
)
passphrase_file_option = click.option(
    "--passphrase-file",
    metavar="FILE",
    type=InputPath("passphrase file"),
    default=None,
    help="File whose first line is the key's passphrase (else $SPECCHECK_PASSPHRASE).",
)
tsa_option = click.option(
    "--tsa",
    "tsa_url",
    metavar="URL",
    default=None,
    help="Time-stamping authority (RFC 3161, http:// or https://) whose token vouches for the "
    "signing time.",
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


def identity_options(*, lot: bool = False) -> Any:
    """``--serial``, ``--operator``, ``--order``, ``--note``, ``--instrument`` (check and lot)."""
    serial_help = (
        "Not for a lot: each part's serial comes from its folder ({part_serial} in the plan)."
        if lot
        else "Serial number of the part measured."
    )
    options = [
        click.option("--serial", default=None, metavar="TEXT", help=serial_help),
        click.option("--operator", default=None, metavar="NAME", help="Who measured."),
        click.option("--order", default=None, metavar="TEXT", help="Purchase order or lot number."),
        click.option("--note", default=None, metavar="TEXT", help="A note for the record."),
        click.option(
            "--instrument",
            "instrument_path",
            default=None,
            metavar="FILE.yaml",
            type=InputPath("instrument file"),
            help="Instrument file: identity and calibration of the instrument that measured "
            "(and the data for 'uncertainty: estimate').",
        ),
    ]

    def decorate(f: Any) -> Any:
        for option in reversed(options):
            f = option(f)
        return f

    return decorate


def stated_identity(**fields: str | None) -> Any:
    """The identity stated on the command line, blanks refused (a record never says '')."""
    from speccheck.errors import SpeccheckError
    from speccheck.evaluation.identity import Stated

    for name, value in fields.items():
        if value is not None and not value.strip():
            raise SpeccheckError(f"--{name} is empty", where=f"option --{name}")
    return Stated(**{k: (v.strip() if v else None) for k, v in fields.items()})
