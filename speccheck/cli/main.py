"""Entry point of the ``speccheck`` command: a group whose commands load on first use.

Each command lives in its own module (``speccheck/cli/<name>.py``) exposing ``command``; it
parses options, calls one library function, and turns results into output and an exit status.
Heavy libraries are imported inside the commands, so ``speccheck --help`` stays fast.
"""

from __future__ import annotations

import importlib
import os
import sys
from typing import Any

import click

from speccheck._atomic import output_session
from speccheck._version import __version__
from speccheck.errors import ExitStatus, SpeccheckError, os_error

# command name -> (module, one-line help shown by --help without importing the module)
COMMANDS: dict[str, tuple[str, str]] = {
    "demo": ("speccheck.cli.demo", "Build the demo data set and run the whole job on it."),
    "info": (
        "speccheck.cli.info",
        "Describe a measured profile file (points, spacing, dropouts, hash).",
    ),
    "params": ("speccheck.cli.params", "Compute surface-texture parameters of a profile."),
    "check": (
        "speccheck.cli.check",
        "Check profiles against a specification file: verdict and exit status.",
    ),
    "explain": (
        "speccheck.cli.explain",
        "Say in plain words what a spec's requirements or a lot plan's sampling ask for.",
    ),
    "lint": (
        "speccheck.cli.lint",
        "Find mistakes and risky choices in spec files and lot plans.",
    ),
    "schema": (
        "speccheck.cli.schema",
        "Print the JSON Schema of spec, plan or instrument files, or of a JSON output.",
    ),
    "verify": (
        "speccheck.cli.verify",
        "Verify a signed conformance record and recompute its result.",
    ),
    "key": ("speccheck.cli.key", "Make a signing key and certificate (PKCS#12)."),
    "lot": ("speccheck.cli.lot", "Inspect a lot of parts under a sampling plan."),
    "records": ("speccheck.cli.records", "List, show, export, audit and trend the records store."),
    "uncertainty": (
        "speccheck.cli.uncertainty",
        "Calibration studies for the uncertainty estimate: noise on a flat, repeatability.",
    ),
    "replay": (
        "speccheck.cli.replay",
        "Re-evaluate archived measurements under a revised spec: what would change.",
    ),
    "serve": (
        "speccheck.cli.serve",
        "Serve the bench page on this computer: choose a part, drop traces, sign and record.",
    ),
}


class LazyGroup(click.Group):
    def list_commands(self, ctx: click.Context) -> list[str]:
        return list(COMMANDS)

    def get_command(self, ctx: click.Context, cmd_name: str) -> click.Command | None:
        if cmd_name not in COMMANDS:
            return None
        module = importlib.import_module(COMMANDS[cmd_name][0])
        return module.command

    def format_commands(self, ctx: click.Context, formatter: click.HelpFormatter) -> None:
        rows = [(name, help_) for name, (_, help_) in COMMANDS.items()]
        with formatter.section("Commands"):
            formatter.write_dl(rows)


#: Libraries whose versions decide the numbers and the records; ``--version`` names them so a
#: result can be reproduced with the same stack.
VERSIONED_LIBRARIES = ("numpy", "scipy", "pydantic", "PyYAML", "weasyprint", "pyHanko")


def _version_message() -> str:
    """``speccheck X`` and the installed versions of :data:`VERSIONED_LIBRARIES` (metadata only,
    nothing imported)."""
    from importlib import metadata

    lines = [f"speccheck {__version__}", f"Python {sys.version.split()[0]}"]
    for name in VERSIONED_LIBRARIES:
        try:
            lines.append(f"{name} {metadata.version(name)}")
        except metadata.PackageNotFoundError:
            lines.append(f"{name} not installed")
    return "\n".join(lines)


def _print_version(ctx: click.Context, _param: click.Parameter, value: bool) -> None:
    if value and not ctx.resilient_parsing:
        click.echo(_version_message())
        ctx.exit(0)


@click.group(
    cls=LazyGroup,
    context_settings={"help_option_names": ["-h", "--help"], "max_content_width": 100},
)
@click.option(
    "--version",
    is_flag=True,
    expose_value=False,
    is_eager=True,
    callback=_print_version,
    help="Show the version of speccheck and of the numeric and signing libraries, and exit.",
)
def cli() -> None:
    """Decide whether measured surface profiles meet a surface-finish specification.

    Exit status: 0 conforming, 1 nonconforming, 3 undecided (measure again), 2 error.
    The governing drawing, contract and applicable standards take precedence over this tool.
    """


