"""Measured-profile files in, :class:`~speccheck.profile.Profile` out; one module per format.

=========  ==========================  ======================================
format     extensions                  module
=========  ==========================  ======================================
``csv``    ``.csv``                    :mod:`speccheck.readers.delimited`
``tsv``    ``.tsv``                    :mod:`speccheck.readers.delimited`
``txt``    ``.txt``, ``.dat``          :mod:`speccheck.readers.delimited`
``x3p``    ``.x3p``                    :mod:`speccheck.readers.x3p` (ISO 25178-72)
``sdf``    ``.sdf``                    :mod:`speccheck.readers.sdf` (ISO 25178-71)
=========  ==========================  ======================================

Every problem with a file is an :class:`~speccheck.errors.InputError` naming the file and the
place in it. ``Profile.source`` carries the path, the SHA-256 of the exact bytes read, the
format, and instrument, date and comment where the file has them.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from speccheck.errors import InputError, SpeccheckError
from speccheck.profile import Profile, fill_dropouts
from speccheck.readers._common import (
    MAX_ABS_HEIGHT_UM,
    MAX_POINTS,
    MAX_SPACING_UM,
    MIN_POINTS,
    MIN_SPACING_UM,
    SPACING_TOLERANCE,
    decode_text,
    read_source_bytes,
)
from speccheck.readers.delimited import parse_delimited, write_csv
from speccheck.readers.sdf import parse_sdf, write_sdf
from speccheck.readers.x3p import (
    MAX_COMPRESSION_RATIO,
    MAX_MAIN_XML_BYTES,
    MAX_UNCOMPRESSED_BYTES,
    parse_x3p,
    write_x3p,
)
from speccheck.units import Length, parse_length

__all__ = [
    "FORMATS",
    "MIN_POINTS",
    "MAX_ABS_HEIGHT_UM",
    "MIN_SPACING_UM",
    "MAX_SPACING_UM",
    "SPACING_TOLERANCE",
    "MAX_UNCOMPRESSED_BYTES",
    "MAX_COMPRESSION_RATIO",
    "MAX_MAIN_XML_BYTES",
    "MAX_POINTS",
    "read_profile",
    "write_csv",
    "write_x3p",
    "write_sdf",
    "profile_summary",
]

FORMATS: dict[str, str] = {
    ".csv": "csv",
    ".tsv": "tsv",
    ".txt": "txt",
    ".dat": "txt",
    ".x3p": "x3p",
    ".sdf": "sdf",
}


def read_profile(
    path: str | Path,
    *,
    fmt: str | None = None,
    dx: Length | str | None = None,
    decimal: str = ".",
    columns: str | None = None,
) -> Profile:
    """Read a measured profile file.

    Parameters
    ----------
    path:
        The file.
    fmt:
        ``"csv"``, ``"tsv"``, ``"txt"``, ``"x3p"`` or ``"sdf"``; default from the extension.
    dx:
        Sampling spacing for text files with only a z column: a :class:`~speccheck.units.Length`
        or text such as ``"0.5um"``.
    decimal:
        ``"."`` (default) or ``","`` for text files written with decimal commas.
    columns:
        Text files only: which columns hold x and z, e.g. ``"x=1[mm],z=3[um]"`` (see
        :mod:`speccheck.readers._columns`); default by the header's names.

    Returns
    -------
    Profile
        Heights in µm, spacing in µm, ``source`` filled in; invalid points flagged, not filled
        (see :func:`speccheck.profile.fill_dropouts`).

    Raises
    ------
    InputError
        One line naming the file and the place (line, column, archive entry).
    """
    name = str(path)
    if fmt is None:
        fmt = FORMATS.get(Path(name).suffix.lower())
        if fmt is None:
            known = ", ".join(FORMATS)
            raise InputError(
                f"unknown file extension {Path(name).suffix!r} (known: {known}); give the format",
                path=name,
            )
    elif fmt not in set(FORMATS.values()):
        raise InputError(f"unknown format {fmt!r}", path=name)
    if decimal not in (".", ","):
        raise InputError(f"decimal separator must be '.' or ',', got {decimal!r}", path=name)
    if isinstance(dx, str):
        try:
            dx = parse_length(dx)
        except SpeccheckError as exc:
            raise InputError(f"--dx: {exc.message}", path=name) from exc
    if dx is not None and not dx.um > 0:
        raise InputError(f"--dx must be positive, got {dx}", path=name)

    if columns is not None and fmt in ("x3p", "sdf"):
        raise InputError(f"--columns applies to text files, not {fmt}", path=name)
    try:
        data, sha256 = read_source_bytes(path)
        if fmt == "x3p":
            return parse_x3p(data, path=name, sha256=sha256)
        if fmt == "sdf":
            return parse_sdf(decode_text(data, path=name), path=name, sha256=sha256)
        return parse_delimited(
            data, path=name, sha256=sha256, fmt=fmt, dx=dx, decimal=decimal, columns=columns
        )
    except MemoryError:
        raise InputError(
            "not enough memory to read this file; see the README for the memory a profile needs",
            path=name,
        ) from None


def profile_summary(profile: Profile) -> dict[str, Any]:
    """What a profile file holds, as plain JSON-ready values (used by ``speccheck info``).

    Keys: ``path``, ``format``, ``sha256``, ``points``, ``spacing_um``, ``length_mm``,
    ``z_range_um`` (highest minus lowest valid height), ``instrument``, ``date``, ``comment``,
    ``instrument_identity`` (the instrument fields the file states)
    and ``dropouts`` (``invalid_points``, ``interpolated_points``, ``runs``,
    ``longest_run_points``, ``refused_gaps_mm`` as [start, end] pairs, ``usable``) as
    :func:`~speccheck.profile.fill_dropouts` would treat them.
    """
    import numpy as np

    filled = fill_dropouts(profile)
    d = filled.dropouts
    z = profile.z_um[profile.valid]
    src = profile.source
    return {
        "path": src.path,
        "format": src.format,
        "sha256": src.sha256,
        "points": profile.n_points,
        "spacing_um": profile.dx_um,
        "length_mm": profile.length_mm,
        "z_range_um": float(np.max(z) - np.min(z)) if z.size else None,
        "instrument": src.instrument,
        "date": src.date,
        "comment": src.comment,
        "instrument_identity": src.instrument_meta.stated(),
        "dropouts": {
            "invalid_points": d.invalid_points,
            "interpolated_points": d.interpolated_points,
            "runs": d.runs,
            "longest_run_points": d.longest_run_points,
            "refused_gaps_mm": [list(g) for g in d.refused_gaps_mm],
            "usable": d.usable,
        },
    }
