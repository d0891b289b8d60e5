"""ISO 25178-71 SDF files in ASCII form holding one profile: reader and writer.

Layout: header lines ``Key = value`` ending with a line ``*``; the heights (whitespace
separated, any number per line) ending with ``*``; an optional trailer of ``Key = value`` lines
ending with ``*``. Version starts with ``a`` (ASCII); NumProfiles must be 1; height in metres =
stored value × Zscale; the spacing is Xscale metres. ``nan`` marks an invalid point (speccheck's
convention; the standard has no missing-value marker we rely on).
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np

from speccheck._atomic import atomic_write_text
from speccheck.errors import InputError
from speccheck.profile import InstrumentMeta, Profile, SourceInfo
from speccheck.readers._common import (
    MAX_POINTS,
    MAX_Z_SCALE_M,
    MIN_Z_SCALE_M,
    check_scale,
    check_spacing,
    profile_from_heights,
)

__all__ = ["parse_sdf", "write_sdf"]

_REQUIRED = ("Version", "NumPoints", "NumProfiles", "Xscale", "Zscale")
_UM_PER_M = 1e6


def _date(text: str | None) -> str | None:
    """DDMMYYYYHHMM -> ISO 8601 ``YYYY-MM-DDTHH:MM``; other text unchanged."""
    if text and re.fullmatch(r"\d{12}", text):
        return f"{text[4:8]}-{text[2:4]}-{text[0:2]}T{text[8:10]}:{text[10:12]}"
    return text


def parse_sdf(text: str, *, path: str, sha256: str) -> Profile:
    """Parse an ASCII SDF profile; every error names the line."""
    lines = text.splitlines()
    header: dict[str, tuple[str, int]] = {}
    i = 0
    while i < len(lines) and lines[i].strip() != "*":
        line = lines[i].strip()
        if line:
            key, eq, value = line.partition("=")
            if not eq:
                raise InputError(
                    "expected 'Key = value' in the SDF header", path=path, where=f"line {i + 1}"
                )
            header[key.strip()] = (value.strip(), i + 1)
        i += 1
    if i == len(lines):
        raise InputError("SDF header not closed by a line '*'", path=path)
    for key in _REQUIRED:
        if key not in header:
            raise InputError(f"SDF header lacks {key}", path=path, where="header")
    version, vline = header["Version"]
    if not version.lower().startswith("a"):
        raise InputError(
            f"Version {version!r}: only ASCII SDF (Version a...) is supported",
            path=path,
            where=f"line {vline}",
        )

    def number(key: str, kind=float):
        value, line = header[key]
        try:
            return kind(value)
        except ValueError:
            raise InputError(
                f"{key} is not a number: {value!r}", path=path, where=f"line {line}"
            ) from None

    n_profiles = number("NumProfiles", int)
    if n_profiles != 1:
        raise InputError(
            f"NumProfiles is {n_profiles}; a profile file has exactly 1",
            path=path,
            where=f"line {header['NumProfiles'][1]}",
        )
    n_points = number("NumPoints", int)
    if not 1 <= n_points <= MAX_POINTS:
        raise InputError(
            f"NumPoints {n_points} is outside 1 .. {MAX_POINTS} points",
            path=path,
            where=f"line {header['NumPoints'][1]}",
        )
    x_scale_m, z_scale_m = number("Xscale"), number("Zscale")
    check_spacing(x_scale_m * _UM_PER_M, path=path, where=f"line {header['Xscale'][1]}")
    check_scale(
        z_scale_m,
        what="Zscale",
        unit="m",
        lo=MIN_Z_SCALE_M,
        hi=MAX_Z_SCALE_M,
        path=path,
        where=f"line {header['Zscale'][1]}",
    )

    values = np.empty(n_points)  # never more than NumPoints heights are kept
    count = 0
    j = i + 1
    closed = False
    while j < len(lines):
        line = lines[j].strip()
        if line == "*":
            closed = True
            break
        for k, token in enumerate(line.split(), start=1):
            if count == n_points:
                raise InputError(
                    f"more heights than NumPoints ({n_points})",
                    path=path,
                    where=f"line {j + 1}, column {k}",
                )
            try:
                values[count] = float(token)
            except ValueError:
                raise InputError(
                    f"not a number: {token!r}", path=path, where=f"line {j + 1}, column {k}"
                ) from None
            count += 1
        j += 1
    if not closed:
        raise InputError("SDF data not closed by a line '*'", path=path, where=f"line {j}")
    if count != n_points:
        raise InputError(
            f"{count} heights where NumPoints is {n_points}",
            path=path,
            where=f"line {header['NumPoints'][1]}",
        )
    trailer: dict[str, str] = {}
    for line in lines[j + 1 :]:
        key, eq, value = line.strip().partition("=")
        if eq:
            trailer[key.strip().lower()] = value.strip()
    manufacturer = header.get("ManufacID", (None, 0))[0]
    source = SourceInfo(
        path=path,
        sha256=sha256,
        format="sdf",
        instrument=manufacturer or None,
        # ISO 25178-71 names the instrument only by ManufacID (no serial, no calibration date)
        instrument_meta=InstrumentMeta(manufacturer=manufacturer or None),
        date=_date(header.get("CreateDate", (None, 0))[0]),
        comment=trailer.get("comment"),
    )
    with np.errstate(over="ignore"):  # overflow becomes inf, refused by profile_from_heights
        z_um = values * (z_scale_m * _UM_PER_M)

    def locate(k: int) -> str:
        return _value_place(lines, i + 1, k)

    return profile_from_heights(
        z_um, x_scale_m * _UM_PER_M, source=source, where="header", locate=locate
    )


def _value_place(lines: list[str], first: int, k: int) -> str:
    """``line L, column C`` of the k-th (0-based) height of the data block starting at ``first``."""
    seen = 0
    for j in range(first, len(lines)):
        tokens = lines[j].split()
        if seen + len(tokens) > k:
            return f"line {j + 1}, column {k - seen + 1}"
        seen += len(tokens)
    return f"height {k + 1}"


def write_sdf(path: str | Path, profile: Profile) -> None:
    """Write ``profile`` as an ASCII SDF file (ISO 25178-71), atomically.

    Heights are written in micrometres with ``Zscale = 1e-06``, each with the shortest text that
    reads back to the same float64; invalid points are written ``nan``.
    """
    src = profile.source
    lines = [
        "Version = aISO-1.0",
        f"ManufacID = {' '.join((src.instrument or 'speccheck').split())}",
        f"NumPoints = {profile.n_points}",
        "NumProfiles = 1",
        f"Xscale = {profile.dx_um / _UM_PER_M!r}",
        "Yscale = 0",
        "Zscale = 1e-06",
        "Zresolution = -1",
        "Compression = 0",
        "DataType = 7",
        "CheckType = 0",
        "*",
    ]
    lines.extend(repr(z) for z in profile.z_um.tolist())
    lines.append("*")
    if src.comment:
        lines.extend([f"Comment = {' '.join(src.comment.split())}", "*"])
    atomic_write_text(Path(path), "\n".join(lines) + "\n")