def _run(argv: list[str] | None) -> int:
    """Run one command in an output session: its files appear only if it does not fail."""
    with output_session() as session:
        rv = cli.main(args=argv, prog_name="speccheck", standalone_mode=False)
        rv = 0 if rv is None else int(rv)
        if rv != ExitStatus.ERROR:
            session.commit()
        return rv


def main(argv: list[str] | None = None) -> int:
    """Run the command line; returns (and, as a script, exits with) the exit status."""
    args = list(sys.argv[1:] if argv is None else argv)
    try:
        rv = _run(args)
    except SpeccheckError as exc:
        rv = _fail(args, f"error: {exc.one_line()}", exc.to_error_dict())
    except click.exceptions.Abort:
        rv = _fail(args, "aborted", _error_dict("aborted", "usage"))
    except click.UsageError as exc:
        cmd = exc.ctx.command_path if exc.ctx is not None else "speccheck"
        msg = " ".join(exc.format_message().split())
        rv = _fail(args, f"error: {msg} (see '{cmd} --help')", _error_dict(msg, "usage"))
    except click.ClickException as exc:
        msg = " ".join(exc.format_message().split())
        rv = _fail(args, f"error: {msg}", _error_dict(msg, "usage"))
    except OSError as exc:  # an I/O failure below a library call: still the file's problem
        err = os_error(exc, doing="cannot access")
        rv = _fail(args, f"error: {err.one_line()}", err.to_error_dict())
    except KeyboardInterrupt:
        rv = _fail(args, "interrupted", _error_dict("interrupted", "usage"))
    except Exception as exc:  # a bug, not bad input: one line, traceback on request
        if os.environ.get("SPECCHECK_DEBUG"):
            raise
        msg = " ".join(f"{type(exc).__name__}: {exc}".split())
        rv = _fail(
            args,
            f"internal error: {msg} (set SPECCHECK_DEBUG=1 for a traceback)",
            _error_dict(msg, "internal"),
        )
    if __name__ == "__main__" or argv is None:
        sys.exit(int(rv))
    return int(rv)


def _error_dict(message: str, code: str) -> dict[str, Any]:
    return {"file": None, "line": None, "column": None, "message": message, "code": code}


def _fail(args: list[str], line: str, error: dict[str, Any]) -> int:
    """Report a failed run: one line on standard error and, when the run's JSON goes to standard
    output, the error document there. Returns exit status 2.

    A JSON *file* is left as it was (or absent): a failed run leaves nothing of its own on disk
    and never replaces what an earlier run wrote.
    """
    click.echo(f"speccheck: {line}", err=True)
    if _json_to_stdout(args):
        from speccheck.cli.options import json_text

        sys.stdout.write(json_text({"error": error}, "error"))
    return int(ExitStatus.ERROR)


def _json_to_stdout(args: list[str]) -> bool:
    """Whether the run was asked for JSON on standard output (``--json -``, or the flag
    ``--json`` of a command whose JSON always goes there)."""
    takes_file = _json_takes_a_file(args)
    for i, a in enumerate(args):
        if a == "--":
            break
        if a == "--json=-" or (a.startswith("--json=") and not takes_file):
            return True
        if a == "--json":
            return not takes_file or (i + 1 < len(args) and args[i + 1] == "-")
    return False


def _json_takes_a_file(args: list[str]) -> bool:
    """Whether the (sub)command named at the start of ``args`` declares ``--json`` with a
    value (FILE or '-') rather than as a flag, read from the command's own options."""
    cmd: click.Command | None = cli
    ctx = click.Context(cli)
    for name in args:
        if not isinstance(cmd, click.Group):
            break
        try:
            cmd = cmd.get_command(ctx, name)
        except Exception:  # a command that cannot even load: its error is being reported
            return False
        if cmd is None:
            return False
    for param in getattr(cmd, "params", ()):
        if isinstance(param, click.Option) and "--json" in param.opts:
            return not param.is_flag
    return False
