"""Delimited text profiles: CSV, TSV and whitespace-separated columns.

Layout::

    # instrument: stylus 2 µm tip          (optional comment lines; these three keys are kept)
    # date: 2026-11-30
    # comment: seal seat, 0° position
    x [mm],z [um]                          (header: column names with units in [] or ())
    0.0000,0.1234
    0.0005,0.1301
    0.0010,                                (empty cell or nan: invalid point)

The field separator is taken from the header: tab, then ``;``, then ``,``, else whitespace. Which
columns hold x and z is found by their names (``x``/``position``/``distance``,
``z``/``height``/``profile``) or given by ``--columns``; other columns are kept out
(:mod:`speccheck.readers._columns`). A file with no x column needs the spacing from the caller
(``dx``). Decimal commas are
refused unless ``decimal=","``, and then the separator must be ``;``, tab or whitespace.
Units: ``um`` / ``µm``, ``nm``, ``mm``, ``m``, ``in``, ``uin``.
"""

from __future__ import annotations

import io
import re
from pathlib import Path

import numpy as np

from speccheck._atomic import atomic_write_text
from speccheck.errors import InputError
from speccheck.profile import Profile, SourceInfo
from speccheck.readers._columns import (
    headerless_layout,
    layout_from_header,
    parse_columns_option,
)
from speccheck.readers._common import SPACING_TOLERANCE, profile_from_heights, spacing_from_x
from speccheck.units import Length

__all__ = ["parse_delimited", "write_csv"]

_WS_HEADER_TOKEN = re.compile(r"[^\s\[(]+(?:\s*[\[(][^\])]*[\])])?")
_DECIMAL_COMMA = re.compile(r"^\s*[-+]?\d*,\d+(?:[eE][-+]?\d+)?\s*$")
_META_KEYS = ("instrument", "date", "comment")


def _separator(header: str) -> str | None:
    for sep in ("\t", ";", ","):
        if sep in header:
            return sep
    return None  # whitespace


def _split_header(header: str, sep: str | None) -> list[str]:
    if sep is None:
        return _WS_HEADER_TOKEN.findall(header)
    return header.split(sep)


def _is_number(token: str) -> bool:
    try:
        float(token.replace(",", "."))
    except ValueError:
        return False
    return True


def parse_delimited(
    text: str,
    *,
    path: str,
    sha256: str,
    fmt: str,
    dx: Length | None = None,
    decimal: str = ".",
    columns: str | None = None,
) -> Profile:
    """Parse delimited text into a Profile; every error names the line (and column).

    ``columns`` is the ``--columns`` text (:mod:`speccheck.readers._columns`); without it x and
    z are found by their header names and other columns are kept out.
    """
    all_lines = text.splitlines()
    meta: dict[str, str] = {}
    header: str | None = None
    header_line = 0
    for number, raw in enumerate(all_lines, start=1):
        line = raw.strip()
        if line.startswith("#"):
            _comment(line, meta)
        elif line:
            header, header_line = line, number
            break
    if header is None:
        raise InputError("no header and no data (only comment lines)", path=path)
    sep = _separator(header)
    if decimal == "," and sep == ",":
        raise InputError(
            "with decimal commas the fields must be separated by ';', tab or spaces",
            path=path,
            where=f"line {header_line}",
        )
    chosen = None if columns is None else parse_columns_option(columns, path=path)
    cells = _split_header(header, sep)
    if cells and _is_number(cells[0].strip()):  # no header: the first line is data
        layout = headerless_layout(len(cells), chosen, path=path, line=header_line)
        header_line -= 1
    else:
        layout = layout_from_header(cells, chosen, path=path, line=header_line)
    ncol = layout.ncol
    x_col = layout.x[0] if layout.x is not None else None
    used = [layout.z[0]] + ([x_col] if x_col is not None else [])

    body = all_lines[header_line:]
    while body and not body[-1].strip():
        body.pop()
    values = _fast_values(body, ncol, used, sep, decimal)
    if values is not None:
        row_lines = list(range(header_line + 1, header_line + 1 + len(body)))
    else:  # comments, blank lines or a bad cell: go line by line and say where
        rows: list[list[str]] = []
        row_lines = []
        for number, raw in enumerate(body, start=header_line + 1):
            line = raw.strip()
            if line.startswith("#"):
                _comment(line, meta)
            elif line:
                rows.append(line.split(sep) if sep is not None else line.split())
                row_lines.append(number)
        if not rows:
            raise InputError("header but no data rows", path=path, where=f"line {header_line}")
        values = _checked_values(rows, row_lines, ncol, used, x_col, sep, decimal, path)
    lines = np.asarray(row_lines)
    z_col = layout.z[0]
    with np.errstate(over="ignore", invalid="ignore"):  # overflow becomes inf, refused below
        z_um = values[:, 0] * layout.z[1]
        x_um = values[:, 1] * layout.x[1] if layout.x is not None else None
    if x_um is not None:
        bad = np.flatnonzero(~np.isfinite(x_um))
        if bad.size:
            raise InputError("x is not a finite number", path=path, where=f"line {lines[bad[0]]}")
        if x_um.size < 2:
            dx_um = np.nan
        else:
            dx_um = spacing_from_x(x_um, lines, path=path)
            if dx is not None and abs(dx.um - dx_um) > SPACING_TOLERANCE * dx_um:
                raise InputError(
                    f"the given spacing {dx} disagrees with the x column's spacing {dx_um:g} µm",
                    path=path,
                    where=f"line {header_line}",
                )
    else:
        if dx is None:
            raise InputError(
                "the file has no x column; give the sampling spacing, e.g. --dx 0.5um",
                path=path,
                where=f"line {header_line}",
            )
        dx_um = dx.um
    source = SourceInfo(path=path, sha256=sha256, format=fmt, **meta)

    def locate(i: int) -> str:
        return f"line {int(lines[i])}, column {z_col + 1}"

    return profile_from_heights(
        z_um, dx_um, source=source, where=f"line {header_line}", locate=locate
    )


