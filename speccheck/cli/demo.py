"""``speccheck demo``: the whole job on built-in demo data (calls demo.run.run_demo)."""

from __future__ import annotations

import click

__all__ = ["command"]


@click.command(name="demo")
@click.option(
    "--out",
    "out",
    default="speccheck-demo",
    show_default=True,
    help="Folder for the demo files (created if missing).",
)
def command(out: str) -> int:
    """Run the whole job on synthetic demo data in an invented scenario.

    Writes demo profiles (CSV and X3P), copies the example specifications, checks each one,
    writes signed conformance records (with a throwaway demo key), verifies one of them,
    inspects a demo lot of 20 shafts and audits the records store. Calls
    speccheck.demo.run.run_demo.
    """
    from speccheck._atomic import direct_writes
    from speccheck.demo.run import run_demo

    with direct_writes():  # the demo reads back the files it writes
        run = run_demo(out, echo=click.echo)
    ok = all(v == c.expected for c, v, _ in run.reports) and run.audit_ok
    click.echo(
        "demo finished: every verdict as documented in rules_examples/README.md"
        if ok
        else "demo finished with results that differ from the documented ones"
    )
    click.echo(f"open {run.reports[0][2]} to see a conformance record")
    return 0 if ok else 1
