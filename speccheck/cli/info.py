"""``speccheck info FILE``: what a measured-profile file holds (calls readers.profile_summary)."""

from __future__ import annotations

import click

from speccheck.cli.options import (
    InputPath,
    columns_option,
    decimal_option,
    dx_option,
    echo_json,
    format_option,
    json_flag,
)

__all__ = ["command"]


@click.command(name="info")
@click.argument("file", type=InputPath("profile"))
@format_option
@dx_option
@decimal_option
@columns_option
@json_flag
def command(
    file: str, fmt: str | None, dx: str | None, decimal: str, columns: str | None, as_json: bool
) -> int:
    """Describe a measured profile FILE: points, spacing, length, dropouts, SHA-256.

    Calls speccheck.readers.read_profile and speccheck.readers.profile_summary.
    """
    from speccheck.readers import profile_summary, read_profile

    summary = profile_summary(read_profile(file, fmt=fmt, dx=dx, decimal=decimal, columns=columns))
    if as_json:
        echo_json(summary, "info")
        return 0
    from rich.console import Console
    from rich.table import Table

    d = summary["dropouts"]
    gaps = ", ".join(f"{a:g}–{b:g} mm" for a, b in d["refused_gaps_mm"]) or "none"
    z_range = summary["z_range_um"]
    rows = [
        ("file", summary["path"]),
        ("format", summary["format"]),
        ("points", str(summary["points"])),
        ("spacing", f"{summary['spacing_um']:g} µm"),
        ("length", f"{summary['length_mm']:.4g} mm"),
        ("z range", f"{z_range:.4g} µm" if z_range is not None else "–"),
        (
            "invalid points",
            f"{d['invalid_points']} (bridged {d['interpolated_points']}, "
            f"longest run {d['longest_run_points']})",
        ),
        ("gaps too long to bridge", gaps),
        ("instrument", summary["instrument"] or "–"),
        ("date", summary["date"] or "–"),
        ("comment", summary["comment"] or "–"),
        ("SHA-256", summary["sha256"]),
    ]
    table = Table(show_header=False, box=None, pad_edge=False)
    table.add_column(style="bold")
    table.add_column(no_wrap=True)
    for key, value in rows:
        table.add_row(key, value)
    Console(highlight=False, width=200).print(table)
    if not d["usable"]:
        click.echo("note: gaps too long to bridge; this profile cannot be evaluated as it is")
    return 0
