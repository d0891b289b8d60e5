"""``speccheck records``: list, show, export, audit and trend the records store.

Each subcommand opens :class:`speccheck.records.store.RecordsStore` and calls one method
(``list``, ``get``, ``export_csv``/``export_json``, ``audit``) or
:func:`speccheck.records.trend.collect_trend`.
"""

from __future__ import annotations

import click

from speccheck.cli.options import InputPath, OutputPath, db_option, echo_json

__all__ = ["command"]


def _open(db: str | None, *, create: bool = False):
    from speccheck.records.store import RecordsStore, default_db_path

    return RecordsStore.open(default_db_path(db), create=create)


@click.group(name="records")
def command() -> None:
    """The append-only records store of checks and lots (SQLite, hash-chained).

    The store is --db PATH, else $SPECCHECK_DB, else speccheck-records.sqlite here.
    Calls speccheck.records.store.RecordsStore.
    """


@command.command(name="list")
@db_option
@click.option("--part", default=None, help="Only records of this part number.")
@click.option("--kind", default=None, help="Only records of this kind (check, lot).")
@click.option(
    "--last", "limit", type=click.IntRange(min=1), default=None, help="Only the last N records."
)
@click.option("--json", "as_json", is_flag=True, help="Print JSON instead of a table.")
def list_(
    db: str | None, part: str | None, kind: str | None, limit: int | None, as_json: bool
) -> int:
    """List records: id, time, kind, part, verdict, start of the record hash."""
    with _open(db) as store:
        recs = store.list(part=part, kind=kind, limit=limit)
    if as_json:
        rows = [{k: v for k, v in r.to_dict().items() if k != "result"} for r in recs]
        echo_json({"records": rows}, "records", strict=False)
        return 0
    from rich.console import Console
    from rich.table import Table

    table = Table(box=None, pad_edge=False)
    for col in ("id", "time (UTC)", "kind", "part", "verdict", "record hash"):
        table.add_column(col, justify="right" if col == "id" else "left")
    for r in recs:
        table.add_row(
            str(r.id),
            r.time[:19].replace("T", " "),
            r.kind,
            r.part or "",
            r.verdict,
            r.record_hash[:16],
        )
    Console(width=120).print(table)
    return 0


@command.command(name="show")
@click.argument("record_id", type=int)
@db_option
def show(record_id: int, db: str | None) -> int:
    """Print one record as JSON (its result embedded)."""
    with _open(db) as store:
        rec = store.get(record_id)
    echo_json(rec.to_dict(), "record", strict=False)
    return 0


@command.command(name="export")
@db_option
@click.option(
    "--csv",
    "csv_out",
    default=None,
    metavar="FILE",
    type=OutputPath("--csv", allow_dash=False),
    help="Write every record as CSV.",
)
@click.option(
    "--json",
    "json_out",
    default=None,
    metavar="FILE",
    type=OutputPath("--json"),
    help="Write every record as JSON ('-': stdout).",
)
def export(db: str | None, csv_out: str | None, json_out: str | None) -> int:
    """Export every record as CSV and/or JSON (written atomically)."""
    from speccheck.errors import SpeccheckError

    if not csv_out and not json_out:
        raise SpeccheckError("records export needs --csv FILE or --json FILE")
    with _open(db) as store:
        if csv_out:
            n = store.export_csv(csv_out)
            click.echo(f"{n} records written to {csv_out}", err=True)
        if json_out:
            n = store.export_json(json_out)
            if json_out != "-":
                click.echo(f"{n} records written to {json_out}", err=True)
    return 0


@command.command(name="audit")
@db_option
@click.option(
    "--archive",
    default=None,
    type=click.Path(file_okay=False),
    help="Folder of the original spec and profile files: re-evaluate and compare verdicts.",
)
@click.option(
    "--checkpoint",
    "checkpoints",
    multiple=True,
    type=InputPath("checkpoint --checkpoint"),
    metavar="FILE",
    help="A signed checkpoint (records checkpoint) to compare the chain with (repeatable).",
)
@click.option(
    "--reports",
    "reports_dir",
    default=None,
    type=click.Path(file_okay=False),
    help="Folder of signed records written with --record: compare the chain with each.",
)
@click.option(
    "--trust",
    multiple=True,
    type=InputPath("certificate --trust"),
    metavar="CERT.pem",
    help="Certificate the checkpoints and records must be signed with (repeatable).",
)
@click.option("--json", "as_json", is_flag=True, help="Print the audit as JSON.")
def audit(
    db: str | None,
    archive: str | None,
    checkpoints: tuple[str, ...],
    reports_dir: str | None,
    trust: tuple[str, ...],
    as_json: bool,
) -> int:
    """Check the hash chain, the append-only triggers and the database's integrity; with
    --checkpoint or --reports also against anchors kept outside the database (a wholesale
    rewrite); with --archive the verdicts. Exit 0 intact, 1 anything found. Calls
    speccheck.records.store.RecordsStore.audit and speccheck.records.anchor.check_anchors.
    """
    from speccheck.records.anchor import check_anchors, load_anchors

    anchors, bad = load_anchors(checkpoints, reports_dir, trust=trust)
    with _open(db) as store:
        res = store.audit(archive)
        if checkpoints or reports_dir:
            res.findings.extend(bad)
            check_anchors(store.list(), anchors, res)
    if as_json:
        echo_json(res.to_dict(), "audit", strict=False)
    else:
        for f in res.findings:
            click.echo(f"{'TAMPERED' if f.tampering else 'note'}: {f.message}")
        state = "intact" if res.chain_intact else "NOT intact"
        extra = ""
        if archive:
            extra = f", {res.reevaluated} result(s) re-evaluated"
            extra += f", {res.verdicts_differ} verdict(s) differ"
        if checkpoints or reports_dir:
            extra += f", compared with {res.anchors} anchor(s)"
        click.echo(f"{res.records} records, chain {state}{extra}; head {res.head_hash}")
        click.echo(f"integrity check: {res.integrity}")
    return 0 if res.intact else 1