def _comment(line: str, meta: dict[str, str]) -> None:
    """Keep ``# instrument: ...``, ``# date: ...``, ``# comment: ...``; ignore other comments."""
    key, colon, value = line[1:].partition(":")
    name = key.strip().lower()
    if colon and name in _META_KEYS and value.strip():
        meta[name] = f"{meta[name]}; {value.strip()}" if name in meta else value.strip()


def _fast_values(
    body: list[str], ncol: int, used: list[int], sep: str | None, decimal: str
) -> np.ndarray | None:
    """The ``used`` columns as floats via numpy's C parser when the block is plain, else None.

    None sends the caller to the line-by-line path, which finds and names the first problem.
    """
    if not body:
        return None
    block = "\n".join(body)
    if "#" in block or "_" in block:  # comments; float syntax '1_000' that we refuse
        return None
    if decimal == ",":
        block = block.replace(",", ".")
    elif sep != "," and "," in block:
        return None
    extra = ncol > len(used)
    if extra:  # columns kept out are not parsed, but every row must have the header's fields
        counts = {len(line.split(sep)) if sep is not None else len(line.split()) for line in body}
        if counts != {ncol}:
            return None
    try:
        values = np.loadtxt(
            io.StringIO(block),
            delimiter=sep,
            comments=None,
            ndmin=2,
            usecols=used if extra else None,
        )
    except ValueError:
        return None
    if values.shape != (len(body), len(used) if extra else ncol):
        return None
    return values if extra else values[:, used]


def _checked_values(
    rows: list[list[str]],
    row_lines: list[int],
    ncol: int,
    used: list[int],
    x_col: int | None,
    sep: str | None,
    decimal: str,
    path: str,
) -> np.ndarray:
    """The ``used`` columns cell by cell, raising InputError at the first bad cell; empty z
    cells become NaN. Columns kept out are not read."""
    values = np.empty((len(rows), len(used)), dtype=np.float64)
    for i, cells in enumerate(rows):
        if len(cells) != ncol:
            hint = ""
            if sep == "," and len(cells) == 2 * ncol:
                hint = " (decimal commas? use ';' between fields and decimal ',')"
            raise InputError(
                f"{len(cells)} fields, the header names {ncol}{hint}",
                path=path,
                where=f"line {row_lines[i]}",
            )
        for j, k in enumerate(used):
            cell = cells[k]
            token = cell.strip()
            if not token:
                if k == x_col:
                    raise InputError(
                        "x is missing", path=path, where=f"line {row_lines[i]}, column {k + 1}"
                    )
                values[i, j] = np.nan
                continue
            if decimal == ",":
                token = token.replace(",", ".")
            elif "," in token and _DECIMAL_COMMA.match(token):
                raise InputError(
                    f"decimal comma in {token!r}; read the file with decimal ','",
                    path=path,
                    where=f"line {row_lines[i]}, column {k + 1}",
                )
            try:
                if "_" in token:
                    raise ValueError(token)
                values[i, j] = float(token)
            except ValueError:
                raise InputError(
                    f"not a number: {cell.strip()!r}",
                    path=path,
                    where=f"line {row_lines[i]}, column {k + 1}",
                ) from None
    return values


def write_csv(path: str | Path, profile: Profile) -> None:
    """Write ``profile`` as canonical CSV (``x [mm],z [um]``, ``nan`` for invalid points).

    Heights are written with the shortest text that reads back to the same float64, so a
    written file reads back bit-exact. Instrument, date and comment go into ``#`` lines. The
    write is atomic: a failure leaves no partial file.
    """
    out: list[str] = []
    for key in _META_KEYS:
        value = getattr(profile.source, key)
        if value:
            out.append(f"# {key}: {' '.join(str(value).split())}")
    out.append("x [mm],z [um]")
    x_mm = np.arange(profile.n_points) * profile.dx_um / 1e3
    out.extend(f"{x:.12g},{z!r}" for x, z in zip(x_mm.tolist(), profile.z_um.tolist(), strict=True))
    atomic_write_text(Path(path), "\n".join(out) + "\n")
