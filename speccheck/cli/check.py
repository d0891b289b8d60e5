"""``speccheck check SPEC PROFILE...``: verdicts and exit status (calls evaluation.evaluate).

Exit status 0 conforming, 1 nonconforming, 3 undecided, 2 error. Optional: the result as JSON,
a (signed) PDF conformance record, an entry in the records store.
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Any

import click

from speccheck.cli.options import (
    InputPath,
    color_option,
    db_option,
    decimal_option,
    dx_option,
    format_option,
    identity_options,
    json_out_option,
    passphrase_file_option,
    quiet_option,
    record_flag,
    report_option,
    sign_option,
    stated_identity,
    tsa_option,
    wants_color,
    write_json,
)
from speccheck.errors import ExitStatus, SpeccheckError

__all__ = ["command", "render_table", "identity_lines", "CAUTION"]

EXIT = {
    "conforming": ExitStatus.CONFORMING,
    "nonconforming": ExitStatus.NONCONFORMING,
    "undecided": ExitStatus.UNDECIDED,
}
CAUTION = (
    "Caution: the governing drawing, the contract and the applicable standards take precedence; "
    "the result is only as good as the instrument's calibration and the measurement, and parts "
    "are released by qualified personnel."
)
_STYLE = {"conforming": "green", "nonconforming": "bold red", "undecided": "yellow"}


def _num(x: float | None) -> str:
    if x is None or not math.isfinite(x):
        return "–"
    return f"{x:.4g}"


def _values_text(req: Any) -> str:
    counted: list[str] = []
    late: list[str] = []
    for v in req.values:
        target = late if v.after_decision else counted
        if v.value is None:
            target.append("not evaluated")
            continue
        beyond = "below" if req.lower is not None and v.value < req.lower else "exceeding"
        mark = f" ({beyond})" if v.counts_as == "exceeding" else ""
        if v.zone == "uncertain":  # within ±U of a limit: say how the decision rule counted it
            mark = f" (±U, counted {'exceeding' if v.counts_as == 'exceeding' else 'within'})"
        shown = v.drawing_value if v.drawing_value is not None else v.value
        target.append(f"{_num(shown)}{mark}")
    text = ", ".join(counted) or "none"
    if late:  # ISO 4288 5.2: measured after the step procedure had decided, not counted
        text += "; after the decision: " + ", ".join(late)
    return text


def identity_lines(identity: dict[str, Any]) -> list[str]:
    """Part serial, operator, order, note, instrument and calibration, one line each."""
    from speccheck.evaluation.identity import OUT_OF_CALIBRATION

    shown = [("Part serial", "serial"), ("Operator", "operator"), ("Order", "order")]
    lines = [f"{label}: {identity[k]}" for label, k in shown if identity.get(k)]
    inst = identity.get("instrument")
    if inst:
        make = " ".join(str(inst[k]) for k in ("manufacturer", "model") if inst.get(k))
        extra = ", ".join(
            f"{label} {inst[k]}"
            for label, k in (
                ("serial", "serial"),
                ("version", "version"),
                ("probe", "probing_system"),
            )
            if inst.get(k)
        )
        head = inst.get("id") or make or "instrument"
        rest = ", ".join(x for x in ((make if inst.get("id") else ""), extra) if x)
        lines.append(f"Instrument: {head}" + (f" ({rest})" if rest else ""))
        lines += [f"   Warning: {w}" for w in inst.get("warnings") or []]
    cal = identity.get("calibration") or {}
    if cal.get("text") and (inst or cal.get("status") != "not-checked"):
        mark = "UNDECIDED: " if cal.get("status") in OUT_OF_CALIBRATION else ""
        lines.append(f"Calibration: {mark}{cal['text']}")
    if identity.get("note"):
        lines.append(f"Note: {identity['note']}")
    return lines


def render_table(result: Any, *, color: bool = False, width: int = 100) -> str:
    """The plain-text report of a CheckResult: one row per requirement, next steps, caution.

    The words carry the meaning (CONFORMING, NONCONFORMING, UNDECIDED); colour, when asked
    for, only helps.
    """
    import io

    from rich.console import Console
    from rich.table import Table
    from rich.text import Text

    console = Console(
        file=io.StringIO(),
        record=True,
        width=width,
        highlight=False,
        force_terminal=color,
        no_color=not color,
    )
    sp = result.spec
    title = " ".join(
        str(x)
        for x in (
            sp.get("part"),
            sp.get("revision") and f"rev {sp['revision']}",
            sp.get("surface") and f"– {sp['surface']}",
        )
        if x
    )
    table = Table(title=f"Surface finish check {title}".strip(), title_justify="left", expand=False)
    table.add_column("#", justify="right")
    table.add_column("requirement")
    table.add_column("values", overflow="fold")
    table.add_column("rule")
    table.add_column("verdict")
    for i, req in enumerate(result.requirements, start=1):
        shown = req.drawing_unit or req.unit  # the drawing's unit (µin on inch drawings)
        unit = f" {shown}" if shown else ""
        rule = "16 %" if req.rule == "16%" else "max"
        if req.uncertainty is not None:
            u = req.uncertainty if not req.drawing_limits else req.drawing_limits["uncertainty"]
            rule += f", {req.decision_rule}, U {_num(u)}{unit}"
        verdict = Text(req.verdict.upper(), style=_STYLE[req.verdict])
        values = _values_text(req) + (unit if any(v.value is not None for v in req.values) else "")
        table.add_row(str(i), req.text, values, rule, verdict)
    console.print(table)
    for line in identity_lines(getattr(result, "identity", None) or {}):
        console.print(line)
    console.print(_verdict_text(result))
    for i, req in enumerate(result.requirements, start=1):
        console.print(f"#{i} {req.verdict}: {req.explanation}")
        for diag in req.diagnostics:
            console.print(
                f"   {diag['severity'].capitalize()} (profile {diag['measurement'] + 1}): "
                f"{diag['message']}"
            )
        if req.next:
            console.print(f"   Next: {req.next}.")
    for m in result.measurements:
        if m.status != "evaluated":
            name = Path(m.path).name if m.path else f"profile {m.index + 1}"
            console.print(f"Measurement {m.index + 1} ({name}) not evaluated: {m.reason}.")
    console.print(CAUTION)
    text = console.export_text(styles=color)
    return "".join(line.rstrip() + "\n" for line in text.splitlines())


def _verdict_text(result: Any) -> Any:
    """``Result: VERDICT``, the verdict styled (colour only helps: the word carries it)."""
    from rich.text import Text

    return Text("Result: ") + Text(result.verdict.upper(), style=_STYLE[result.verdict])


def verdict_line(result: Any, *, color: bool = False) -> str:
    """``Result: VERDICT`` alone (``--quiet``), coloured when asked for."""
    import io

    from rich.console import Console

    console = Console(
        file=io.StringIO(), record=True, highlight=False, force_terminal=color, no_color=not color
    )
    console.print(_verdict_text(result))
    return console.export_text(styles=color).rstrip() + "\n"


@click.command(name="check")
@click.argument("spec", type=InputPath("specification"))
@click.argument("profiles", nargs=-1, required=True, type=InputPath("profile"))
@json_out_option()
@format_option
@dx_option
@decimal_option
@report_option
@sign_option
@passphrase_file_option
@tsa_option
@record_flag
@db_option
@color_option
@quiet_option
@identity_options()
@click.option(
    "--allow-repeat",
    is_flag=True,
    help="Accept profiles with identical heights (a repeatability study); the record says so.",
)
def command(
    spec: str,
    profiles: tuple[str, ...],
    json_out: str | None,
    fmt: str | None,
    dx: str | None,
    decimal: str,
    report_out: str | None,
    sign_p12: str | None,
    passphrase_file: str | None,
    tsa_url: str | None,
    record: bool,
    db: str | None,
    color: str,
    quiet: bool,
    serial: str | None,
    operator: str | None,
    order: str | None,
    note: str | None,
    instrument_path: str | None,
    allow_repeat: bool = False,
) -> int:
    """Check measured PROFILES against the specification file SPEC.

    Profiles are taken in measurement order. Prints one verdict per requirement and overall
    (conforming, nonconforming, undecided) and what to measure next. Exit status: 0 conforming,
    1 nonconforming, 3 undecided, 2 error. Calls
    speccheck.evaluation.evaluator.load_inputs and evaluate.
    """
    if sign_p12 and not report_out:
        raise SpeccheckError("--sign needs --report OUT.pdf")
    if passphrase_file and not sign_p12:
        raise SpeccheckError("--passphrase-file needs --sign KEY.p12")
    if tsa_url and not sign_p12:
        raise SpeccheckError("--tsa needs --sign KEY.p12")
    if tsa_url and not tsa_url.startswith(("http://", "https://")):
        raise SpeccheckError(f"--tsa must be an http:// or https:// URL, got {tsa_url!r}")
    if db and not record:
        raise SpeccheckError("--db needs --record")
    from speccheck.evaluation.evaluator import evaluate, load_inputs

    stated = stated_identity(serial=serial, operator=operator, order=order, note=note)
    loaded, measured = load_inputs(
        spec, list(profiles), fmt=fmt, dx=dx, decimal=decimal, stated=stated
    )
    instrument = _instrument(instrument_path)
    result = evaluate(loaded, measured, instrument=instrument, stated=stated)
    repeats = refuse_repeats(
        [m.fingerprint for m in result.measurements],
        [f"measurement {m.index + 1} ({m.path})" for m in result.measurements],
        allow_repeat,
    )
    if json_out is not None:
        doc = result.to_dict()
        if repeats:
            doc["repeats_allowed"] = repeats
        write_json(doc, json_out, document="result")
    talk = json_out != "-" and not quiet  # lines beyond the verdict
    if json_out != "-":
        coloured = wants_color(color)
        text = (
            verdict_line(result, color=coloured) if quiet else render_table(result, color=coloured)
        )
        click.echo(text, nl=False, color=coloured)  # click strips colour off a pipe otherwise
    for r in repeats if talk else ():  # the JSON lists them too, --quiet or not
        click.echo(f"Repeat allowed (--allow-repeat, repeatability study): {r}.")
    report_sha256 = signer = None
    if report_out:
        options = {"fmt": fmt, "dx": dx, "decimal": decimal, "tsa_url": tsa_url}
        head = _chain_head(db) if (record and sign_p12) else None
        info = _write_report(
            result,
            loaded,
            profiles,
            report_out,
            sign_p12,
            passphrase_file,
            options,
            head,
            instrument,
        )
        report_sha256 = getattr(info, "sha256", None)
        signer = getattr(info, "signer", None)
        if talk:
            click.echo(
                f"Conformance record written: {report_out}"
                + (f" (signed by {signer})" if signer else " (not signed)")
            )
    if record:
        rid = _append_record(result, db, report_sha256, signer)
        if talk:
            click.echo(f"Recorded as entry {rid} in the records store.")
    return int(EXIT[result.verdict])


def _instrument(path: str | None) -> Any:
    if path is None:
        return None
    from speccheck.instrument import load_instrument

    return load_instrument(path)


def refuse_repeats(prints: list[str | None], labels: list[str], allow: bool) -> list[str]:
    """Identical heights given twice: an error, or with ``allow`` the pairs as sentences."""
    from speccheck.evaluation.fingerprint import duplicate_pairs

    pairs = duplicate_pairs([p or f"no fingerprint {i}" for i, p in enumerate(prints)])
    said = [f"{labels[b]} has the same heights as {labels[a]}" for a, b in pairs]
    if said and not allow:
        raise SpeccheckError(
            said[0]
            + "; the same profile is counted once (--allow-repeat for a repeatability study)"
        )
    return said


def _chain_head(db) -> Any:
    """The store's head now: the signed record carries it, anchoring the chain outside."""
    from speccheck.records.store import RecordsStore, default_db_path

    with RecordsStore.open(default_db_path(db)) as store:
        return store.chain_head()


