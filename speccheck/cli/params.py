"""``speccheck params FILE``: surface-texture parameters of one profile.

Calls speccheck.readers.read_profile, speccheck.profile.fill_dropouts,
speccheck.parameters.cutoff.choose_lambda_c (no --cutoff) and
speccheck.parameters.compute.compute_parameters.
"""

from __future__ import annotations

from typing import Any

import click

from speccheck.cli.options import (
    InputPath,
    columns_option,
    cutoff_option,
    decimal_option,
    dx_option,
    echo_json,
    format_option,
    json_flag,
)
from speccheck.errors import ExitStatus, InputError, SpeccheckError

__all__ = ["command"]

_FILTERS = ("gaussian", "robust", "robust-order0", "iso13565-1")
_FORMS = ("line", "arc", "poly2", "poly3", "poly4", "poly5", "poly6", "none")

# Families for the table, in order: (heading, base names of speccheck.parameters.names)
_FAMILIES = (
    ("Amplitude", ("a", "q", "sk", "ku")),
    ("Peaks and valleys", ("p", "v", "z", "t", "z1max")),
    ("Spacing and slope", ("c", "Sm", "dq")),
    ("Material ratio", ("mr", "dc")),
    ("Stratified surfaces (ISO 13565-2)", ("k", "pk", "vk", "mr1", "mr2", "A1", "A2")),
    ("Probability curve (ISO 13565-3)", ("pq", "vq", "mq")),
    ("ASME B46.1", ("pm", "vm", "max", "pc")),
)

_EDITION = {"iso4287": "ISO 4287:1997", "iso21920-2": "ISO 21920-2:2021"}

_OPTION_OF_KEY = {
    "key lambda_c_mm": "option --cutoff",
    "key lambda_s_um": "option --ls",
    "key lambda_f_mm": "option --lf",
    "key sections": "option --sections",
}


def _length_um(text: str, option: str) -> float:
    from speccheck.units import parse_length

    try:
        value = parse_length(text).um
    except SpeccheckError as exc:
        raise SpeccheckError(exc.message, where=f"option {option}") from None
    if not value > 0:
        raise SpeccheckError(f"{text!r} must be a positive length", where=f"option {option}")
    return value


def _fmt(value: float | None) -> str:
    return "–" if value is None else f"{value:.4g}"


