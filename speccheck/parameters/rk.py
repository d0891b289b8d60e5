"""Functional parameters of stratified surfaces: ISO 13565-2 (Rk family) and ISO 13565-3.

Both work on the material ratio curve of the whole evaluation length (not per section) of the
roughness profile obtained with the ISO 13565-1 reference line (valley-suppressed Gaussian
filter) or the ISO 16610-31 robust filter; :mod:`speccheck.parameters.compute` chooses.

ISO 13565-2:1996, as implemented
--------------------------------
1. Material ratio curve: sorted heights, the i-th of N at 100·(i + ½)/N % (see
   :mod:`speccheck.parameters.material`).
2. Among all secants of the curve spanning 40 % of material ratio (a window of round(0.4 N)
   samples), the one with the least gradient; on ties the first (highest) one.
3. Equivalent straight line: the least-squares line through the curve points inside that window
   (from memory; on a curve that is straight there it equals the secant).
4. Its heights at 0 % and 100 % bound the core: Rk = difference. Mr1, Mr2: material ratios where
   the curve crosses the upper and lower bound (linear interpolation; 0 % / 100 % when it does
   not reach them).
5. A1 = ∫ (curve − upper bound) over 0..Mr1, A2 = ∫ (lower bound − curve) over Mr2..100 %,
   in µm·% (midpoint rule on the samples). Rpk = 2·A1/Mr1 and Rvk = 2·A2/(100 % − Mr2): the
   heights of triangles of the same areas. With Mr1 = 0 (no peak area) Rpk = 0; likewise Rvk.

ISO 13565-3:1998, as implemented (fitting regions are our choice)
------------------------------------------------------------------
The curve is plotted with the material ratio on a normal-probability scale x = Φ⁻¹(Mr). It is
sampled at :data:`PROBABILITY_GRID_POINTS` equally spaced x between Mr 0.5 % and 99.5 % (the
extreme 0.5 % at each end, a handful of points, is left out). Two straight lines are fitted by
least squares, the upper (plateau) one to the points left of a break point and the lower
(valley) one to the points right of it; the break point is the one with the least total squared
residual, each line keeping at least 10 % of the grid. Rpq = −slope of the plateau line and
Rvq = −slope of the valley line (µm per standard deviation: for a Gaussian profile both equal
Rq); Rmq = Φ(x) at the intersection of the two lines, in %, or at the break point when the
lines do not intersect inside the fitted range (e.g. an unstratified, Gaussian profile, where
Rmq carries no meaning).
"""

from __future__ import annotations

import math
import statistics
from dataclasses import dataclass

import numpy as np

from speccheck.parameters.amplitude import as_heights
from speccheck.parameters.material import material_ratio_curve

__all__ = [
    "SECANT_SPAN_PCT",
    "PROBABILITY_GRID_POINTS",
    "RkParameters",
    "ProbabilityParameters",
    "NoCore",
    "rk_parameters",
    "probability_parameters",
]

#: ISO 13565-2:1996: the secant spans 40 % of material ratio.
SECANT_SPAN_PCT = 40.0
#: Points of the normal-probability curve used by the ISO 13565-3 fit.
PROBABILITY_GRID_POINTS = 400
_MIN_POINTS = 20


@dataclass(frozen=True)
class RkParameters:
    """ISO 13565-2 parameters; heights in µm, ratios in %, areas in µm·%."""

    Rk: float
    Rpk: float
    Rvk: float
    Mr1: float
    Mr2: float
    A1: float
    A2: float
    core_top_um: float  # the equivalent line at Mr 0 %
    core_bottom_um: float  # the equivalent line at Mr 100 %
    window_pct: tuple[float, float]  # material ratios spanned by the least-gradient secant


@dataclass(frozen=True)
class ProbabilityParameters:
    """ISO 13565-3 parameters: Rpq, Rvq in µm, Rmq in %."""

    Rpq: float
    Rvq: float
    Rmq: float


@dataclass(frozen=True)
class NoCore:
    """No core could be found (falsy result, not an exception)."""

    reason: str

    def __bool__(self) -> bool:
        return False


