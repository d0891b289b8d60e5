"""Spacing and hybrid parameters: profile elements (RSm, Rc) and the RMS slope (RΔq).

Profile elements (ISO 4287:1997 3.2.9)
--------------------------------------
A profile element is a profile peak (the part above the mean line between two crossings of it)
with the adjacent profile valley. Peaks and valleys smaller than the discrimination limits, by
default a height (peak height or valley depth) below 10 % of the section's Rz or a width below
1 % of the section length (ISO 4287:1997 3.2.9 note; both conditions must hold to count), are
not peaks or valleys of their own. Implementation, per section:

1. crossings of the mean line at sub-sample positions (linear interpolation between samples);
   the pieces before the first and after the last crossing are incomplete and are not used;
2. each piece between two crossings is marked significant or not by the two limits;
3. consecutive significant pieces of the same sign are one peak (or valley) together with the
   insignificant pieces between them; an insignificant piece between a peak and a valley is
   counted with the one before it (our choice: the element boundary is the crossing where the
   next significant piece starts);
4. elements are consecutive (peak, valley) or (valley, peak) pairs, starting with the first
   significant piece; an unpaired last piece is dropped.

Xs of an element is its width, Zt its peak height plus valley depth. RSm and Rc are the means.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from speccheck.parameters.amplitude import as_heights

__all__ = [
    "HEIGHT_DISCRIMINATION",
    "WIDTH_DISCRIMINATION",
    "ProfileElements",
    "profile_elements",
    "mean_width_of_elements_mm",
    "mean_height_of_elements",
    "field_mean_width_of_elements_mm",
    "field_mean_height_of_elements",
    "local_slope",
    "rms_slope",
    "SLOPE_MARGIN_POINTS",
]

#: ISO 4287:1997 3.2.9 default discrimination: 10 % of Rz in height, 1 % of the section in width.
HEIGHT_DISCRIMINATION = 0.10
WIDTH_DISCRIMINATION = 0.01
#: Points each side that the seven-point derivative needs beyond the points it is reported on.
SLOPE_MARGIN_POINTS = 3


@dataclass(frozen=True)
class ProfileElements:
    """The profile elements of one section."""

    widths_um: np.ndarray  # Xs of each element
    heights_um: np.ndarray  # Zt of each element (peak height + valley depth)
    starts_um: np.ndarray  # position of each element's first crossing from the section start

    @property
    def count(self) -> int:
        return int(self.widths_um.size)


def profile_elements(
    z_um,
    *,
    dx_um: float,
    height_fraction: float = HEIGHT_DISCRIMINATION,
    width_fraction: float = WIDTH_DISCRIMINATION,
) -> ProfileElements:
    """Profile elements of one section with discrimination (ISO 4287:1997 3.2.9).

    Parameters
    ----------
    z_um : array_like, 1-D
        Heights from the mean line over one section, µm.
    dx_um : float
        Sampling spacing, µm.
    height_fraction, width_fraction : float
        Discrimination limits as fractions of the section's Rz and of the section length.

    Returns
    -------
    ProfileElements
        Widths, heights and start positions of the complete elements (possibly none).

    Notes
    -----
    The algorithm is in the module docstring.
    """
    z = as_heights(z_um)
    if z.ndim != 1:
        raise ValueError("profile_elements takes one section (a 1-D array)")
    empty = ProfileElements(np.empty(0), np.empty(0), np.empty(0))
    n = z.size
    above = z > 0.0
    idx = np.flatnonzero(above[1:] != above[:-1])  # crossing between idx and idx + 1
    if idx.size < 2:
        return empty
    z0, z1 = z[idx], z[idx + 1]
    xc = idx + z0 / (z0 - z1)  # sub-sample crossing positions (in samples)
    # pieces between consecutive crossings: samples idx[j]+1 .. idx[j+1]
    extent = np.maximum.reduceat(np.abs(z), idx + 1)[:-1]
    sign = above[idx[:-1] + 1]
    width = np.diff(xc)
    rz = float(z.max() - z.min())
    section_um = n * dx_um
    significant = (extent >= height_fraction * rz) & (width * dx_um >= width_fraction * section_um)
    if not significant.any():
        return empty
    s_sign = sign[significant]
    s_start = xc[:-1][significant]
    s_end = xc[1:][significant]
    s_ext = extent[significant]
    new_run = np.concatenate(([True], s_sign[1:] != s_sign[:-1]))
    run_first = np.flatnonzero(new_run)
    run_id = np.cumsum(new_run) - 1
    n_runs = run_first.size
    run_start = s_start[run_first]
    run_end = np.empty(n_runs)
    run_end[:-1] = run_start[1:]
    run_end[-1] = s_end[-1]
    run_height = np.zeros(n_runs)
    np.maximum.at(run_height, run_id, s_ext)
    n_el = n_runs // 2
    if n_el == 0:
        return empty
    first = np.arange(n_el) * 2
    widths = (run_end[first + 1] - run_start[first]) * dx_um
    heights = run_height[first] + run_height[first + 1]
    return ProfileElements(widths, heights, run_start[first] * dx_um)


def _per_row(z_um, dx_um: float, attr: str, scale: float) -> float | np.ndarray:
    z = as_heights(z_um)
    rows = z[None, :] if z.ndim == 1 else z
    out = np.empty(rows.shape[0])
    for k, row in enumerate(rows):
        el = profile_elements(row, dx_um=dx_um)
        out[k] = float(np.mean(getattr(el, attr))) * scale if el.count else np.nan
    return float(out[0]) if z.ndim == 1 else out


def mean_width_of_elements_mm(z_um, *, dx_um: float) -> float | np.ndarray:
    """Mean width of the profile elements RSm (ISO 4287:1997 4.3.1; ISO 21920-2:2021).

    Parameters
    ----------
    z_um : array_like
        One section (1-D) or sections as rows (2-D), heights from the mean line in µm.
    dx_um : float
        Sampling spacing, µm.

    Returns
    -------
    float or ndarray
        Mean element width Xs in **mm** per section; NaN where a section holds no complete
        element.
    """
    return _per_row(z_um, dx_um, "widths_um", 1e-3)


def mean_height_of_elements(z_um, *, dx_um: float) -> float | np.ndarray:
    """Mean height of the profile elements Rc (ISO 4287:1997 4.1.4; ISO 21920-2:2021).

    Returns the mean element height Zt in µm per section; NaN where a section holds no element.
    """
    return _per_row(z_um, dx_um, "heights_um", 1.0)


def _field_elements(
    z_um, *, dx_um: float, section_length_um: float, rz_um: float
) -> ProfileElements:
    """Elements of the whole evaluation length, discriminated by 10 % of Rz and 1 % of lsc.

    ISO 21920-2:2021 takes the profile elements over the evaluation length; its default height
    discrimination is 10 % of Rz (the mean of the section maximum heights) and its width
    discrimination 1 % of the section length lsc (from memory). The limits are passed to
    :func:`profile_elements` as fractions of that row's own Rz and length.
    """
    z = as_heights(z_um)
    rt = float(z.max() - z.min())
    if not rt > 0.0:
        return ProfileElements(np.empty(0), np.empty(0), np.empty(0))
    return profile_elements(
        z,
        dx_um=dx_um,
        height_fraction=HEIGHT_DISCRIMINATION * rz_um / rt,
        width_fraction=WIDTH_DISCRIMINATION * section_length_um / (z.size * dx_um),
    )


def field_mean_width_of_elements_mm(
    z_um, *, dx_um: float, section_length_um: float, rz_um: float
) -> float:
    """Mean profile element width RSm over the evaluation length (ISO 21920-2:2021; from memory).

    ``z_um`` is the whole evaluation length (1-D, µm from the mean line); ``rz_um`` the mean of
    the section maximum heights; returns mm, NaN when no complete element lies in it.
    """
    el = _field_elements(z_um, dx_um=dx_um, section_length_um=section_length_um, rz_um=rz_um)
    return float(np.mean(el.widths_um)) * 1e-3 if el.count else float("nan")


def field_mean_height_of_elements(
    z_um, *, dx_um: float, section_length_um: float, rz_um: float
) -> float:
    """Mean profile element height Rc over the evaluation length (ISO 21920-2:2021; from memory).

    Arguments as :func:`field_mean_width_of_elements_mm`; returns µm, NaN without elements.
    """
    el = _field_elements(z_um, dx_um=dx_um, section_length_um=section_length_um, rz_um=rz_um)
    return float(np.mean(el.heights_um)) if el.count else float("nan")


def local_slope(z_um, *, dx_um: float) -> np.ndarray:
    """Local slope dZ/dX by the seven-point derivative (ISO 21920-2:2021; from memory).

    dZ/dX at i = (z[i+3] − 9 z[i+2] + 45 z[i+1] − 45 z[i−1] + 9 z[i−2] − z[i−3]) / (60 Δx),
    the sixth-order central difference used for RΔq (common practice for ISO 4287 software).

    Parameters
    ----------
    z_um : array_like
        Heights in µm along the last axis (1-D or 2-D).
    dx_um : float
        Sampling spacing, µm.

    Returns
    -------
    ndarray
        Slopes (µm/µm, no unit) at the points that have three neighbours each side: the last
        axis is 6 shorter than the input.
    """
    z = as_heights(z_um)
    if z.shape[-1] < 7:
        raise ValueError("the seven-point derivative needs at least 7 points")
    n = z.shape[-1]

    def s(k: int) -> np.ndarray:
        return z[..., 3 + k : n - 3 + k]

    return (s(3) - 9.0 * s(2) + 45.0 * s(1) - 45.0 * s(-1) + 9.0 * s(-2) - s(-3)) / (60.0 * dx_um)


def rms_slope(z_um, *, dx_um: float) -> float | np.ndarray:
    """Root mean square slope RΔq (ISO 4287:1997 4.4.1; ISO 21920-2:2021).

    Parameters
    ----------
    z_um : array_like
        Heights in µm; the first and last :data:`SLOPE_MARGIN_POINTS` points of each row are
        used only as neighbours of the derivative (pass the section with three points of the
        trace on each side to get RΔq of exactly the section).
    dx_um : float
        Sampling spacing, µm.

    Returns
    -------
    float or ndarray
        √(mean (dZ/dX)²), no unit.
    """
    d = local_slope(z_um, dx_um=dx_um)
    r = np.sqrt(np.mean(d * d, axis=-1))
    return float(r) if np.ndim(r) == 0 else r
