"""ISO 16610-31 robust Gaussian regression filter, and the plain Gaussian regression filter.

At every point x0 a polynomial p of order 0 or 2 in the local coordinate u = (x − x0) is fitted
to the heights by weighted least squares, weights s(u)·δ_i: s the Gaussian weighting function,
δ_i the robustness weight of point i. The mean line is p(0).

Because δ depends only on the point, each sum of the normal equations is a convolution of a
fixed kernel with δ or δ·z:

    M_k(x0) = Σ_i s(u_i) u_i^k δ_i        (k = 0 … 2·order)
    b_k(x0) = Σ_i s(u_i) u_i^k δ_i z_i    (k = 0 … order)

so one iteration costs a few FFTs, O(N log N), whatever the kernel width. u is scaled by the
kernel width γλc, so the moments are of order one and the 3 × 3 systems stay well conditioned;
they are solved in closed form (Cramer's rule), vectorised.

Width constant γ: the regression of order 0 with s is the ISO 16610-21 Gaussian (γ = α =
0.4697). For order 2 the transfer function of the local quadratic fit with a Gaussian weight
of standard deviation σ is H(ω) = (1 + σ²ω²/2)·exp(-σ²ω²/2); 50 % at λc needs
(1 + t)e^(-t) = 1/2, t = 1.6783, γ = √(t/π) = 0.7309 (derivation in tests/test_filters.py).
Kernel half-width: order 0, ±λc (exactly the ISO 16610-21 kernel); order 2, ±1.25·λc·γ/α =
±1.95 λc. The order-2 fit uses moments up to u⁴, whose tails weigh more: cut at ±1.56 λc the
transmission at λc is off by 1.1e-5, at ±1.95 λc by 8e-9 (measured on a sine at λc).

Robustness (ISO 16610-31 biweight): r = z − w, c = 4.4478 · median|r|,
δ = (1 − (r/c)²)² for |r| < c, else 0. Iterate from δ = 1 until the mean line changes by less
than ``tol_um`` (default 1e-4 · median|r|) or ``max_iterations`` is reached.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from speccheck.errors import SpeccheckError
from speccheck.filters._blockconv import BlockConvolver, ones_response
from speccheck.filters._checks import as_heights, positive_length
from speccheck.filters.gaussian import ALPHA, gaussian_kernel

__all__ = [
    "GAMMA_ORDER2",
    "BIWEIGHT_C",
    "RobustFit",
    "regression_mean_line",
    "robust_mean_line",
]

#: Width constant of the order-2 Gaussian regression filter, √(t/π) with (1 + t)e^(-t) = 1/2.
GAMMA_ORDER2 = 0.7309
#: Kernel half-width in units of λc·γ/α: 1 for order 0 (the Gaussian's ±λc), 1.25 for order 2.
_TRUNCATE = {0: 1.0, 2: 1.25}
#: Biweight constant of ISO 16610-31 (c = 4.4478 · median|r|).
BIWEIGHT_C = 4.4478


def _gamma(order: int) -> float:
    if order == 0:
        return ALPHA
    if order == 2:
        # refine the published 4-digit constant: solve (1 + t) e^-t = 1/2 by Newton
        t = 1.6783
        for _ in range(5):
            f = (1.0 + t) * math.exp(-t) - 0.5
            t -= f / (-t * math.exp(-t))
        return math.sqrt(t / math.pi)
    raise SpeccheckError(f"order must be 0 or 2, got {order!r}")


@dataclass(frozen=True)
class RobustFit:
    """Result of :func:`robust_mean_line`.

    Attributes
    ----------
    mean_line_um:
        The robust mean line in µm.
    weights:
        Final robustness weights δ (0 … 1), one per point.
    iterations:
        Number of regressions computed (the first, with δ = 1, counts).
    converged:
        True when the mean line changed by less than the tolerance in the last iteration.
    order:
        Order of the local polynomial, 0 or 2.
    change_um:
        Largest change of the mean line in the last iteration.
    """

    mean_line_um: np.ndarray
    weights: np.ndarray
    iterations: int
    converged: bool
    order: int
    change_um: float

    @property
    def message(self) -> str:
        state = "converged" if self.converged else "did not converge"
        return (
            f"robust Gaussian regression (order {self.order}) {state} after {self.iterations} "
            f"iterations (last change {self.change_um:.3g} µm)"
        )


class _Regression:
    """Precomputed kernel spectra for repeated weighted regressions on one grid."""

    def __init__(self, n: int, dx_um: float, cutoff_um: float, order: int):
        self.order = order
        gamma = _gamma(order)
        # order 2 uses moments up to u⁴, whose tails weigh more: wider truncation (see docstring)
        s = gaussian_kernel(
            dx_um=dx_um, cutoff_um=cutoff_um, alpha=gamma, truncate=_TRUNCATE[order]
        )
        self.r = (s.size - 1) // 2
        u = np.arange(-self.r, self.r + 1, dtype=np.float64) * dx_um / (gamma * cutoff_um)
        # correlation sum_i h(u_i) f_i = convolution with h(-u) = (-1)^k h(u)
        self.kernels = [s * (-u) ** k for k in range(2 * order + 1)]
        self.conv = BlockConvolver(n, self.kernels)

    def _conv(self, f_spec: np.ndarray, k: int) -> np.ndarray:
        return self.conv.convolve(f_spec, k)

    def fit(
        self, z: np.ndarray, delta: np.ndarray | None, fallback: np.ndarray | None
    ) -> np.ndarray:
        """Mean line for weights ``delta`` (None: all 1, moments by cumulative sums, no FFT)."""
        if delta is None:
            moments = [ones_response(k, self.conv.n) for k in self.kernels]
            fz = self.conv.transform(z)
        else:
            fd = self.conv.transform(delta)
            fz = self.conv.transform(delta * z)
            moments = [self._conv(fd, k) for k in range(len(self.kernels))]
        m0 = moments[0]
        b0 = self._conv(fz, 0)
        # u is scaled by γλc and the kernel sums to 1, so m0 ≤ 1 and, for a full window with
        # δ = 1 (m2 = 1/(2π), m4 = 3/(4π²)), det = 1/(4π³) = 0.008: values below 1e-12 mean
        # (nearly) no weight under the kernel.
        tiny = 1e-12
        with np.errstate(divide="ignore", invalid="ignore"):
            if self.order == 0:
                ok = m0 > tiny
                w = np.divide(b0, m0, out=b0)
            else:
                m1, m2, m3, m4 = moments[1:]
                b1, b2 = self._conv(fz, 1), self._conv(fz, 2)
                # Cramer's rule with the cofactors of the first column (symmetric matrix)
                c0 = m2 * m4
                c0 -= m3 * m3
                c1 = m1 * m4
                c1 -= m2 * m3
                c2 = m1 * m3
                c2 -= m2 * m2
                det = m0 * c0
                det -= m1 * c1
                det += m2 * c2
                num = b0 * c0
                num -= b1 * c1
                num += b2 * c2
                ok = det > tiny
                w = np.divide(num, det, out=num)
                if not ok.all():  # order 0 where the quadratic is undetermined
                    idx = ~ok
                    w[idx] = b0[idx] / m0[idx]
                    ok = m0 > tiny
        if not ok.all():
            w[~ok] = fallback[~ok] if fallback is not None else np.nan
        return w


def regression_mean_line(
    z_um, *, dx_um: float, cutoff_um: float, order: int = 2, weights=None
) -> np.ndarray:
    """Gaussian regression mean line of order 0 or 2 (ISO 16610-31:2016; ISO 16610-21:2011).

    Order 0 with all weights 1 is the ISO 16610-21 Gaussian with weighted-mean ends.

    Parameters
    ----------
    z_um:
        Heights in µm.
    dx_um, cutoff_um:
        Sampling spacing and λc, both in µm.
    order:
        0 or 2.
    weights:
        Point weights δ ≥ 0 (default all 1).

    Returns
    -------
    ndarray
        Mean line in µm; NaN where no point under the kernel has weight.
    """
    z = as_heights(z_um)
    dx = positive_length(dx_um, "dx_um")
    lc = positive_length(cutoff_um, "cutoff_um")
    _gamma(order)
    if weights is None:
        return _Regression(z.size, dx, lc, order).fit(z, None, None)
    delta = np.asarray(weights, dtype=np.float64)
    if delta.shape != z.shape:
        raise SpeccheckError(f"weights must have the shape of z_um {z.shape}, got {delta.shape}")
    if not np.all(np.isfinite(delta) & (delta >= 0.0)):
        raise SpeccheckError("weights must be finite and ≥ 0")
    return _Regression(z.size, dx, lc, order).fit(z, delta, None)


def robust_mean_line(
    z_um,
    *,
    dx_um: float,
    cutoff_um: float,
    order: int = 2,
    max_iterations: int = 50,
    tol_um: float | None = None,
) -> RobustFit:
    """Robust Gaussian regression mean line (ISO 16610-31:2016, biweight; clause from memory: 4).

    Parameters
    ----------
    z_um:
        Heights in µm (form removed first gives the fastest convergence).
    dx_um, cutoff_um:
        Sampling spacing and λc, both in µm.
    order:
        2 (default) or 0.
    max_iterations:
        Cap on regressions; ``converged`` is False when it is reached.
    tol_um:
        Stop when the mean line changes by at most this (default 1e-4 · median|r|).

    Returns
    -------
    RobustFit

    References
    ----------
    ISO 16610-31:2016 Filtration -- Robust profile filters: Gaussian regression filters.
    """
    z = as_heights(z_um)
    dx = positive_length(dx_um, "dx_um")
    lc = positive_length(cutoff_um, "cutoff_um")
    _gamma(order)
    if int(max_iterations) < 1:
        raise SpeccheckError(f"max_iterations must be ≥ 1, got {max_iterations!r}")
    reg = _Regression(z.size, dx, lc, order)
    delta = np.ones_like(z)
    w = reg.fit(z, None, None)  # first pass: δ = 1
    scale = float(np.max(np.abs(z)))
    change = math.inf
    for it in range(2, int(max_iterations) + 1):
        q = np.abs(z - w)  # |r|, turned into δ in place below
        med = float(np.median(q))
        if med <= 1e-12 * scale:
            # the profile is its own mean line (to rounding): nothing to weight
            return RobustFit(w, delta, it - 1, True, order, 0.0)
        # biweight: δ = (1 − (r/c)²)² for |r| < c, else 0; c = 4.4478 · median|r|
        q *= 1.0 / (BIWEIGHT_C * med)
        np.square(q, out=q)
        np.subtract(1.0, q, out=q)
        np.maximum(q, 0.0, out=q)
        delta = np.square(q, out=q)
        w_new = reg.fit(z, delta, w)
        change = float(np.max(np.abs(w_new - w)))
        w = w_new
        tol = 1e-4 * med if tol_um is None else float(tol_um)
        if change <= tol:
            return RobustFit(w, delta, it, True, order, change)
    return RobustFit(w, delta, int(max_iterations), False, order, change)