@command.command(name="checkpoint")
@db_option
@click.option(
    "--sign",
    "sign_p12",
    required=True,
    type=InputPath("signing key --sign"),
    metavar="KEY.p12",
    help="PKCS#12 key to sign the checkpoint with.",
)
@click.option(
    "--passphrase-file",
    default=None,
    type=InputPath("passphrase file"),
    help="File whose first line is the key's passphrase (else $SPECCHECK_PASSPHRASE).",
)
@click.option(
    "--out",
    "out",
    required=True,
    type=OutputPath("checkpoint"),
    metavar="FILE.pdf",
    help="The checkpoint to write (never overwrites an input).",
)
def checkpoint(db: str | None, sign_p12: str, passphrase_file: str | None, out: str) -> int:
    """Write a signed statement of the store's head hash, record count and time; keep it
    outside the database for records audit --checkpoint. Calls
    speccheck.report.checkpoint.write_checkpoint.
    """
    from pathlib import Path

    from speccheck.records.protocol import redacted_location
    from speccheck.report.checkpoint import write_checkpoint
    from speccheck.report.signing import read_passphrase

    passphrase = read_passphrase(Path(passphrase_file) if passphrase_file else None)
    with _open(db) as store:
        hashes = [r.record_hash for r in store.list()]
        location = redacted_location(store.location)
    st = write_checkpoint(
        Path(out),
        store=location,
        record_hashes=hashes,
        sign_p12=Path(sign_p12),
        passphrase=passphrase,
    )
    click.echo(f"Checkpoint written: {out} ({st['records']} records, head {st['head_hash']})")
    return 0


@command.command(name="trend")
@db_option
@click.option("--part", required=True, help="Part number, e.g. KFP-2041.")
@click.option("--param", "parameter", required=True, help="Parameter, e.g. Ra.")
@click.option(
    "--surface", default=None, help="Only this surface (lot surface name or spec surface)."
)
@click.option(
    "--out",
    default=None,
    metavar="FILE.svg",
    type=OutputPath("--out", allow_dash=False),
    help="Write the trend plot as SVG.",
)
@click.option("--json", "as_json", is_flag=True, help="Print the values and indices as JSON.")
def trend(
    db: str | None, part: str, parameter: str, surface: str | None, out: str | None, as_json: bool
) -> int:
    """Values of one parameter over time against the limits, with Cp and Cpk."""
    from pathlib import Path

    from speccheck._atomic import atomic_write_text
    from speccheck.records.trend import collect_trend, trend_svg

    with _open(db) as store:
        tr = collect_trend(store.list(part=part), part=part, parameter=parameter, surface=surface)
    if out:
        atomic_write_text(Path(out), trend_svg(tr), role="--out")
    if as_json:
        echo_json(tr.to_dict(), "trend", strict=False)
        return 0
    cap = tr.capability
    unit = f" {tr.unit}" if tr.unit else ""

    def num(x: float | None) -> str:
        return "–" if x is None else f"{x:.4g}"

    click.echo(
        f"{part} {parameter}: {cap.n} values, "
        f"limits lower {num(tr.lower)} upper {num(tr.upper)}{unit}"
    )
    click.echo(
        f"mean {num(cap.mean)}{unit}, s {num(cap.sd)}{unit}, Cp {num(cap.cp)}, Cpk {num(cap.cpk)}"
    )
    click.echo(cap.note)
    for note in tr.notes:
        click.echo(note)
    if out:
        click.echo(f"plot written to {out}", err=True)
    return 0


@command.command(name="migrate")
@click.option(
    "--from",
    "source",
    required=True,
    metavar="STORE",
    help="Store to copy: sqlite:FILE, a file path, or postgresql://...",
)
@click.option(
    "--to",
    "target",
    required=True,
    metavar="STORE",
    help="Empty store to copy into: postgresql://... or sqlite:FILE.",
)
@click.option("--json", "as_json", is_flag=True, help="Print the result as JSON.")
def migrate(source: str, target: str, as_json: bool) -> int:
    """Copy a store record for record and prove both chains equal. Exit 0 equal, 1 not.

    Calls speccheck.records.migrate.migrate.
    """
    from speccheck.records.migrate import migrate as run_migration
    from speccheck.records.protocol import store_location

    res = run_migration(str(store_location(source)), str(store_location(target)))
    if as_json:
        echo_json(res.to_dict(), "migration", strict=False)
    else:
        state = "equal" if res.chains_equal and res.target_intact else "NOT equal"
        click.echo(
            f"{res.records} records copied to {res.target}; chains {state}; head {res.head_hash}"
        )
    return 0 if res.chains_equal and res.target_intact else 1


@command.command(name="writer-role")
@click.argument("role")
@db_option
def writer_role(role: str, db: str | None) -> int:
    """Let a PostgreSQL role read and append records, nothing else (run as the store's owner).

    Calls speccheck.records.postgres.PostgresStore.grant_writer.
    """
    from speccheck.errors import RecordsError
    from speccheck.records.postgres import PostgresStore

    with _open(db, create=True) as store:
        if not isinstance(store, PostgresStore):
            raise RecordsError("writer roles exist only on a PostgreSQL store", path=store.location)
        store.grant_writer(role)
    click.echo(f"role {role!r} may now SELECT and INSERT records, nothing else", err=True)
    return 0
