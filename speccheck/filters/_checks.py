"""Argument checks shared by the filters: one message style, naming the argument and value."""

from __future__ import annotations

import numpy as np

from speccheck.errors import SpeccheckError

__all__ = ["as_heights", "positive_length"]


def as_heights(z_um, *, name: str = "z_um", min_points: int = 2) -> np.ndarray:
    """``z_um`` as a 1-D float64 array of finite values; SpeccheckError otherwise."""
    z = np.asarray(z_um, dtype=np.float64)
    if z.ndim != 1:
        raise SpeccheckError(f"{name} must be one-dimensional, got shape {z.shape}")
    if z.size < min_points:
        raise SpeccheckError(f"{name} needs at least {min_points} points, got {z.size}")
    if not np.all(np.isfinite(z)):
        bad = int(np.flatnonzero(~np.isfinite(z))[0])
        raise SpeccheckError(f"{name} has a non-finite height at index {bad} (fill dropouts first)")
    return z


def positive_length(value, name: str) -> float:
    """``value`` as a positive finite float; SpeccheckError naming ``name`` otherwise."""
    if isinstance(value, bool):
        raise SpeccheckError(f"{name} must be a positive length, got {value!r}")
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise SpeccheckError(f"{name} must be a positive length, got {value!r}") from None
    if not (v > 0.0 and np.isfinite(v)):
        raise SpeccheckError(f"{name} must be a positive length, got {value!r}")
    return v