def _write_report(
    result, loaded, profiles, out, sign_p12, passphrase_file, options, head, instrument
) -> Any:
    try:
        from speccheck.report import write_report  # type: ignore[attr-defined]
    except ImportError:
        try:
            from speccheck.report.writer import write_report
        except ImportError as exc:
            raise SpeccheckError("report support not available in this installation") from exc
    passphrase = None
    if sign_p12:
        from speccheck.report.signing import read_passphrase

        passphrase = read_passphrase(Path(passphrase_file) if passphrase_file else None)
    return write_report(
        result,
        out_path=Path(out),
        spec=loaded,
        profile_paths=[Path(p) for p in profiles],
        sign_p12=Path(sign_p12) if sign_p12 else None,
        passphrase=passphrase,
        read_options={k: v for k, v in options.items() if k != "tsa_url"},
        tsa_url=options.get("tsa_url"),
        chain_head=head,
        instrument=instrument,
    )


def _append_record(result, db, report_sha256, signer) -> Any:
    try:
        from speccheck.records.store import RecordsStore, default_db_path
    except ImportError as exc:
        raise SpeccheckError("records support not available in this installation") from exc
    with RecordsStore.open(default_db_path(db)) as store:
        return store.append_check(result, report_sha256=report_sha256, signer=signer)