@click.command(name="params")
@click.argument("file", type=InputPath("profile"))
@cutoff_option
@click.option(
    "--ls",
    "ls",
    default=None,
    metavar="LENGTH|none",
    help="Short-wave cut-off λs, e.g. 2.5um, or 'none' (default: ISO 3274 for λc).",
)
@click.option(
    "--lf", "lf", default=None, metavar="LENGTH", help="Long-wave cut-off λf for --profile W."
)
@click.option(
    "--sections",
    type=click.IntRange(min=1),
    default=5,
    show_default=True,
    help="Sections in the evaluation length.",
)
@click.option(
    "--filter",
    "filter_",
    type=click.Choice(_FILTERS),
    default="gaussian",
    show_default=True,
    help="Mean-line filter.",
)
@click.option(
    "--profile",
    "kind",
    type=click.Choice(["R", "W", "P"]),
    default="R",
    show_default=True,
    help="Roughness, waviness or primary profile.",
)
@click.option(
    "--form",
    type=click.Choice(_FORMS),
    default="line",
    show_default=True,
    help="Nominal form removed first.",
)
@click.option(
    "--param",
    "extra",
    multiple=True,
    metavar="NAME",
    help="Also compute a parametrised parameter, e.g. 'Rmr(0.5)' or 'Rdc(20-80)'.",
)
@click.option(
    "--convention",
    type=click.Choice(["iso1302", "iso21920", "asme"]),
    default="iso1302",
    show_default=True,
    help="Definitions and default cut-off table: ISO 4287 / ISO 4288 (iso1302, asme) or "
    "ISO 21920-2 field parameters / ISO 21920-3 (iso21920).",
)
@click.option(
    "--periodic",
    type=click.Choice(["auto", "true", "false"]),
    default="auto",
    show_default=True,
    help="Without --cutoff: choose λc by RSm for a periodic profile, by Ra otherwise "
    "(ISO 4288 7.2); auto decides by the autocorrelation test and reports its evidence.",
)
@click.option(
    "--ends",
    type=click.Choice(["run-in", "moment"]),
    default="run-in",
    show_default=True,
    help="run-in: one cut-off at each end is left unevaluated; moment: the filters run to the "
    "trace ends (ISO 16610-28 moment criterion) and the whole trace is evaluated.",
)
@format_option
@dx_option
@decimal_option
@columns_option
@json_flag
def command(
    file: str,
    cutoff: str | None,
    ls: str | None,
    lf: str | None,
    sections: int,
    filter_: str,
    kind: str,
    form: str,
    extra: tuple[str, ...],
    convention: str,
    periodic: str,
    ends: str,
    fmt: str | None,
    dx: str | None,
    decimal: str,
    columns: str | None,
    as_json: bool,
) -> int:
    """Compute the surface-texture parameters of the profile in FILE.

    Without --cutoff, λc follows the ISO 4288 procedure on Ra and the output says so.
    Exit status 3 when the trace is too short for the conditions. Calls
    speccheck.parameters.compute.compute_parameters.
    """
    from speccheck.parameters.compute import InsufficientData, compute_parameters
    from speccheck.parameters.conditions import Conditions
    from speccheck.parameters.cutoff import lambda_s_for
    from speccheck.profile import fill_dropouts
    from speccheck.readers import read_profile

    ls_value: Any = (
        "table" if ls is None else None if ls.strip().lower() == "none" else _length_um(ls, "--ls")
    )
    lf_mm = None if lf is None else _length_um(lf, "--lf") / 1000.0
    profile = fill_dropouts(read_profile(file, fmt=fmt, dx=dx, decimal=decimal, columns=columns))
    if not profile.dropouts.usable:
        a, b = profile.dropouts.refused_gaps_mm[0]
        raise InputError(
            f"gap of invalid points too long to bridge at x {a:g}–{b:g} mm; "
            f"this profile cannot be evaluated",
            path=file,
        )
    z, dx_um = profile.z_um, profile.dx_um
    definitions = "iso21920-2" if convention == "iso21920" else "iso4287"
    table = "iso21920-3" if convention == "iso21920" else "iso4288"
    if cutoff is not None:
        lambda_c_mm = _length_um(cutoff, "--cutoff") / 1000.0
        choice: dict[str, Any] = {"source": "--cutoff"}
    else:
        chosen = _default_cutoff(
            file, z, dx_um, ls_value, sections, filter_, form, table, periodic, as_json, ends
        )
        if isinstance(chosen, int):
            return chosen
        lambda_c_mm, choice = chosen
    try:
        lambda_s_um = lambda_s_for(lambda_c_mm, ls_value)
    except SpeccheckError as exc:
        raise SpeccheckError(exc.message, where="option --cutoff") from None
    try:
        conditions = Conditions(
            lambda_c_mm,
            lambda_s_um,
            lambda_f_mm=lf_mm,
            sections=sections,
            filter=filter_,
            form=form,
            profile=kind,
            definitions=definitions,
            ends=ends,
        )
        result = compute_parameters(z, dx_um=dx_um, conditions=conditions, extra=extra)
    except SpeccheckError as exc:
        raise SpeccheckError(
            exc.message, where=_OPTION_OF_KEY.get(exc.where or "", "options")
        ) from None
    except ValueError as exc:
        raise SpeccheckError(str(exc), where="option --param") from None
    if isinstance(result, InsufficientData):
        return _insufficient(file, result, as_json)
    from speccheck.diagnostics import diagnose

    out = result.to_dict()
    out["diagnostics"] = [d.to_dict() for d in diagnose(result)]
    out["cutoff_choice"] = choice
    out["convention"] = convention
    out["warnings"] = _spacing_warnings(dx_um, lambda_c_mm)
    src = profile.source
    out["source"] = {"path": src.path, "sha256": src.sha256, "format": src.format}
    if as_json:
        echo_json(out, "params")
    else:
        _print_table(out)
    return int(ExitStatus.CONFORMING)


def _spacing_warnings(dx_um: float, lambda_c_mm: float) -> list[str]:
    """A sampling spacing beyond ISO 3274:1996 Table 1 for λc (check leaves such values open)."""
    from speccheck.evaluation.evaluator import max_spacing_for_um

    limit = max_spacing_for_um(lambda_c_mm)
    if dx_um <= limit * (1 + 1e-9):
        return []
    return [
        f"sampling spacing {dx_um:g} µm exceeds the {limit:g} µm ISO 3274:1996 Table 1 allows "
        f"for λc {lambda_c_mm:g} mm; check leaves such values undecided (other-conditions)"
    ]