def rk_parameters(
    z_um, *, curve: tuple[np.ndarray, np.ndarray] | None = None
) -> RkParameters | NoCore:
    """Core roughness depth Rk and its family (ISO 13565-2:1996 4; Rmrk1/Rmrk2 in ISO 21920-2).

    Parameters
    ----------
    z_um : array_like
        Heights in µm over the evaluation length (roughness profile per ISO 13565-1).
    curve : (mr_pct, height_um), optional
        The material ratio curve of ``z_um`` if already computed
        (:func:`speccheck.parameters.material.material_ratio_curve`), to save sorting again.

    Returns
    -------
    RkParameters or NoCore
        NoCore when there are fewer than 20 points or the curve has no core (flat profile).

    Notes
    -----
    The steps are in the module docstring.

    References
    ----------
    ISO 13565-2:1996 clauses 3 and 4.
    """
    z = as_heights(z_um).reshape(-1)
    n = z.size
    if n < _MIN_POINTS:
        return NoCore(f"no core found for Rk: {n} points, at least {_MIN_POINTS} needed")
    mr, h = material_ratio_curve(z) if curve is None else curve
    if not h[0] > h[-1]:
        return NoCore("no core found for Rk: the profile is flat")
    w = int(round(SECANT_SPAN_PCT / 100.0 * n))
    gradient = (h[w:] - h[:-w]) / (mr[w:] - mr[:-w])  # ≤ 0 everywhere (h decreasing)
    i = int(np.argmax(gradient))  # least steep; first on ties
    xs, ys = mr[i : i + w + 1], h[i : i + w + 1]
    xm, ym = xs.mean(), ys.mean()
    slope = float(np.dot(xs - xm, ys - ym) / np.dot(xs - xm, xs - xm))  # least squares
    intercept = ym - slope * xm
    top = float(intercept)
    bottom = float(intercept + 100.0 * slope)
    rk = top - bottom
    if not (np.isfinite(rk) and rk > 0.0):
        return NoCore("no core found for Rk: the material ratio curve has no sloping core")
    rising = np.ascontiguousarray(h[::-1])
    k1 = n - int(np.searchsorted(rising, top, side="left"))  # samples at or above the top
    k2 = n - int(np.searchsorted(rising, bottom, side="left"))  # ... at or above the bottom
    mr1 = _ratio_at_level(mr, h, k1, top)
    mr2 = _ratio_at_level(mr, h, k2, bottom)
    step = 100.0 / n  # material ratio per sample: midpoint rule for the areas
    a1 = float(np.sum(h[:k1]) - k1 * top) * step
    a2 = float((n - k2) * bottom - np.sum(h[k2:])) * step
    rpk = 2.0 * a1 / mr1 if mr1 > 0.0 else 0.0
    rvk = 2.0 * a2 / (100.0 - mr2) if mr2 < 100.0 else 0.0
    return RkParameters(
        Rk=rk,
        Rpk=rpk,
        Rvk=rvk,
        Mr1=mr1,
        Mr2=mr2,
        A1=a1,
        A2=a2,
        core_top_um=top,
        core_bottom_um=bottom,
        window_pct=(float(mr[i]), float(mr[i + w])),
    )


def _ratio_at_level(mr: np.ndarray, h: np.ndarray, k: int, level: float) -> float:
    """Material ratio in % where the curve (mr, h decreasing) crosses ``level``; ``k`` = number
    of samples at or above it. Linear between the samples either side; 0 % above the highest
    sample, 100 % at or below the lowest."""
    if k == 0:
        return 0.0
    if k == h.size:
        return 100.0
    t = (h[k - 1] - level) / (h[k - 1] - h[k])
    return float(mr[k - 1] + t * (mr[k] - mr[k - 1]))


def _line_sse(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Residual sum of squares of the least-squares line through x[:k], y[:k] for every k."""
    k = np.arange(1, x.size + 1, dtype=np.float64)
    sx, sy = np.cumsum(x), np.cumsum(y)
    sxx, sxy, syy = np.cumsum(x * x), np.cumsum(x * y), np.cumsum(y * y)
    vxx = sxx - sx * sx / k
    vxy = sxy - sx * sy / k
    vyy = syy - sy * sy / k
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(vxx > 0, vyy - vxy * vxy / np.where(vxx > 0, vxx, 1.0), 0.0)


def probability_parameters(
    z_um, *, curve: tuple[np.ndarray, np.ndarray] | None = None
) -> ProbabilityParameters | NoCore:
    """Rpq, Rvq, Rmq on the normal-probability material ratio curve (ISO 13565-3:1998).

    Parameters
    ----------
    z_um : array_like
        Heights in µm over the evaluation length.
    curve : (mr_pct, height_um), optional
        The material ratio curve of ``z_um`` if already computed.

    Returns
    -------
    ProbabilityParameters or NoCore
        NoCore for fewer than 20 points or a flat profile.

    Notes
    -----
    The fitting regions are in the module docstring.

    References
    ----------
    ISO 13565-3:1998 (material probability curve).
    """
    z = as_heights(z_um).reshape(-1)
    if z.size < _MIN_POINTS:
        return NoCore(f"no fit for Rpq/Rvq: {z.size} points, at least {_MIN_POINTS} needed")
    mr, h = material_ratio_curve(z) if curve is None else curve
    if h[0] <= h[-1]:
        return NoCore("no fit for Rpq/Rvq: the profile is flat")
    x = np.linspace(_STD_NORMAL.inv_cdf(0.005), _STD_NORMAL.inv_cdf(0.995), PROBABILITY_GRID_POINTS)
    y = np.interp(_normal_cdf(x) * 100.0, mr, h)
    m = x.size
    least = max(2, m // 10)
    sse_left = _line_sse(x, y)  # [k-1]: fit of the first k points
    sse_right = _line_sse(x[::-1], y[::-1])[::-1]  # [k]: fit of the points from k on
    ks = np.arange(least, m - least + 1)  # left part = x[:k], right part = x[k:]
    total = sse_left[ks - 1] + sse_right[ks]
    k = int(ks[np.argmin(total)])
    a1, b1 = np.polyfit(x[:k], y[:k], 1)
    a2, b2 = np.polyfit(x[k:], y[k:], 1)
    x_break = 0.5 * (x[k - 1] + x[k])
    x_int = (b2 - b1) / (a1 - a2) if a1 != a2 else np.nan
    x_t = x_int if np.isfinite(x_int) and x[0] <= x_int <= x[-1] else x_break
    return ProbabilityParameters(
        Rpq=float(-a1), Rvq=float(-a2), Rmq=float(_STD_NORMAL.cdf(float(x_t)) * 100.0)
    )


# The standard normal distribution from the standard library: its cdf and inverse are exact to
# double precision, and importing scipy.special for them would cost a check 0.4 s of start-up.
_STD_NORMAL = statistics.NormalDist()


def _normal_cdf(x: np.ndarray) -> np.ndarray:
    """Φ(x) for a short array (the probability grid), through math.erfc: exact in both tails."""
    return np.array([0.5 * math.erfc(-v / math.sqrt(2.0)) for v in x.tolist()])
