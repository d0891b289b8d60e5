"""Material ratio parameters and curves over the evaluation length.

Conventions
-----------
* Rmr(c): ``c`` is a depth in µm **below the highest peak of the evaluation length**; the
  material length at that level is measured on the profile linearly interpolated between
  samples, so Rmr(c) of a sampled sine follows its closed form closely.
* The material ratio curve (Abbott-Firestone curve) is the sorted heights, highest first, the
  i-th (from 0) of N at material ratio 100·(i + ½)/N % (the midpoint of the sample's share).
* Rδc(a-b) is the height difference between the levels at material ratios a % and b %, read on
  that curve by linear interpolation.
"""

from __future__ import annotations

import numpy as np

from speccheck.parameters.amplitude import as_heights

__all__ = [
    "material_ratio_at_depth",
    "material_ratio_curve",
    "height_at_material_ratio",
    "section_height_difference",
    "amplitude_distribution",
    "parse_ratio_pair",
]


def _flat(z_um) -> np.ndarray:
    return as_heights(z_um).reshape(-1)


def material_ratio_at_depth(z_um, *, depth_um: float) -> float:
    """Material ratio Rmr(c) in % at ``depth_um`` below the highest peak (ISO 4287:1997 4.5.1).

    Parameters
    ----------
    z_um : array_like
        Heights in µm over the evaluation length (2-D input is taken row after row).
    depth_um : float
        Depth c of the intersection level below the highest point, µm (≥ 0).

    Returns
    -------
    float
        Material length at the level / evaluation length, in %.

    Notes
    -----
    Between two samples the profile is taken as the straight line joining them, and the part of
    that interval at or above the level counts as material.
    """
    if not depth_um >= 0.0:
        raise ValueError(f"depth_um must be ≥ 0, got {depth_um!r}")
    z = _flat(z_um)
    if z.size < 2:
        raise ValueError("material ratio needs at least 2 points")
    return _ratio_at_level(z, float(z.max()) - depth_um)


def _ratio_at_level(z: np.ndarray, level: float) -> float:
    """Material ratio in % at a height ``level`` (linear between samples)."""
    a = z[:-1] - level
    b = z[1:] - level
    hi = np.maximum(a, b)
    lo = np.minimum(a, b)
    with np.errstate(divide="ignore", invalid="ignore"):
        part = np.where(lo >= 0.0, 1.0, np.where(hi <= 0.0, 0.0, hi / (hi - lo)))
    return float(100.0 * part.mean())


def relative_material_ratio(z_um, *, depth_um: float, reference_pct: float) -> float:
    """Relative material ratio Rmr in % (ISO 4287:1997 4.5.4, from memory; ISO 21920-2:2021).

    The level is ``depth_um`` below the reference level C0, the height where the material ratio
    curve reaches ``reference_pct`` (Rmr0), instead of below the highest peak: one spike moves
    the highest peak by its whole height but C0 (at Rmr0 of a few %) hardly at all.

    Parameters
    ----------
    z_um : array_like
        Heights in µm over the evaluation length.
    depth_um : float
        Rδc, the depth below C0 in µm (≥ 0).
    reference_pct : float
        Rmr0 in % (0 ≤ Rmr0 < 100).
    """
    if not depth_um >= 0.0:
        raise ValueError(f"depth_um must be ≥ 0, got {depth_um!r}")
    if not 0.0 <= reference_pct < 100.0:
        raise ValueError(
            f"the reference material ratio must be in 0 ≤ Rmr0 < 100 %, got {reference_pct!r}"
        )
    z = _flat(z_um)
    if z.size < 2:
        raise ValueError("material ratio needs at least 2 points")
    c0 = float(height_at_material_ratio(reference_pct, material_ratio_curve(z)))
    return _ratio_at_level(z, c0 - depth_um)


