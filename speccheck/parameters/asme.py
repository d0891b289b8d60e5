"""ASME B46.1 parameters: section means, largest peak-to-valley and peak count.

ASME B46.1-2019 section 1 (clause numbers from memory) averages some heights over the sampling
lengths of the evaluation length (Rpm, Rvm) and takes others over the whole evaluation length.
Rp, Rv, Rt in the ASME sense over the evaluation length are ``max Z``, ``−min Z`` and Rt of the
whole evaluation length and are not repeated here.
"""

from __future__ import annotations

import numpy as np

from speccheck.parameters.amplitude import as_heights

__all__ = [
    "DEFAULT_PEAK_BAND_UM",
    "mean_peak_height",
    "mean_valley_depth",
    "largest_peak_to_valley",
    "peak_count_per_cm",
]

#: Half-width c of the peak-count band ±c about the mean line. ASME B46.1 leaves c to the user;
#: 0.5 µm is our default (common practice, no source) and is stated wherever Rpc is reported.
DEFAULT_PEAK_BAND_UM = 0.5


def _rows(z_um) -> np.ndarray:
    z = as_heights(z_um)
    return z[None, :] if z.ndim == 1 else z


def mean_peak_height(z_um) -> float:
    """Mean of the section peak heights Rpm (ASME B46.1-2019 1-4.1; from memory).

    Parameters
    ----------
    z_um : array_like, 2-D
        Sections as rows, heights from the mean line in µm.

    Returns
    -------
    float
        Mean over the sections of max Z, µm (equals the ISO 4287 Rp section mean).
    """
    return float(np.mean(np.max(_rows(z_um), axis=-1)))


def mean_valley_depth(z_um) -> float:
    """Mean of the section valley depths Rvm (ASME B46.1-2019 1-4.1; from memory).

    Returns the mean over the sections (rows) of −min Z, µm (the ISO 4287 Rv section mean).
    """
    return float(np.mean(-np.min(_rows(z_um), axis=-1)))


def largest_peak_to_valley(z_um) -> float:
    """Maximum roughness depth Rmax (ASME B46.1-2019 1-4.1; from memory).

    Returns the largest section peak-to-valley height (max Z − min Z over each row), µm.
    """
    r = _rows(z_um)
    return float(np.max(np.max(r, axis=-1) - np.min(r, axis=-1)))


def peak_count_per_cm(z_um, *, dx_um: float, band_um: float = DEFAULT_PEAK_BAND_UM) -> float:
    """Peak count Rpc per cm (ASME B46.1-2019 1-5; from memory).

    Parameters
    ----------
    z_um : array_like
        Heights from the mean line in µm over the evaluation length (rows are joined).
    dx_um : float
        Sampling spacing, µm.
    band_um : float
        Half-width c of the band ±c about the mean line, µm.

    Returns
    -------
    float
        Number of peaks per cm of evaluation length. A peak is counted each time the profile,
        having been at or below −c, reaches +c or above.
    """
    if not band_um > 0.0:
        raise ValueError(f"band_um must be > 0, got {band_um!r}")
    z = as_heights(z_um).reshape(-1)
    state = np.where(z >= band_um, 1, np.where(z <= -band_um, -1, 0))
    state = state[state != 0]
    peaks = int(np.count_nonzero((state[:-1] == -1) & (state[1:] == 1)))
    length_cm = z.size * dx_um * 1e-4
    return peaks / length_cm
