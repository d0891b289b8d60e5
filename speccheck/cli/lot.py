"""``speccheck lot``: inspect a lot under an inspection plan (calls lot.runner.inspect_lot)."""

from __future__ import annotations

import sys

import click

from speccheck.cli.options import (
    InputPath,
    db_option,
    identity_options,
    json_out_option,
    passphrase_file_option,
    quiet_option,
    record_flag,
    report_option,
    sign_option,
    stated_identity,
    tsa_option,
    write_json,
)

__all__ = ["command"]


def _progress_callback():
    """A rich progress bar on stderr, started at the first report (only when stderr is a TTY)."""
    if not sys.stderr.isatty():
        return None, lambda: None
    state: dict = {}

    def report(done: int, total: int) -> None:
        if "bar" not in state:
            from rich.console import Console
            from rich.progress import Progress

            bar = Progress(console=Console(stderr=True), transient=True)
            bar.start()
            state["bar"], state["task"] = bar, bar.add_task("evaluating parts", total=total)
        state["bar"].update(state["task"], completed=done)

    def stop() -> None:
        if "bar" in state:
            state["bar"].stop()

    return report, stop


def _chain_head(db: str | None) -> dict:
    """The store's head now: the signed lot record carries it, anchoring the chain outside."""
    from speccheck.records.store import RecordsStore, default_db_path

    with RecordsStore.open(default_db_path(db)) as store:
        return store.chain_head()


@click.command(name="lot")
@click.argument("plan", type=InputPath("inspection plan"))
@click.option(
    "--data",
    "data_dir",
    required=True,
    type=click.Path(file_okay=False),
    help="Folder of the profiles.",
)
@report_option
@sign_option
@passphrase_file_option
@tsa_option
@json_out_option("Write the lot result as JSON to FILE ('-' for standard output).")
@record_flag
@db_option
@click.option(
    "--allow-repeat",
    is_flag=True,
    help="Accept profiles with identical heights (a repeatability study); the record says so.",
)
@click.option(
    "--workers",
    type=click.IntRange(min=1),
    default=None,
    help="Worker processes (default: all cores).",
)
@quiet_option
@identity_options(lot=True)
def command(
    plan: str,
    data_dir: str,
    report_out: str | None,
    sign_p12: str | None,
    passphrase_file: str | None,
    tsa_url: str | None,
    json_out: str | None,
    record: bool,
    db: str | None,
    workers: int | None,
    quiet: bool,
    serial: str | None,
    operator: str | None,
    order: str | None,
    note: str | None,
    instrument_path: str | None,
    allow_repeat: bool = False,
) -> int:
    """Evaluate every sampled part of a lot and accept or reject the lot.

    A part is nonconforming if any surface is; the lot is accepted with at most c nonconforming
    parts in the sample (c from the plan) and undecided while parts to measure again could
    change that. Exit status: 0 accept, 1 reject, 3 undecided, 2 error.
    Calls speccheck.lot.plan.load_plan and speccheck.lot.runner.inspect_lot.
    """
    from pathlib import Path

    from speccheck.errors import SpeccheckError
    from speccheck.lot.plan import load_plan
    from speccheck.lot.runner import inspect_lot

    if sign_p12 and not report_out:
        raise SpeccheckError("--sign needs --report OUT.pdf (the signature goes on the report)")
    if tsa_url and not sign_p12:
        raise SpeccheckError("--tsa needs --sign KEY.p12")
    for out in (report_out, json_out):
        if out and out != "-" and not Path(out).resolve().parent.is_dir():
            raise SpeccheckError(f"folder {str(Path(out).parent)!r} does not exist", path=out)
    if serial is not None:
        raise SpeccheckError(
            "--serial is for check: in a lot each part's serial is its folder's name "
            "({part_serial} in the plan's data.pattern)"
        )
    stated = stated_identity(operator=operator, order=order, note=note).to_dict()
    loaded = load_plan(plan)
    plan_order = loaded.lot.get("order")
    if order and plan_order and order.strip() != str(plan_order):
        raise SpeccheckError(
            f"--order {order!r} differs from the plan's lot.order {plan_order!r}", path=plan
        )
    stated["order"] = stated["order"] or plan_order
    report, stop = _progress_callback()
    try:
        result = inspect_lot(
            loaded,
            data_dir,
            workers=workers,
            progress=report,
            stated=stated,
            instrument_path=instrument_path,
        )
    finally:
        stop()
    repeats = _lot_repeats(result, allow_repeat)
    report_sha256 = signer = None
    if report_out:
        from speccheck.lot.report import write_lot_report
        from speccheck.report.signing import read_passphrase

        passphrase = (
            read_passphrase(Path(passphrase_file) if passphrase_file else None)
            if sign_p12
            else None
        )
        report_sha256 = write_lot_report(
            result,
            out_path=report_out,
            plan_raw=loaded.raw,
            sign_p12=sign_p12,
            passphrase=passphrase,
            plan=loaded,
            data_dir=data_dir,
            tsa_url=tsa_url,
            chain_head=_chain_head(db) if (record and sign_p12) else None,
        )
        if sign_p12:
            from speccheck.report.signing import signer_identity

            signer = signer_identity(Path(sign_p12), passphrase).name
    if json_out:
        doc = result.to_dict()
        if repeats:
            doc["repeats_allowed"] = repeats
        write_json(doc, json_out, document="lot")
    if record:
        from speccheck.records.store import RecordsStore, default_db_path

        with RecordsStore.open(default_db_path(db)) as store:
            rid = store.append_lot(result, report_sha256=report_sha256, signer=signer)
            where = store.location  # a server URL arrives here without its password
        if not quiet:
            click.echo(f"recorded as record {rid} in {where}", err=True)
    lot = result.lot
    if json_out != "-":
        click.echo(f"{lot['part']} lot {lot['id']}: {result.disposition.upper()} — {result.reason}")
    if json_out != "-" and not quiet:
        for part in result.parts:
            click.echo(f"  {part.serial:<16} {part.verdict}")
        for r in repeats:
            click.echo(f"repeat allowed (--allow-repeat, repeatability study): {r}")
        if result.remeasure:
            click.echo(f"measure again: {', '.join(result.remeasure)}")
        if report_out:
            click.echo(f"report written to {report_out}")
    return int(result.exit_status)


def _lot_repeats(result, allow: bool) -> list[str]:
    """Identical heights anywhere in the lot (across parts and surfaces): refused or listed."""
    from speccheck.cli.check import refuse_repeats

    found = [
        (m.fingerprint, f"part {p.serial}, {name}, {m.path}")
        for p in result.parts
        for name, r in p.surfaces.items()
        for m in r.measurements
    ]
    return refuse_repeats([f for f, _ in found], [label for _, label in found], allow)
