"""Fingerprints of measured heights: the same profile is not counted twice.

The fingerprint is the SHA-256 of a canonical form of what the reader decoded, independent of
the file format: the point count (uint64 LE), the spacing in metres and every height in metres,
each rounded to 1e-13 m (0.1 pm, far below any instrument's resolution) and written as float64
little-endian, NaN (an unmeasured point) as one fixed NaN. A CSV written from an X3P file's
decoded heights at full precision (Python ``repr``) therefore has the X3P's fingerprint; a CSV
rounded to fewer digits than the heights carry is a different data set and is not caught.
"""

from __future__ import annotations

import hashlib

import numpy as np

from speccheck.profile import Profile

__all__ = ["height_fingerprint", "duplicate_pairs", "QUANTUM_M"]

QUANTUM_M = 1e-13  # rounding step of the canonical form, metres


def height_fingerprint(profile: Profile) -> str:
    """SHA-256 (hex) of the canonical heights, spacing and length of ``profile``."""
    z_m = np.round(np.asarray(profile.z_um, dtype=np.float64) * 1e-6 / QUANTUM_M) * QUANTUM_M
    z_m = np.where(np.isnan(z_m), np.nan, z_m + 0.0)  # one NaN, and -0.0 as 0.0
    dx_m = round(profile.dx_um * 1e-6 / QUANTUM_M) * QUANTUM_M + 0.0
    h = hashlib.sha256()
    h.update(np.uint64(z_m.size).astype("<u8").tobytes())
    h.update(np.float64(dx_m).astype("<f8").tobytes())
    h.update(z_m.astype("<f8").tobytes())
    return h.hexdigest()


def duplicate_pairs(fingerprints: list[str]) -> list[tuple[int, int]]:
    """(first, repeat) index pairs of equal fingerprints, in input order."""
    seen: dict[str, int] = {}
    pairs = []
    for i, f in enumerate(fingerprints):
        if f in seen:
            pairs.append((seen[f], i))
        else:
            seen[f] = i
    return pairs
