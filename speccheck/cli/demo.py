"""``speccheck demo``: build the demo data set (calls demo.data.prepare_demo_folder)."""

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
    """Write the invented Kestrel Fluid Power demo profiles (CSV and X3P) into a folder.

    Calls speccheck.demo.data.prepare_demo_folder. The data is synthetic and fictional.
    """
    from speccheck.demo.data import prepare_demo_folder

    for row in prepare_demo_folder(out):
        click.echo(
            f"{row['name']:<30} {row['points']:>7} points  {row['length_mm']:6.3f} mm  "
            f"dx {row['spacing_um']:g} µm  z range {row['z_range_um']:.3f} µm"
        )
    click.echo(f"demo data written to {out} (CSV and X3P; synthetic, invented scenario)")
    return 0
