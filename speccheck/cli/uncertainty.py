"""``speccheck uncertainty noise|repeat``: calibration studies into a copy of an instrument file.

``noise`` calls speccheck.instrument.studies.record_noise; ``repeat`` calls
speccheck.instrument.studies.record_repeatability. Both read the instrument file with
speccheck.instrument.load_instrument and the traces with speccheck.readers.read_profile, and
write the updated file to --out (never over the instrument file read).
"""

from __future__ import annotations

import datetime as dt
from typing import Any

import click

from speccheck.cli.options import (
    InputPath,
    OutputPath,
    decimal_option,
    dx_option,
    format_option,
)
from speccheck.errors import SpeccheckError

__all__ = ["command"]

_CAUTION = (
    "Calibration values come from calibrated material measures handled by qualified "
    "personnel; the laboratory's own uncertainty evaluation takes precedence."
)


def _common(f: Any) -> Any:
    for option in (
        decimal_option,
        dx_option,
        format_option,
        click.option(
            "--date",
            default=None,
            metavar="YYYY-MM-DD",
            help="Date of the study (default: today).",
        ),
        click.option("--ls", "ls", default=None, metavar="LENGTH", help="λs (default: ISO 3274)."),
        click.option(
            "--cutoff", default="0.8mm", show_default=True, metavar="LENGTH", help="Cut-off λc."
        ),
        click.option(
            "--out",
            "-o",
            "out",
            required=True,
            type=OutputPath("--out", allow_dash=False),
            help="The updated instrument file (a new file: the one read is never overwritten).",
        ),
        click.option(
            "--instrument",
            "instrument",
            required=True,
            type=InputPath("instrument file"),
            help="The instrument file to start from.",
        ),
        click.argument("profiles", nargs=-1, required=True, type=InputPath("profile")),
    ):
        f = option(f)
    return f


def _inputs(instrument: str, profiles: tuple[str, ...], cutoff: str, ls: str | None, opts: dict):
    from speccheck.instrument import load_instrument
    from speccheck.readers import read_profile
    from speccheck.units import parse_length

    def length(text: str, option: str) -> float:
        try:
            v = parse_length(text).um
        except SpeccheckError as exc:
            raise SpeccheckError(exc.message, where=f"option {option}") from None
        if not v > 0:
            raise SpeccheckError(f"{text!r} must be a positive length", where=f"option {option}")
        return v

    loaded = load_instrument(instrument)
    read = [
        read_profile(p, fmt=opts["fmt"], dx=opts["dx"], decimal=opts["decimal"]) for p in profiles
    ]
    lam_s = None if ls is None else length(ls, "--ls")
    return loaded, read, length(cutoff, "--cutoff") / 1000.0, lam_s


def _date(text: str | None) -> dt.date | None:
    if text is None:
        return None
    try:
        return dt.date.fromisoformat(text)
    except ValueError:
        raise SpeccheckError(f"{text!r} is not a date YYYY-MM-DD", where="option --date") from None


def _write(out: str, text: str) -> None:
    from pathlib import Path

    from speccheck._atomic import atomic_write_text

    atomic_write_text(Path(out), text, role="--out")


@click.group(name="uncertainty")
def command() -> None:
    """Calibration studies for the uncertainty estimate: noise on a flat, repeatability.

    noise calls speccheck.instrument.studies.record_noise; repeat calls
    speccheck.instrument.studies.record_repeatability.
    """


@command.command(name="noise")
@click.option(
    "--certificate", default=None, metavar="TEXT", help="Certificate or report reference."
)
@_common
def noise(instrument, profiles, out, cutoff, ls, date, fmt, dx, decimal, certificate) -> int:
    """Residual noise Rq0 of traces PROFILES on an optical flat, into the instrument file.

    Rq0 = √(mean Rq²) of the roughness profiles; σ = Rq0/√g is the white-noise standard
    deviation per point, g the noise bandwidth of the λc and λs Gaussian filters. Calls
    speccheck.instrument.studies.record_noise.
    """
    from speccheck.instrument.studies import record_noise

    loaded, read, lc, lam_s = _inputs(
        instrument, profiles, cutoff, ls, {"fmt": fmt, "dx": dx, "decimal": decimal}
    )
    text, study = record_noise(
        loaded, read, lambda_c_mm=lc, lambda_s_um=lam_s, date=_date(date), certificate=certificate
    )
    _write(out, text)
    click.echo(
        f"Rq0 = {study.rq0_um:.4g} µm over {len(read)} trace(s); white noise σ = "
        f"{study.sigma_um:.4g} µm per point (noise bandwidth g = {study.bandwidth:.4g}); "
        f"written to {out}"
    )
    click.echo(_CAUTION)
    return 0


@command.command(name="repeat")
@click.option(
    "--parameter",
    "names",
    multiple=True,
    metavar="NAME",
    help="Parameter to record (repeatable; default: Ra Rq Rsk Rku Rp Rv Rz Rt).",
)
@_common
def repeat(instrument, profiles, out, cutoff, ls, date, fmt, dx, decimal, names) -> int:
    """Repeatability (type A) of repeated traces PROFILES at one position, into the file.

    Stores, per parameter, the standard deviation of single values and its degrees of
    freedom (traces − 1), with the traces' SHA-256 and the date. Calls
    speccheck.instrument.studies.record_repeatability.
    """
    from speccheck.instrument.studies import DEFAULT_PARAMETERS, record_repeatability

    loaded, read, lc, lam_s = _inputs(
        instrument, profiles, cutoff, ls, {"fmt": fmt, "dx": dx, "decimal": decimal}
    )
    text, study = record_repeatability(
        loaded,
        read,
        names=list(names) or list(DEFAULT_PARAMETERS),
        lambda_c_mm=lc,
        lambda_s_um=lam_s,
        date=_date(date),
    )
    _write(out, text)
    for n, sd in study.sd.items():
        unit = f" {study.units[n]}" if study.units[n] else ""
        click.echo(f"{n}: mean {study.mean[n]:.4g}{unit}, s = {sd:.3g}{unit}, ν = {study.dof}")
    click.echo(f"written to {out}")
    click.echo(_CAUTION)
    return 0
