"""Helpers shared by the readers: reading bytes, hashing, decoding text, building a Profile."""

from __future__ import annotations

import hashlib
from pathlib import Path

import numpy as np

from speccheck._atomic import read_bounded
from speccheck.errors import InputError
from speccheck.profile import Profile, SourceInfo

__all__ = [
    "MIN_POINTS",
    "SPACING_TOLERANCE",
    "MAX_TEXT_BYTES",
    "read_source_bytes",
    "decode_text",
    "profile_from_heights",
    "spacing_from_x",
]

# A file with fewer points than this is refused: no parameter of speccheck can be evaluated on
# it (even one sampling length at the finest ISO 3274 setting, 0.08 mm at 0.5 µm, is 160 points).
MIN_POINTS = 16

# Largest allowed deviation of any x step from the mean step, as a fraction of the mean step.
# Common practice, no source: stylus instruments sample at a fixed spacing; x columns written
# with enough digits differ from it only by rounding.
SPACING_TOLERANCE = 0.01

# Text files larger than this are refused before being read into memory (1 GiB).
MAX_TEXT_BYTES = 1 << 30


def read_source_bytes(path: str | Path, *, limit: int = MAX_TEXT_BYTES) -> tuple[bytes, str]:
    """The exact bytes of ``path`` and their SHA-256 (hex); InputError if unreadable.

    Folders, FIFOs and devices are refused before opening, and files larger than ``limit``
    before reading (see :func:`speccheck._atomic.read_bounded`).
    """
    data = read_bounded(path, limit=limit, role="profile", error=InputError)
    return data, hashlib.sha256(data).hexdigest()


def decode_text(data: bytes, *, path: str) -> str:
    """Decode a text file (UTF-8, optional BOM); refuse binary content naming the line.

    A lone Latin-1 micro sign (byte 0xB5, as written by some Windows software in ``[µm]``) is
    accepted; any other byte that is not UTF-8 is refused.
    """
    if not data.strip():
        raise InputError("file is empty", path=path)
    nul = data.find(b"\x00")
    if nul >= 0:
        line = data.count(b"\n", 0, nul) + 1
        raise InputError("binary data (NUL byte) in a text file", path=path, where=f"line {line}")
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        non_ascii = {b for b in data if b >= 0x80}
        if non_ascii == {0xB5}:
            text = data.decode("latin-1")
        else:
            line = data.count(b"\n", 0, exc.start) + 1
            raise InputError(
                f"not UTF-8 text (byte 0x{data[exc.start]:02X}); is this a binary file?",
                path=path,
                where=f"line {line}",
            ) from exc
    return text


def spacing_from_x(x_um: np.ndarray, lines: np.ndarray, *, path: str) -> float:
    """Mean spacing of strictly increasing, uniformly spaced positions ``x_um``.

    Raises InputError naming the line of the first point that repeats, goes backwards, or is
    off the uniform grid by more than :data:`SPACING_TOLERANCE` of the mean step. The mean step
    is rounded to 10 significant digits, the precision x columns are written with.
    """
    steps = np.diff(x_um)
    bad = np.flatnonzero(steps <= 0)
    if bad.size:
        i = int(bad[0]) + 1
        what = "repeats" if steps[i - 1] == 0 else "goes backwards"
        raise InputError(
            f"x {what} (x = {x_um[i] / 1e3:.6g} mm after {x_um[i - 1] / 1e3:.6g} mm); "
            "x must increase at every point",
            path=path,
            where=f"line {int(lines[i])}",
        )
    mean = (x_um[-1] - x_um[0]) / (x_um.size - 1)
    off = np.flatnonzero(np.abs(steps - mean) > SPACING_TOLERANCE * mean)
    if off.size:
        i = int(off[0]) + 1
        raise InputError(
            f"x spacing {steps[i - 1]:.6g} µm differs from the mean spacing {mean:.6g} µm by more "
            f"than {SPACING_TOLERANCE:.0%}; speccheck needs uniformly sampled profiles",
            path=path,
            where=f"line {int(lines[i])}",
        )
    return float(f"{mean:.10g}")


def profile_from_heights(
    z_um: np.ndarray,
    dx_um: float,
    *,
    source: SourceInfo,
    valid: np.ndarray | None = None,
    where: str | None = None,
) -> Profile:
    """Check point count and validity, then build the Profile."""
    path = source.path
    z = np.asarray(z_um, dtype=np.float64)
    if z.size == 0:
        raise InputError("no data points", path=path, where=where)
    if z.size < MIN_POINTS:
        raise InputError(
            f"only {z.size} points; a profile needs at least {MIN_POINTS}", path=path, where=where
        )
    if not (np.isfinite(dx_um) and dx_um > 0):
        raise InputError(f"sampling spacing {dx_um!r} µm is not positive", path=path, where=where)
    ok = np.isfinite(z) if valid is None else (np.asarray(valid, dtype=bool) & np.isfinite(z))
    if not ok.any():
        raise InputError(
            f"all {z.size} points are invalid (no measured height)", path=path, where=where
        )
    return Profile(z_um=z, dx_um=float(dx_um), valid=ok, source=source)
