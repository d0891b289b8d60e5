"""Delimited text profiles: CSV, TSV and whitespace-separated columns.

Layout::

    # instrument: stylus 2 µm tip          (optional comment lines; these three keys are kept)
    # date: 2026-11-30
    # comment: seal seat, 0° position
    # instrument_serial: 40712             (optional: the instrument's identity, one field a
    # calibration_date: 2026-03-01          line; see _IDENTITY_KEYS, dates as YYYY-MM-DD)
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
import math
import re
from pathlib import Path

import numpy as np

from speccheck._atomic import atomic_write_text
from speccheck.errors import InputError
from speccheck.profile import InstrumentMeta, Profile, SourceInfo
from speccheck.readers._columns import (
    headerless_layout,
    layout_from_header,
    parse_columns_option,
)
from speccheck.readers._common import (
    MAX_POINTS,
    SPACING_TOLERANCE,
    check_text_bytes,
    decode_line,
    profile_from_heights,
    spacing_from_x,
)
from speccheck.units import Length

__all__ = ["parse_delimited", "write_csv"]

_WS_HEADER_TOKEN = re.compile(r"[^\s\[(]+(?:\s*[\[(][^\])]*[\])])?")
_DECIMAL_COMMA = re.compile(r"^\s*[-+]?\d*,\d+(?:[eE][-+]?\d+)?\s*$")
_META_KEYS = ("instrument", "date", "comment")
# `# key: value` comment lines naming the instrument -> InstrumentMeta fields
_IDENTITY_KEYS = {
    "instrument_id": "id",
    "instrument_manufacturer": "manufacturer",
    "instrument_model": "model",
    "instrument_serial": "serial",
    "instrument_version": "version",
    "probing_system": "probing_system",
    "calibration_date": "calibration_date",
}
_ISO_DATE = re.compile(r"\d{4}-\d{2}-\d{2}")


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
    data: bytes,
    *,
    path: str,
    sha256: str,
    fmt: str,
    dx: Length | None = None,
    decimal: str = ".",
    columns: str | None = None,
) -> Profile:
    """Parse delimited text (the file's bytes) into a Profile; every error names the line.

    ``columns`` is the ``--columns`` text (:mod:`speccheck.readers._columns`); without it x and
    z are found by their header names and other columns are kept out. Memory stays near the
    file's size plus 16 bytes per value: comment lines and the header are decoded one by one,
    and a plain data block goes from the bytes to numpy's C parser without a copy of the text;
    any other block is parsed line by line into one array.
    """
    check_text_bytes(data, path=path)
    meta: dict[str, str] = {}
    header, header_line, body_start = _header(data, meta, path)
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
        body_start = _line_start(data, body_start)
    else:
        layout = layout_from_header(cells, chosen, path=path, line=header_line)
    ncol = layout.ncol
    x_col = layout.x[0] if layout.x is not None else None
    used = [layout.z[0]] + ([x_col] if x_col is not None else [])
    body_lines = data.count(b"\n", body_start) + 1
    if body_lines > MAX_POINTS + 1:  # one spare line: a final line break ends the last row
        raise InputError(
            f"{body_lines} lines of data; a profile has at most {MAX_POINTS} points",
            path=path,
            where=f"line {max(header_line, 1)}",
        )
    values = _fast_values(data, body_start, header_line, ncol, used, sep, decimal)
    if values is not None:
        first = header_line + 1

        def line_of(i: int) -> int:
            return first + i
    else:  # comments, blank lines or a bad cell: go line by line and say where
        values, lines = _checked_values(
            data, body_start, header_line, ncol, used, x_col, sep, decimal, path, meta
        )

        def line_of(i: int) -> int:
            return int(lines[i])

    z_col = layout.z[0]
    with np.errstate(over="ignore", invalid="ignore"):  # overflow becomes inf, refused below
        z_um = values[:, 0] * layout.z[1]
        x_um = values[:, 1] * layout.x[1] if layout.x is not None else None
    del values
    dx_um = _spacing(x_um, dx, line_of, header_line, path)
    del x_um
    source = _source(path, sha256, fmt, meta)

    def locate(i: int) -> str:
        return f"line {line_of(i)}, column {z_col + 1}"

    return profile_from_heights(
        z_um, dx_um, source=source, where=f"line {header_line}", locate=locate
    )


def _spacing(x_um, dx: Length | None, line_of, header_line: int, path: str) -> float:
    """Sampling spacing in µm from the x column, checked against ``dx``; or ``dx`` alone."""
    if x_um is None:
        if dx is None:
            raise InputError(
                "the file has no x column; give the sampling spacing, e.g. --dx 0.5um",
                path=path,
                where=f"line {header_line}",
            )
        return dx.um
    bad = np.flatnonzero(~np.isfinite(x_um))
    if bad.size:
        raise InputError(
            "x is not a finite number", path=path, where=f"line {line_of(int(bad[0]))}"
        )
    if x_um.size < 2:
        return math.nan
    dx_um = spacing_from_x(x_um, line_of, path=path)
    if dx is not None and abs(dx.um - dx_um) > SPACING_TOLERANCE * dx_um:
        raise InputError(
            f"the given spacing {dx} disagrees with the x column's spacing {dx_um:g} µm",
            path=path,
            where=f"line {header_line}",
        )
    return dx_um


def _lines(data: bytes, start: int):
    """(line number offset, start, end) of each line from byte ``start``; end excludes EOL."""
    pos, n = start, len(data)
    while pos < n:
        end = data.find(b"\n", pos)
        if end < 0:
            end = n
        yield pos, end
        pos = end + 1


def _line_start(data: bytes, after: int) -> int:
    """Byte offset where the line ending just before ``after`` starts."""
    return data.rfind(b"\n", 0, max(after - 1, 0)) + 1


def _header(data: bytes, meta: dict[str, str], path: str) -> tuple[str, int, int]:
    """(header text, its line number, byte offset of the next line); comments go to ``meta``."""
    for number, (a, b) in enumerate(_lines(data, 0), start=1):
        line = decode_line(data[a:b], path=path, line=number, first=number == 1).strip()
        if line.startswith("#"):
            _comment(line, meta, path=path, number=number)
        elif line:
            return line, number, b + 1
    raise InputError("no header and no data (only comment lines)", path=path)


def _comment(line: str, meta: dict[str, str], *, path: str = "", number: int = 0) -> None:
    """Keep ``# instrument: ...``, ``# date: ...``, ``# comment: ...`` and the instrument's
    identity (``# instrument_serial: ...``, ``# calibration_date: YYYY-MM-DD``, ...); ignore
    other comments."""
    key, colon, value = line[1:].partition(":")
    name = key.strip().lower()
    value = value.strip()
    if not (colon and value):
        return
    if name in _IDENTITY_KEYS:
        if name == "calibration_date" and not _ISO_DATE.fullmatch(value):
            raise InputError(
                f"calibration_date {value!r} is not an ISO 8601 date (YYYY-MM-DD)",
                path=path,
                where=f"line {number}",
            )
        meta[name] = value
    elif name in _META_KEYS:
        meta[name] = f"{meta[name]}; {value}" if name in meta else value


def _source(path: str, sha256: str, fmt: str, meta: dict[str, str]) -> SourceInfo:
    ident = {_IDENTITY_KEYS[k]: meta.pop(k) for k in list(meta) if k in _IDENTITY_KEYS}
    return SourceInfo(
        path=path, sha256=sha256, format=fmt, instrument_meta=InstrumentMeta(**ident), **meta
    )


_NOT_PLAIN = re.compile(rb"[#_\x80-\xff]")


def _fast_values(
    data: bytes,
    start: int,
    skip: int,
    ncol: int,
    used: list[int],
    sep: str | None,
    decimal: str,
) -> np.ndarray | None:
    """The ``used`` columns from byte ``start`` via numpy's C parser when the block is plain.

    Plain: no comment, no ``_`` (float syntax '1_000' that we refuse), ASCII only, no blank line
    inside, every row with ``ncol`` fields. None sends the caller to the line-by-line path,
    which finds and names the first problem. ``skip`` is the number of lines before ``start``.
    """
    end = len(data)
    while end > start and data[end - 1] in b" \t\r\n":
        end -= 1
    if end <= start or _NOT_PLAIN.search(data, start) is not None:
        return None
    if decimal == ",":
        block = io.BytesIO(data[start:end].replace(b",", b"."))
        skip = 0
    elif sep != "," and data.find(b",", start) >= 0:
        return None
    else:
        block = io.BytesIO(data)
    rows = data.count(b"\n", start, end) + 1
    # usecols lets numpy skip the columns kept out, but then it no longer checks that every row
    # has the header's fields: with a separator, count them; else parse every column.
    narrow = ncol > len(used) and sep is not None
    if narrow:
        assert sep is not None
        if data.count(sep.encode(), start, end) != (ncol - 1) * rows:
            return None
    try:
        values = np.loadtxt(
            block,
            delimiter=sep,
            comments=None,
            ndmin=2,
            skiprows=skip,
            max_rows=rows,
            usecols=used if narrow else None,
            encoding="ascii",
        )
    except ValueError:
        return None
    if values.shape != (rows, len(used) if narrow else ncol):
        return None
    return values if narrow else values[:, used]


def _checked_values(
    data: bytes,
    start: int,
    header_line: int,
    ncol: int,
    used: list[int],
    x_col: int | None,
    sep: str | None,
    decimal: str,
    path: str,
    meta: dict[str, str],
) -> tuple[np.ndarray, np.ndarray]:
    """(the ``used`` columns, line numbers) line by line, raising InputError at the first bad
    cell. Empty z cells become NaN; comment lines go to ``meta``; blank lines are skipped;
    columns kept out are not read."""
    bound = data.count(b"\n", start) + 1
    values = np.empty((bound, len(used)), dtype=np.float64)
    lines = np.empty(bound, dtype=np.int64)
    k = 0
    for number, (a, b) in enumerate(_lines(data, start), start=header_line + 1):
        line = decode_line(data[a:b], path=path, line=number, first=number == 1).strip()
        if line.startswith("#"):
            _comment(line, meta, path=path, number=number)
        elif line:
            cells = line.split(sep) if sep is not None else line.split()
            values[k] = _row(cells, number, ncol, used, x_col, sep, decimal, path)
            lines[k] = number
            k += 1
    if k == 0:
        raise InputError("header but no data rows", path=path, where=f"line {header_line}")
    return values[:k], lines[:k]


def _row(
    cells: list[str],
    number: int,
    ncol: int,
    used: list[int],
    x_col: int | None,
    sep: str | None,
    decimal: str,
    path: str,
) -> list[float]:
    """The ``used`` cells of one data line as floats (NaN for an empty z cell)."""
    if len(cells) != ncol:
        hint = ""
        if sep == "," and len(cells) == 2 * ncol:
            hint = " (decimal commas? use ';' between fields and decimal ',')"
        raise InputError(
            f"{len(cells)} fields, the header names {ncol}{hint}",
            path=path,
            where=f"line {number}",
        )
    out: list[float] = []
    for k in used:
        token = cells[k].strip()
        where = f"line {number}, column {k + 1}"
        if not token:
            if k == x_col:
                raise InputError("x is missing", path=path, where=where)
            out.append(math.nan)
            continue
        if decimal == ",":
            token = token.replace(",", ".")
        elif "," in token and _DECIMAL_COMMA.match(token):
            raise InputError(
                f"decimal comma in {token!r}; read the file with decimal ','",
                path=path,
                where=where,
            )
        try:
            if "_" in token:
                raise ValueError(token)
            out.append(float(token))
        except ValueError:
            raise InputError(
                f"not a number: {cells[k].strip()!r}", path=path, where=where
            ) from None
    return out


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
    for key, attr in _IDENTITY_KEYS.items():
        if value := getattr(profile.source.instrument_meta, attr):
            out.append(f"# {key}: {' '.join(str(value).split())}")
    out.append("x [mm],z [um]")
    x_mm = np.arange(profile.n_points) * profile.dx_um / 1e3
    out.extend(f"{x:.12g},{z!r}" for x, z in zip(x_mm.tolist(), profile.z_um.tolist(), strict=True))
    atomic_write_text(Path(path), "\n".join(out) + "\n")