def _default_cutoff(
    file: str,
    z: Any,
    dx_um: float,
    ls_value: Any,
    sections: int,
    filter_: str,
    form: str,
    table: str,
    periodic: str,
    as_json: bool,
    ends: str = "run-in",
) -> tuple[float, dict[str, Any]] | int:
    """λc by the ISO 4288 procedure and the record of how it was chosen (or an exit status)."""
    from speccheck.parameters.compute import InsufficientData
    from speccheck.parameters.cutoff import choose_lambda_c

    mode: Any = "auto" if periodic == "auto" else periodic == "true"
    try:
        sel = choose_lambda_c(
            z,
            dx_um=dx_um,
            lambda_s_um=ls_value,
            sections=sections,
            filter=filter_,
            form=form,
            table=table,
            periodic=mode,
            ends=ends,
        )
    except SpeccheckError as exc:
        raise SpeccheckError(f"default cut-off: {exc.message}", path=file) from None
    if isinstance(sel, InsufficientData):
        return _insufficient(file, sel, as_json)
    key = f"{sel.parameter}_um"
    clause = "7.2.1" if sel.periodic else "7.2.2"
    ev = sel.periodicity
    return sel.lambda_c_mm, {
        "source": f"ISO 4288:1996 {clause} procedure on {sel.parameter}"
        + (" with the ISO 21920-3:2021 table" if table == "iso21920-3" else ""),
        "periodic": sel.periodic,
        "periodic_source": f"--periodic {periodic}",
        "periodicity": None
        if ev is None
        else {"correlation": ev.correlation, "lag_mm": ev.lag_mm, "evidence": ev.evidence},
        "settled": sel.selection.settled,
        "message": sel.selection.message,
        "estimate": {"lambda_c_mm": sel.estimate_lambda_c_mm, key: sel.estimate_um},
        "steps": [{"lambda_c_mm": s.lambda_c_mm, key: s.measured_um} for s in sel.selection.steps],
    }


def _insufficient(file: str, res: Any, as_json: bool) -> int:
    if as_json:
        doc = {
            "insufficient_data": {
                "reason": res.reason,
                "required_mm": res.required_mm,
                "available_mm": res.available_mm,
                "kind": res.kind,
            }
        }
        echo_json(doc, "params")
    click.echo(f"speccheck: insufficient data: {file}: {res.reason}", err=True)
    return int(ExitStatus.UNDECIDED)


def _print_table(out: dict[str, Any]) -> None:
    from rich.console import Console
    from rich.table import Table

    from speccheck.parameters.names import parse_parameter_name

    c, params, sections = out["conditions"], out["parameters"], out["sections"]
    console = Console(highlight=False, width=200)
    ls = "none" if c.get("lambda_s_um") is None else f"{c['lambda_s_um']:g} µm"
    lf = f", λf {c['lambda_f_mm']:g} mm" if c.get("lambda_f_mm") else ""
    src = out["source"]
    console.print(f"{src['path']}  ({src['format']}, sha256 {src['sha256'][:12]}…)")
    console.print(
        f"λc {c['lambda_c_mm']:g} mm, λs {ls}{lf}, "
        f"evaluation length {c['evaluation_length_mm']:g} mm in {c['sections']} sections, "
        f"{c['filter']} filter, form {c['form']}, profile {c['profile']}, "
        f"definitions {_EDITION[c['definitions']]}, "
        + ("filters run to the ends" if c.get("ends") == "moment" else "run-in and run-out")
    )
    choice = out["cutoff_choice"]
    if choice["source"] != "--cutoff":
        est = choice["estimate"]
        name = "RSm" if choice["periodic"] else "Ra"
        if choice.get("periodicity"):
            console.print(f"periodic test: {choice['periodicity']['evidence']}")
        console.print(
            f"λc chosen by the {choice['source']}: estimate {name} {est[name + '_um']:.4g} µm "
            f"at λc {est['lambda_c_mm']:g} mm; {choice['message']}"
        )
    for warning in out.get("warnings", []):
        console.print(f"warning: {warning}")
    table = Table(box=None, pad_edge=False)
    shown = sections if len(sections) > 1 else []  # one section: its values are the values
    for col in ("parameter", "value", "unit", "basis", *(f"s{i + 1}" for i in range(len(shown)))):
        table.add_column(col, justify="left" if col in ("parameter", "unit") else "right")
    for heading, bases in _FAMILIES:
        rows = [n for n in params if (p := parse_parameter_name(n)) is not None and p.base in bases]
        if not rows:
            continue
        table.add_row(f"[bold]{heading}[/bold]")
        for name in rows:
            per = [_fmt(s[name]["value"]) if name in s else "" for s in shown]
            entry = params[name]
            basis = entry.get("basis", "") if len(sections) > 1 else "field"
            table.add_row(f"  {name}", _fmt(entry["value"]), entry["unit"], basis, *per)
    console.print(table)
    for note in out["notes"]:
        console.print(f"note: {note}")
    for diag in out.get("diagnostics", []):
        console.print(f"{diag['severity']}: {diag['message']}")
