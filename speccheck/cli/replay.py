"""``speccheck replay``: what a revised spec would have decided on the archived measurements.

Calls :func:`speccheck.replay.replay` and, with ``--report``,
:func:`speccheck.replay.report.write_replay_report`.
"""

from __future__ import annotations

import click

from speccheck.cli.options import InputPath, OutputPath, db_option, echo_json, json_text

__all__ = ["command"]


def _pct(rate: dict) -> str:
    if rate["rate"] is None:
        return "–"
    lo, hi = rate["ci95"]
    return f"{100 * rate['rate']:.1f} % ({100 * lo:.1f}–{100 * hi:.1f} %)"


def _print_table(d: dict) -> None:
    from rich.console import Console
    from rich.table import Table

    console = Console(width=120)
    console.print(
        f"{d['part']}: {d['replayed']} of {d['checks']} archived checks re-evaluated under "
        f"{d['spec']} ({d['scheduler']}); {len(d['flips'])} verdict(s) change, "
        f"{d['lots_changed']} lot disposition(s) change."
    )
    table = Table(box=None, pad_edge=False)
    for col in ("supplier", "checks", "reject rate before (95 % CI)", "after (95 % CI)", "flips"):
        table.add_column(col)
    for name, s in d["suppliers"].items():
        table.add_row(
            name, str(s["before"]["checks"]), _pct(s["before"]), _pct(s["after"]), str(s["flips"])
        )
    table.add_row(
        "all", str(d["before"]["checks"]), _pct(d["before"]), _pct(d["after"]), str(len(d["flips"]))
    )
    console.print(table)
    for lot in d["lots"]:
        if lot["changed"]:
            console.print(
                f"lot {lot['lot']} ({lot['supplier']}, record {lot['record']}): "
                f"{lot['before']} → {lot['after']}. {lot['reason']}"
            )
    for item in d["not_replayed"]:
        console.print(f"not re-evaluated: {item['key']}: {item['reason']}")


@click.command("replay")
@db_option
@click.option(
    "--archive",
    required=True,
    type=click.Path(file_okay=False),
    help="Folder of archived profile files (found by their SHA-256).",
)
@click.option(
    "--spec",
    "spec_path",
    required=True,
    type=InputPath("specification --spec"),
    help="The revised specification; its part number selects the records.",
)
@click.option(
    "--as-of", default=None, metavar="YYYY-MM-DD", help="Only records up to this date (UTC)."
)
@click.option(
    "--scheduler",
    default=None,
    metavar="tcp://HOST:PORT",
    help="Run on this Dask scheduler (default: a local process pool).",
)
@click.option(
    "--workers",
    type=click.IntRange(min=1),
    default=None,
    help="Local pool size (default: the CPU count).",
)
@click.option(
    "--batch-size",
    type=click.IntRange(min=1),
    default=16,
    show_default=True,
    help="Measurements per task.",
)
@click.option(
    "--json",
    "json_out",
    default=None,
    metavar="FILE",
    type=OutputPath("--json"),
    help="Write the result as JSON ('-': stdout).",
)
@click.option(
    "--report",
    "report_out",
    default=None,
    metavar="FILE.pdf",
    type=OutputPath("--report", allow_dash=False),
    help="Write a PDF summary with plots.",
)
def command(
    db, archive, spec_path, as_of, scheduler, workers, batch_size, json_out, report_out
) -> int:
    """Re-evaluate every archived measurement of the spec's part; exit 0 nothing changes, 1 some
    verdict or lot disposition would change.

    Calls speccheck.replay.replay.
    """
    import datetime as dt
    from pathlib import Path

    from speccheck._atomic import atomic_write_text
    from speccheck.errors import SpeccheckError
    from speccheck.records.store import RecordsStore, default_db_path
    from speccheck.replay import Archive, replay

    if as_of is not None:
        try:
            dt.date.fromisoformat(as_of)
        except ValueError:
            raise SpeccheckError(f"--as-of {as_of!r} is not a date YYYY-MM-DD") from None
    with RecordsStore.open(default_db_path(db), create=False) as store:
        summary = replay(
            store,
            Archive(archive),
            spec_path,
            as_of=as_of,
            scheduler=scheduler,
            workers=workers,
            batch_size=batch_size,
        )
    d = summary.to_dict()
    if json_out == "-":
        echo_json(d, "replay", strict=False)
    else:
        _print_table(d)
        if json_out:
            atomic_write_text(Path(json_out), json_text(d, "replay", strict=False), role="--json")
    if report_out:
        from speccheck.replay.report import write_replay_report

        write_replay_report(d, Path(report_out))
        click.echo(f"summary written to {report_out}", err=True)
    return 1 if d["flips"] or d["lots_changed"] else 0
