"""Helpers shared by the readers: reading bytes, hashing, decoding text, building a Profile."""

from __future__ import annotations

import hashlib
import math
from collections.abc import Callable
from pathlib import Path

import numpy as np

from speccheck._atomic import read_bounded
from speccheck.errors import InputError
from speccheck.profile import Profile, SourceInfo

Locate = Callable[[int], str]

__all__ = [
    "MIN_POINTS",
    "MAX_POINTS",
    "SPACING_TOLERANCE",
    "MAX_TEXT_BYTES",
    "MAX_ABS_HEIGHT_UM",
    "MIN_SPACING_UM",
    "MAX_SPACING_UM",
    "MIN_Z_SCALE_M",
    "MAX_Z_SCALE_M",
    "read_source_bytes",
    "check_scale",
    "check_spacing",
    "decode_text",
    "decode_line",
    "check_text_bytes",
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

# Budget. A profile has at most MAX_POINTS points (2·10^7: a 200 mm trace at 0.01 µm, beyond
# any stylus or optical profiler's single trace; common practice, no source). Text files larger
# than MAX_TEXT_BYTES (1 GiB: 2·10^7 lines of x and z at full float precision) are refused
# before being read. The budget for memory is stated in the README and measured by
# bench/memory_bench.py.
MAX_POINTS = 20_000_000
MAX_TEXT_BYTES = 1 << 30

# Physical plausibility. A roughness or waviness profile never spans more than ±10 mm of height
# (stylus instruments measure a few mm at most; common practice, no source); a height beyond it
# comes from a wrong unit or scale in the file. Sampling spacings outside 0.1 nm .. 1 mm come
# from no surface-texture instrument (the finest optical ones resolve about 0.1 nm laterally at
# best, from memory; ISO 3274's coarsest spacing is 5 µm).
MAX_ABS_HEIGHT_UM = 10_000.0
MIN_SPACING_UM = 1e-4
MAX_SPACING_UM = 1000.0
# Height per stored unit, in metres (X3P Z increment, SDF Zscale): 1 m for heights stored in
# metres as floats, down to 1 fm per count for integers (no instrument resolves finer).
MIN_Z_SCALE_M = 1e-15
MAX_Z_SCALE_M = 1.0


def read_source_bytes(path: str | Path, *, limit: int = MAX_TEXT_BYTES) -> tuple[bytes, str]:
    """The exact bytes of ``path`` and their SHA-256 (hex); InputError if unreadable.

    Folders, FIFOs and devices are refused before opening, and files larger than ``limit``
    before reading (see :func:`speccheck._atomic.read_bounded`).
    """
    data = read_bounded(path, limit=limit, role="profile", error=InputError)
    return data, hashlib.sha256(data).hexdigest()


def check_text_bytes(data: bytes, *, path: str) -> None:
    """Refuse an empty text file, or one holding a NUL byte (binary data), naming the line."""
    if not data or data.isspace():
        raise InputError("file is empty", path=path)
    nul = data.find(b"\x00")
    if nul >= 0:
        line = data.count(b"\n", 0, nul) + 1
        raise InputError("binary data (NUL byte) in a text file", path=path, where=f"line {line}")


def decode_line(raw: bytes, *, path: str, line: int, first: bool = False) -> str:
    """One line of a text file as text: UTF-8 (a BOM on the first line dropped), or Latin-1
    when its only non-ASCII byte is the micro sign 0xB5; else InputError naming the line."""
    try:
        return raw.decode("utf-8-sig" if first else "utf-8")
    except UnicodeDecodeError as exc:
        if {b for b in raw if b >= 0x80} == {0xB5}:
            return raw.decode("latin-1")
        raise InputError(
            f"not UTF-8 text (byte 0x{raw[exc.start]:02X}); is this a binary file?",
            path=path,
            where=f"line {line}",
        ) from exc


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


def spacing_from_x(x_um: np.ndarray, line_of: Callable[[int], int], *, path: str) -> float:
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
            where=f"line {line_of(i)}",
        )
    mean = (x_um[-1] - x_um[0]) / (x_um.size - 1)
    off = np.flatnonzero(np.abs(steps - mean) > SPACING_TOLERANCE * mean)
    if off.size:
        i = int(off[0]) + 1
        raise InputError(
            f"x spacing {steps[i - 1]:.6g} µm differs from the mean spacing {mean:.6g} µm by more "
            f"than {SPACING_TOLERANCE:.0%}; speccheck needs uniformly sampled profiles",
            path=path,
            where=f"line {line_of(i)}",
        )
    return float(f"{mean:.10g}")


