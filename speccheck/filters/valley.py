"""ISO 13565-1 reference line for surfaces with deep valleys (plateau-honed, porous)."""

from __future__ import annotations

import numpy as np

from speccheck.errors import SpeccheckError
from speccheck.filters.gaussian import gaussian_mean_line

__all__ = ["valley_suppressed_mean_line"]


def valley_suppressed_mean_line(
    z_um, *, dx_um: float, cutoff_um: float, mean_line_um=None
) -> np.ndarray:
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
    mean_line_um:
        The step-1 Gaussian mean line if the caller has it already (same z, dx and λc);
        saves one filtering. Computed when None.

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
    if mean_line_um is None:
        first = gaussian_mean_line(z, dx_um=dx_um, cutoff_um=cutoff_um)
    else:
        first = np.asarray(mean_line_um, dtype=np.float64)
        if first.shape != z.shape:
            raise SpeccheckError(
                f"mean_line_um must have the shape of z_um {z.shape}, got {first.shape}"
            )
    clipped = np.maximum(z, first)
    return gaussian_mean_line(clipped, dx_um=dx_um, cutoff_um=cutoff_um)
