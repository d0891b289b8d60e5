"""Isolated features: single deep valleys (scratches, pits) and spikes (dust, stylus jumps).

A feature is a connected run of points of the roughness profile that lies more than ``k`` robust
standard deviations beyond the centre of the local texture. Centre and spread are the median and
the median absolute deviation (MAD) of the heights in a window around the point (one section,
i.e. one cut-off, when called from :func:`speccheck.diagnostics.diagnose`), so the feature itself
barely moves them: a scratch covering 0.2 % of the points shifts the median by at most 0.2 % of
the points' rank, whereas it can raise Rq by 10 % and Rsk's denominator with it.

Thresholds and why
------------------
``k = 6`` (:data:`DEFAULT_K`). For a Gaussian random profile the probability that one point lies
beyond +6σ is Φ(−6) = 9.87e-10 (standard normal distribution), the same below −6σ, so the
expected number of false features in N independent points is 2·N·Φ(−6): 2.0e-5 for N = 10^4,
2.0e-4 for N = 10^5 and 2.0e-3 for N = 10^6 (:func:`expected_false_features`). Neighbouring
points of a real profile are correlated, which only lowers that count. The MAD estimate of σ
has a relative standard error of about 1.17/√N (37 % efficiency of the MAD for normal data),
1.2 % at N = 10^4: even two standard errors low, 6σ becomes 5.86σ and the expectation stays
below 5e-5 at 10^4 points.

A run is extended on both sides until the profile is back inside ``±edge_k·σ`` of the centre
(``edge_k = 3``, :data:`DEFAULT_EDGE_K`), so the flanks of a scratch are part of it; runs whose
extended intervals touch are one feature.

Isolation: more than :data:`DEFAULT_MAX_FEATURES` = 5 runs of one kind, or more than
:data:`DEFAULT_MAX_SHARE` = 1 % of the points beyond the threshold on one side, means those
excursions are the texture itself (the grooves of a plateau-honed bore, the pores of a sintered
face), not isolated features; none of that kind is reported then.

Heights are µm from the mean line of the profile given (Z of ISO 4287:1997 3.1.6); positions mm.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np

__all__ = [
    "DEFAULT_K",
    "DEFAULT_EDGE_K",
    "DEFAULT_MAX_FEATURES",
    "DEFAULT_MAX_SHARE",
    "MAD_TO_SIGMA",
    "Feature",
    "robust_sigma_um",
    "expected_false_features",
    "find_isolated_features",
    "remove_features",
]

#: Threshold in robust standard deviations (see module docstring for the false-alarm figures).
DEFAULT_K = 6.0
#: A feature's interval reaches until the profile is back within this many σ of the centre.
DEFAULT_EDGE_K = 3.0
#: More runs than this of one kind are texture, not isolated features.
DEFAULT_MAX_FEATURES = 5
#: More than this share of the points beyond the threshold on one side is texture.
DEFAULT_MAX_SHARE = 0.01
#: 1 / Φ⁻¹(0.75): MAD × this = σ for normally distributed data.
MAD_TO_SIGMA = 1.482602218505602

Kind = Literal["valley", "spike"]


@dataclass(frozen=True)
class Feature:
    """One isolated valley or spike of a roughness profile.

    Attributes
    ----------
    kind:
        ``"valley"`` (scratch, pit, pore) or ``"spike"`` (dust particle, stylus jump).
    x_mm:
        Position of the extreme point, in the x coordinates given (mm).
    extreme_um:
        Depth below (valley) or height above (spike) the mean line, µm, positive.
    width_um:
        Width at the threshold crossing (linear interpolation between samples), µm.
    start_index, stop_index:
        Samples removed with the feature, ``[start_index, stop_index)``: the run beyond the
        threshold extended to where the profile is back within the texture band.
    """

    kind: Kind
    x_mm: float
    extreme_um: float
    width_um: float
    start_index: int
    stop_index: int

    @property
    def depth_um(self) -> float | None:
        """Depth below the mean line for a valley, None for a spike."""
        return self.extreme_um if self.kind == "valley" else None

    @property
    def height_um(self) -> float | None:
        """Height above the mean line for a spike, None for a valley."""
        return self.extreme_um if self.kind == "spike" else None

    def to_dict(self) -> dict:
        """``{"kind", "x_mm", "depth_um" | "height_um", "width_um"}`` rounded for reports."""
        key = "depth_um" if self.kind == "valley" else "height_um"
        return {
            "kind": self.kind,
            "x_mm": round(self.x_mm, 4),
            key: round(self.extreme_um, 3),
            "width_um": round(self.width_um, 3),
        }


def _as_profile(z_um, name: str = "roughness_um") -> np.ndarray:
    z = np.asarray(z_um, dtype=np.float64)
    if z.ndim != 1 or z.size < 3:
        raise ValueError(f"{name} must be a 1-D array of at least 3 heights, got shape {z.shape}")
    if not np.all(np.isfinite(z)):
        raise ValueError(f"{name} contains NaN or infinite heights; fill dropouts first")
    return z


def _positive(value: float, name: str) -> float:
    v = float(value)
    if not (math.isfinite(v) and v > 0):
        raise ValueError(f"{name} must be a positive finite number, got {value!r}")
    return v


def robust_sigma_um(z_um) -> float:
    """Robust standard deviation of heights, MAD × 1.4826 (common practice, no source).

    Parameters
    ----------
    z_um : array_like
        Heights in µm.

    Returns
    -------
    float
        σ estimate in µm. Falls back to the mean absolute deviation × √(π/2) when more than half
        the points share one height (MAD = 0); 0.0 for a flat profile.

    Notes
    -----
    For normal data MAD = σ·Φ⁻¹(0.75), hence the factor 1/Φ⁻¹(0.75) = 1.4826; mean |z − median|
    = σ·√(2/π) for normal data, hence √(π/2) in the fallback.
    """
    z = _as_profile(z_um, "z_um")
    centre = float(np.median(z))
    dev = np.abs(z - centre)
    mad = float(np.median(dev))
    if mad > 0:
        return MAD_TO_SIGMA * mad
    return float(np.mean(dev)) * math.sqrt(math.pi / 2)


def expected_false_features(k: float, n_points: int) -> float:
    """Expected number of points of a Gaussian profile beyond ±kσ: 2·N·Φ(−k).

    Standard normal tail Φ(−k) = erfc(k/√2)/2; points taken as independent (an upper bound for
    a correlated profile).
    """
    return 2.0 * int(n_points) * 0.5 * math.erfc(float(k) / math.sqrt(2.0))


def _runs(mask: np.ndarray) -> list[tuple[int, int]]:
    """Start and stop (exclusive) of each run of True."""
    m = np.concatenate(([False], mask, [False])).astype(np.int8)
    d = np.diff(m)
    starts = np.flatnonzero(d == 1)
    stops = np.flatnonzero(d == -1)
    return list(zip(starts.tolist(), stops.tolist(), strict=True))


def _crossing(z: np.ndarray, i_out: int, i_in: int, level: float) -> float:
    """Fractional index where z crosses ``level`` between neighbouring samples."""
    a, b = z[i_out], z[i_in]
    if a == b:
        return float(i_in)
    t = (level - a) / (b - a)
    return i_out + min(max(t, 0.0), 1.0) * (i_in - i_out)


def _normalised_deviation(z: np.ndarray, m: int, fixed_sigma: float | None) -> np.ndarray | None:
    """(z − local median) / local σ, window by window of ``m`` points; None for a flat profile."""
    n = z.size
    starts = list(range(0, n, m))
    if len(starts) > 1 and n - starts[-1] < m / 2:
        starts.pop()
    bounds = [*starts, n]
    whole = fixed_sigma if fixed_sigma is not None else robust_sigma_um(z)
    if whole <= 0:
        return None
    dev = np.empty(n, dtype=np.float64)
    for a, b in zip(bounds[:-1], bounds[1:], strict=True):
        part = z[a:b]
        centre = float(np.median(part))
        if fixed_sigma is not None:
            sigma = fixed_sigma
        else:
            sigma = robust_sigma_um(part) if part.size >= 3 else 0.0
            if sigma <= 0:
                sigma = whole
        dev[a:b] = (part - centre) / sigma
    return dev


def find_isolated_features(
    roughness_um,
    *,
    dx_um: float,
    x_mm=None,
    reference_rq_um: float | None = None,
    k: float = DEFAULT_K,
    edge_k: float = DEFAULT_EDGE_K,
    max_features: int = DEFAULT_MAX_FEATURES,
    max_share: float = DEFAULT_MAX_SHARE,
    window_um: float | None = None,
) -> list[Feature]:
    """Isolated deep valleys and spikes of a roughness profile (speccheck's own criterion).

    Parameters
    ----------
    roughness_um : array_like
        Heights from the mean line over the evaluation length, µm (1-D, finite).
    dx_um : float
        Sampling spacing, µm.
    x_mm : array_like, optional
        Positions of the samples, mm; default ``i · dx_um / 1000``.
    reference_rq_um : float, optional
        Spread of the texture to measure against, µm; default the robust σ of the profile
        itself (:func:`robust_sigma_um`), window by window.
    k : float
        Threshold in σ beyond the median (default 6, see the module docstring).
    edge_k : float
        The removed interval ends where the profile is back within ``edge_k·σ`` of the median.
    max_features, max_share :
        Isolation limits per kind: more runs, or a larger share of points beyond the threshold,
        are texture and not reported.
    window_um : float, optional
        Length of the windows in which the local centre (median) and σ are estimated, µm;
        :func:`speccheck.diagnostics.diagnose` passes the section length (λc). A last window
        shorter than half this joins the one before. Default: the whole profile is one window.

    Returns
    -------
    list of Feature
        Sorted by position; empty for a flat profile.

    Notes
    -----
    Depth and height are read from the mean line (zero of ``roughness_um``), the threshold from
    the local median, which sits at the texture's centre even when the texture is skewed.
    With windows of a section length (1600 points at λc 0.8 mm, dx 0.5 µm) the MAD estimate of σ
    has a relative standard error of 3 %; two standard errors low, 6σ becomes 5.64σ and the
    expected false features in 10^6 Gaussian points rise from 2e-3 to 2e-2.
    """
    z = _as_profile(roughness_um)
    dx = _positive(dx_um, "dx_um")
    k = _positive(k, "k")
    edge_k = _positive(edge_k, "edge_k")
    if edge_k >= k:
        raise ValueError(f"edge_k must be smaller than k, got edge_k={edge_k!r}, k={k!r}")
    if x_mm is None:
        x = np.arange(z.size, dtype=np.float64) * dx / 1000.0
    else:
        x = np.asarray(x_mm, dtype=np.float64)
        if x.shape != z.shape:
            raise ValueError(f"x_mm must have the shape of roughness_um {z.shape}, got {x.shape}")
    n = z.size
    if window_um is None:
        m = n
    else:
        m = max(3, int(round(_positive(window_um, "window_um") / dx)))
    fixed = None if reference_rq_um is None else _positive(reference_rq_um, "reference_rq_um")
    dev = _normalised_deviation(z, m, fixed)
    if dev is None:
        return []
    inside = np.abs(dev) <= edge_k
    found: list[Feature] = []
    for kind, sign in (("valley", -1.0), ("spike", 1.0)):
        level = sign * k
        beyond = dev * sign > k
        runs = _runs(beyond)
        if not runs or len(runs) > max_features or beyond.sum() > max_share * n:
            continue
        # Extend each run to the texture band, then merge runs whose intervals touch.
        intervals: list[list[int]] = []
        for a, b in runs:
            lo = a
            while lo > 0 and not inside[lo - 1]:
                lo -= 1
            hi = b
            while hi < n and not inside[hi]:
                hi += 1
            if intervals and lo <= intervals[-1][1]:
                intervals[-1][1] = max(intervals[-1][1], hi)
                intervals[-1].extend([a, b])
            else:
                intervals.append([lo, hi, a, b])
        for lo, hi, *cores in intervals:
            seg = z[lo:hi] * sign
            i_ext = lo + int(np.argmax(seg))
            first, last = cores[0], cores[-1]
            left = _crossing(dev, first - 1, first, level) if first > 0 else float(first)
            right = _crossing(dev, last, last - 1, level) if last < n else float(last - 1)
            found.append(
                Feature(
                    kind=kind,  # type: ignore[arg-type]
                    x_mm=float(x[i_ext]),
                    extreme_um=float(abs(z[i_ext])),
                    width_um=float(max(right - left, 0.0) * dx),
                    start_index=lo,
                    stop_index=hi,
                )
            )
    found.sort(key=lambda f: f.x_mm)
    return found


def remove_features(roughness_um, features: list[Feature]) -> np.ndarray:
    """The profile with each feature's interval replaced by a straight line.

    Parameters
    ----------
    roughness_um : array_like
        Heights in µm, the profile the features were found on.
    features : list of Feature

    Returns
    -------
    ndarray
        float64 copy; inside ``[start_index, stop_index)`` the heights lie on the line between the
        last sample before and the first sample after; at a profile end the neighbouring sample's
        height is held.

    Notes
    -----
    Interpolation rather than masking keeps the number of samples, the sampling spacing and the
    section boundaries as the standards define them, so every parameter is recomputed with the
    same formula. Over the removed width the texture is a straight line, which lowers the local
    spread a little; for widths far below the section length the effect is negligible.
    """
    z = _as_profile(roughness_um).copy()
    n = z.size
    for f in features:
        lo, hi = int(f.start_index), int(f.stop_index)
        if not (0 <= lo < hi <= n):
            raise ValueError(f"feature interval [{lo}, {hi}) lies outside a profile of {n} points")
        if lo == 0 and hi == n:
            raise ValueError("a feature covers the whole profile; nothing left to interpolate from")
        if lo == 0:
            z[lo:hi] = z[hi]
        elif hi == n:
            z[lo:hi] = z[lo - 1]
        else:
            t = (np.arange(lo, hi) - (lo - 1)) / (hi - (lo - 1))
            z[lo:hi] = z[lo - 1] + t * (z[hi] - z[lo - 1])
    return z