def parse_relative_level(text: str) -> tuple[float, float | None]:
    """``"0.5"`` -> (0.5, None); ``"0.5,5%"`` -> (0.5, 5.0): depth in µm and Rmr0 in %."""
    parts = [p.strip() for p in text.split(",")]
    if len(parts) > 2 or not parts[0]:
        raise ValueError(f"expected a depth in µm and an optional reference ratio, got {text!r}")
    depth = float(parts[0])
    if not (depth >= 0.0 and np.isfinite(depth)):
        raise ValueError("the depth below the reference level must be ≥ 0 µm")
    if len(parts) == 1:
        return depth, None
    if not parts[1].endswith("%"):
        raise ValueError(
            f"the reference material ratio needs '%', e.g. 'Rmr(0.5,5%)', got {text!r}"
        )
    ref = float(parts[1][:-1])
    if not 0.0 <= ref < 100.0:
        raise ValueError("the reference material ratio must be in 0 ≤ Rmr0 < 100 %")
    return depth, ref


def material_ratio_curve(z_um) -> tuple[np.ndarray, np.ndarray]:
    """Material ratio curve of the profile (ISO 4287:1997 4.5.2; ISO 13565-2:1996 3.1).

    Returns
    -------
    mr_pct : ndarray
        Material ratio in %, increasing: 100·(i + ½)/N.
    height_um : ndarray
        Heights in µm, decreasing (highest first).
    """
    z = _flat(z_um)
    h = np.ascontiguousarray(np.sort(z)[::-1])
    mr = (np.arange(h.size) + 0.5) * (100.0 / h.size)
    return mr, h


def height_at_material_ratio(mr_pct, curve: tuple[np.ndarray, np.ndarray]) -> np.ndarray:
    """Height in µm where the material ratio curve reaches ``mr_pct`` (linear interpolation)."""
    mr, h = curve
    return np.interp(np.asarray(mr_pct, dtype=np.float64), mr, h)


def parse_ratio_pair(text: str) -> tuple[float, float]:
    """``"20-80"`` -> (20.0, 80.0): the two material ratios in % of Rδc(a-b); ValueError if bad."""
    parts = text.split("-")
    if len(parts) != 2:
        raise ValueError(f"expected two material ratios in % such as '20-80', got {text!r}")
    a, b = (float(p) for p in parts)
    if not (0.0 <= a < b <= 100.0):
        raise ValueError(f"material ratios must satisfy 0 ≤ a < b ≤ 100, got {text!r}")
    return a, b


def section_height_difference(z_um, *, mr1_pct: float, mr2_pct: float) -> float:
    """Profile section height difference Rδc (ISO 4287:1997 4.5.3; ISO 21920-2:2021 Rdc).

    Parameters
    ----------
    z_um : array_like
        Heights in µm over the evaluation length.
    mr1_pct, mr2_pct : float
        Material ratios in %, ``mr1_pct < mr2_pct``.

    Returns
    -------
    float
        C(mr1) − C(mr2) in µm (≥ 0).
    """
    if not (0.0 <= mr1_pct < mr2_pct <= 100.0):
        raise ValueError(f"need 0 ≤ mr1 < mr2 ≤ 100, got {mr1_pct!r}, {mr2_pct!r}")
    c = height_at_material_ratio([mr1_pct, mr2_pct], material_ratio_curve(z_um))
    return float(c[0] - c[1])


def amplitude_distribution(z_um, *, bins: int = 50) -> tuple[np.ndarray, np.ndarray]:
    """Amplitude density function (ISO 4287:1997 4.5.5): a histogram of the heights.

    Parameters
    ----------
    z_um : array_like
        Heights in µm.
    bins : int
        Number of equal-width classes between the lowest and highest height.

    Returns
    -------
    centres_um : ndarray
        Class centres, µm.
    density_per_um : ndarray
        Probability density in 1/µm (integrates to 1 over the classes).
    """
    z = _flat(z_um)
    lo, hi = float(z.min()), float(z.max())
    if hi <= lo:
        hi = lo + 1e-9
    density, edges = np.histogram(z, bins=bins, range=(lo, hi), density=True)
    return 0.5 * (edges[:-1] + edges[1:]), density
