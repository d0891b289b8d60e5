"""Delimited text profiles: CSV, TSV and whitespace-separated columns.

Layout::

    # instrument: stylus 2 µm tip          (optional comment lines; these three keys are kept)
    # date: 2026-11-30
    # comment: seal seat, 0° position
    x [mm],z [um]                          (header: column names with units in [] or ())
    0.0000,0.1234
    0.0005,0.1301
    0.0010,                                (empty cell or nan: invalid point)

The field separator is taken from the header: tab, then ``;``, then ``,``, else whitespace. A
file with only a ``z`` column needs the spacing from the caller (``dx``). Decimal commas are
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
from speccheck.readers._common import SPACING_TOLERANCE, profile_from_heights, spacing_from_x
from speccheck.units import UM_PER_UNIT, Length, canonical_unit

__all__ = ["parse_delimited", "write_csv"]

_COLUMN = re.compile(r"^\s*([A-Za-z][\w ]*?)\s*(?:[\[(]\s*([^\])]*?)\s*[\])])?\s*$")
_WS_HEADER_TOKEN = re.compile(r"[^\s\[(]+(?:\s*[\[(][^\])]*[\])])?")
_DECIMAL_COMMA = re.compile(r"^\s*[-+]?\d*,\d+(?:[eE][-+]?\d+)?\s*$")
_META_KEYS = ("instrument", "date", "comment")
_NAMES = {"x": "x", "z": "z", "height": "z"}
_DEFAULT_UNIT = {"x": "mm", "z": "um"}


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


def _parse_header(header: str, sep: str | None, *, path: str, line: int) -> list[tuple[str, float]]:
    """Column list ``[(name, um_per_unit), ...]`` from the header line."""
    cells = _split_header(header, sep)
    if cells and _is_number(cells[0].strip()):
        raise InputError(
            "no header line; name the columns and their units first, e.g. 'x [mm],z [um]'",
            path=path,
            where=f"line {line}",
        )
    columns: list[tuple[str, float]] = []
    for k, cell in enumerate(cells, start=1):
        where = f"line {line}, column {k}"
        m = _COLUMN.match(cell)
        name = _NAMES.get(m.group(1).strip().lower()) if m else None
        if m is None or name is None:
            raise InputError(
                f"unknown column {cell.strip()!r}; expected 'x [unit]' and 'z [unit]'",
                path=path,
                where=where,
            )
        if any(name == c for c, _ in columns):
            raise InputError(f"column {name!r} appears twice", path=path, where=where)
        unit = m.group(2)
        if not unit:
            raise InputError(
                f"column {name!r} has no unit; write e.g. '{name} [{_DEFAULT_UNIT[name]}]'",
                path=path,
                where=where,
            )
        c = canonical_unit(unit)
        if c is None:
            known = ", ".join(["µm", *UM_PER_UNIT])
            raise InputError(
                f"unknown length unit {unit!r} (known: {known})", path=path, where=where
            )
        columns.append((name, UM_PER_UNIT[c]))
    if not any(name == "z" for name, _ in columns):
        raise InputError("no 'z [unit]' column in the header", path=path, where=f"line {line}")
    return columns


def parse_delimited(
    text: str,
    *,
    path: str,
    sha256: str,
    fmt: str,
    dx: Length | None = None,
    decimal: str = ".",
) -> Profile:
    """Parse delimited text into a Profile; every error names the line (and column)."""
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
    columns = _parse_header(header, sep, path=path, line=header_line)
    ncol = len(columns)
    x_col = next((k for k, (n, _) in enumerate(columns) if n == "x"), None)

    body = all_lines[header_line:]
    while body and not body[-1].strip():
        body.pop()
    values = _fast_values(body, ncol, sep, decimal)
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
        values = _checked_values(rows, row_lines, ncol, x_col, sep, decimal, path)
    lines = np.asarray(row_lines)
    z_col = next(k for k, (n, _) in enumerate(columns) if n == "z")
    with np.errstate(over="ignore", invalid="ignore"):  # overflow becomes inf, refused below
        z_um = values[:, z_col] * columns[z_col][1]
        x_um = values[:, x_col] * columns[x_col][1] if x_col is not None else None
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


def _fast_values(body: list[str], ncol: int, sep: str | None, decimal: str) -> np.ndarray | None:
    """All cells as floats via numpy's C parser when the block is plain, else None.

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
    try:
        values = np.loadtxt(io.StringIO(block), delimiter=sep, comments=None, ndmin=2)
    except ValueError:
        return None
    if values.shape != (len(body), ncol):
        return None
    return values


def _checked_values(
    rows: list[list[str]],
    row_lines: list[int],
    ncol: int,
    x_col: int | None,
    sep: str | None,
    decimal: str,
    path: str,
) -> np.ndarray:
    """Cell by cell, raising InputError at the first bad cell; empty z cells become NaN."""
    values = np.empty((len(rows), ncol), dtype=np.float64)
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
        for k, cell in enumerate(cells):
            token = cell.strip()
            if not token:
                if k == x_col:
                    raise InputError(
                        "x is missing", path=path, where=f"line {row_lines[i]}, column {k + 1}"
                    )
                values[i, k] = np.nan
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
                values[i, k] = float(token)
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
