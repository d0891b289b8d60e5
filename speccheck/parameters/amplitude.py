"""Amplitude parameters: heights of the profile relative to its mean line.

Every function takes heights ``z_um`` measured from the mean line (the filtered profile: Z(x) of
ISO 4287:1997 3.1.6), either one section as a 1-D array or several sections as the rows of a 2-D
array, and reduces along the last axis. A 1-D input gives a Python float, a 2-D input an array
with one value per row. Heights are micrometres; sk and ku have no unit.

Where a standard averages a parameter over sections (ISO 4287:1997 4.1, 4.2: "defined over a
sampling length", reported as the mean over the sections of the evaluation length) the caller
passes the sections as rows and averages; :mod:`speccheck.parameters.compute` does that.

Clause numbers of ISO 4287:1997 are from memory (4.1 amplitude peak-and-valley, 4.2 amplitude
averages of ordinates); ISO 21920-2:2021 is cited without clause numbers.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "as_heights",
    "arithmetic_mean_height",
    "root_mean_square_height",
    "skewness",
    "kurtosis",
    "max_peak_height",
    "max_valley_depth",
    "max_height",
    "total_height",
    "largest_section_max_height",
]


def as_heights(z_um) -> np.ndarray:
    """Heights as a float64 array of one or two dimensions; raises ValueError otherwise."""
    z = np.asarray(z_um, dtype=np.float64)
    if z.ndim not in (1, 2) or z.shape[-1] < 1:
        raise ValueError(f"z_um must be a non-empty 1-D or 2-D array, got shape {z.shape}")
    return z


def _out(a: np.ndarray) -> float | np.ndarray:
    return float(a) if np.ndim(a) == 0 else np.asarray(a, dtype=np.float64)


def arithmetic_mean_height(z_um) -> float | np.ndarray:
    """Arithmetic mean height Ra (ISO 4287:1997 4.2.1; ISO 21920-2:2021).

    Parameters
    ----------
    z_um : array_like
        Heights from the mean line in µm, one section (1-D) or sections as rows (2-D).

    Returns
    -------
    float or ndarray
        mean |Z| in µm.
    """
    z = as_heights(z_um)
    return _out(np.mean(np.abs(z), axis=-1))


def root_mean_square_height(z_um) -> float | np.ndarray:
    """Root mean square height Rq (ISO 4287:1997 4.2.2; ISO 21920-2:2021).

    Returns √(mean Z²) in µm.
    """
    z = as_heights(z_um)
    return _out(np.sqrt(np.mean(z * z, axis=-1)))


def skewness(z_um) -> float | np.ndarray:
    """Skewness Rsk (ISO 4287:1997 4.2.3; ISO 21920-2:2021).

    Returns mean Z³ / Rq³ (no unit); NaN for a flat section (Rq = 0).

    Notes
    -----
    Heights are taken from the mean line as the standard defines them; the section's own mean is
    not subtracted.
    """
    z = as_heights(z_um)
    m2 = np.mean(z * z, axis=-1)
    m3 = np.mean(z * z * z, axis=-1)
    with np.errstate(divide="ignore", invalid="ignore"):
        return _out(np.where(m2 > 0, m3 / np.where(m2 > 0, m2, 1.0) ** 1.5, np.nan))


def kurtosis(z_um) -> float | np.ndarray:
    """Kurtosis Rku (ISO 4287:1997 4.2.4; ISO 21920-2:2021).

    Returns mean Z⁴ / Rq⁴ (no unit; 3 for a Gaussian profile); NaN for a flat section.
    """
    z = as_heights(z_um)
    z2 = z * z
    m2 = np.mean(z2, axis=-1)
    m4 = np.mean(z2 * z2, axis=-1)
    with np.errstate(divide="ignore", invalid="ignore"):
        return _out(np.where(m2 > 0, m4 / np.where(m2 > 0, m2, 1.0) ** 2, np.nan))


def max_peak_height(z_um) -> float | np.ndarray:
    """Maximum profile peak height Rp (ISO 4287:1997 4.1.1; ISO 21920-2:2021).

    Returns the largest height above the mean line in µm (max Z, which is negative if the whole
    section lies below the mean line).
    """
    z = as_heights(z_um)
    return _out(np.max(z, axis=-1))


def max_valley_depth(z_um) -> float | np.ndarray:
    """Maximum profile valley depth Rv (ISO 4287:1997 4.1.2; ISO 21920-2:2021).

    Returns the largest depth below the mean line in µm, as a positive number (−min Z).
    """
    z = as_heights(z_um)
    return _out(-np.min(z, axis=-1))


def max_height(z_um) -> float | np.ndarray:
    """Maximum height of profile Rz (ISO 4287:1997 4.1.3; ISO 21920-2:2021).

    Returns Rp + Rv of each section in µm.
    """
    z = as_heights(z_um)
    return _out(np.max(z, axis=-1) - np.min(z, axis=-1))


def total_height(z_um) -> float:
    """Total height of profile Rt (ISO 4287:1997 4.1.5; ISO 21920-2:2021).

    Returns max Z − min Z over everything passed (the whole evaluation length, not per row).
    """
    z = as_heights(z_um)
    return float(np.max(z) - np.min(z))


def largest_section_max_height(z_um) -> float:
    """Largest section maximum height Rz1max (ISO 4288:1996 3.1 note; ISO 21920-2:2021 Rz1max).

    Parameters
    ----------
    z_um : array_like, 2-D
        The sections of the evaluation length as rows, heights in µm.

    Returns
    -------
    float
        max over the sections of (max Z − min Z), µm.
    """
    z = as_heights(z_um)
    rows = z[None, :] if z.ndim == 1 else z
    return float(np.max(np.max(rows, axis=-1) - np.min(rows, axis=-1)))