def check_scale(
    value: float, *, what: str, unit: str, lo: float, hi: float, path: str, where: str | None
) -> float:
    """``value`` if it is a finite number within [lo, hi], else InputError naming ``what``.

    A zero, negative, infinite or absurd scale in a file would turn every height or position into
    a meaningless number (a zero height scale reads as a perfectly flat, conforming profile).
    """
    if not (math.isfinite(value) and value > 0):
        raise InputError(
            f"{what} {value!r} {unit} is not a positive finite number; the file's scale is "
            "meaningless",
            path=path,
            where=where,
        )
    if not lo <= value <= hi:
        raise InputError(
            f"{what} {value:g} {unit} is outside the physically plausible {lo:g} .. {hi:g} {unit}",
            path=path,
            where=where,
        )
    return value


def check_spacing(dx_um: float, *, path: str, where: str | None) -> float:
    """``dx_um`` if within :data:`MIN_SPACING_UM` .. :data:`MAX_SPACING_UM`, else InputError."""
    return check_scale(
        dx_um,
        what="sampling spacing",
        unit="µm",
        lo=MIN_SPACING_UM,
        hi=MAX_SPACING_UM,
        path=path,
        where=where,
    )


def _check_heights(
    z: np.ndarray, ok: np.ndarray, *, path: str, where: str | None, locate: Locate | None
) -> None:
    """Refuse infinite heights and heights beyond :data:`MAX_ABS_HEIGHT_UM`, naming the point."""
    with np.errstate(invalid="ignore"):
        bad = np.flatnonzero(ok & (np.isinf(z) | (np.abs(z) > MAX_ABS_HEIGHT_UM)))
    if not bad.size:
        return
    i = int(bad[0])
    place = locate(i) if locate is not None else f"{where + ', ' if where else ''}point {i + 1}"
    if np.isinf(z[i]):
        message = (
            "height is infinite or too large for a number (such as 'inf' or '1e999'); "
            "mark a point that was not measured as nan or an empty cell"
        )
    else:
        message = (
            f"height {z[i]:.6g} µm is beyond the ±{MAX_ABS_HEIGHT_UM / 1e3:g} mm a surface "
            "profile can have; is the file's unit or height scale wrong?"
        )
    raise InputError(message, path=path, where=place)


def profile_from_heights(
    z_um: np.ndarray,
    dx_um: float,
    *,
    source: SourceInfo,
    valid: np.ndarray | None = None,
    where: str | None = None,
    locate: Locate | None = None,
) -> Profile:
    """Check point count, spacing, heights and validity, then build the Profile.

    ``locate(i)`` names the place of point ``i`` in the file (``"line 12, column 2"``) for
    errors about one point; without it the point is named by its number.
    """
    path = source.path
    z = np.asarray(z_um, dtype=np.float64)
    if z.size == 0:
        raise InputError("no data points", path=path, where=where)
    if z.size > MAX_POINTS:
        raise InputError(
            f"{z.size} points; a profile has at most {MAX_POINTS}", path=path, where=where
        )
    if z.size < MIN_POINTS:
        raise InputError(
            f"only {z.size} points; a profile needs at least {MIN_POINTS}", path=path, where=where
        )
    check_spacing(dx_um, path=str(path), where=where)
    valid_in = np.ones(z.size, dtype=bool) if valid is None else np.asarray(valid, dtype=bool)
    _check_heights(z, valid_in, path=str(path), where=where, locate=locate)
    ok = valid_in & np.isfinite(z)
    if not ok.any():
        raise InputError(
            f"all {z.size} points are invalid (no measured height)", path=path, where=where
        )
    return Profile(z_um=z, dx_um=float(dx_um), valid=ok, source=source)
