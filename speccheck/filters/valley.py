"""ISO 13565-1 reference line for surfaces with deep valleys (plateau-honed, porous)."""

from __future__ import annotations

import numpy as np

from speccheck.filters.gaussian import gaussian_mean_line

__all__ = ["valley_suppressed_mean_line"]


def valley_suppressed_mean_line(z_um, *, dx_um: float, cutoff_um: float) -> np.ndarray:
    """Valley-suppressed reference line (ISO 13565-1:1996, clause from memory: 5).

    1. Gaussian mean line of the primary profile (ISO 16610-21, λc).
    2. Every height below that line is replaced by the line (valleys cut off).
    3. The Gaussian mean line of the profile from step 2 is the reference line.

    Parameters
    ----------
    z_um:
        Primary profile heights in µm (form removed).
    dx_um, cutoff_um:
        Sampling spacing and λc, both in µm.

    Returns
    -------
    ndarray
        Reference line in µm; the roughness profile for ISO 13565-2 is z − reference line.

    References
    ----------
    ISO 13565-1:1996 Surfaces having stratified functional properties -- Part 1: Filtering and
    general measurement conditions.
    """
    z = np.asarray(z_um, dtype=np.float64)
    first = gaussian_mean_line(z, dx_um=dx_um, cutoff_um=cutoff_um)
    clipped = np.maximum(z, first)
    return gaussian_mean_line(clipped, dx_um=dx_um, cutoff_um=cutoff_um)
