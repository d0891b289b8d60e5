"""Form removal before filtering: least-squares line, circular arc, polynomial, or none.

x is the position along the trace (point i at i·dx), z the height. Coefficients are reported
with their units in the key: ``a1_um_per_mm`` is the slope, ``radius_mm`` the arc radius.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from speccheck.errors import SpeccheckError
from speccheck.filters._checks import as_heights, positive_length

__all__ = ["FormFit", "remove_form", "FORM_KINDS"]

FORM_KINDS = ("line", "arc", "poly2", "poly3", "poly4", "poly5", "poly6", "none")


@dataclass(frozen=True)
class FormFit:
    """Result of :func:`remove_form`.

    Attributes
    ----------
    kind:
        ``"line"``, ``"arc"``, ``"polyN"`` or ``"none"``.
    form_um:
        The fitted form, heights in µm at every point.
    residual_um:
        z − form, the profile passed on to the filters.
    coefficients:
        Fit coefficients, the unit in each key. Line and polynomial: ``a<k>_um_per_mm<k>``
        (``a0_um``, ``a1_um_per_mm``, ``a2_um_per_mm2``, ...) of z = Σ a_k x^k, x in mm from the
        first point. Arc: ``radius_mm``, ``centre_x_mm``, ``centre_z_um``, ``convex`` (1 when the
        arc bulges upward, 0 otherwise).
    """

    kind: str
    form_um: np.ndarray
    residual_um: np.ndarray
    coefficients: dict[str, float] = field(default_factory=dict)


def _poly_key(k: int) -> str:
    return "a0_um" if k == 0 else ("a1_um_per_mm" if k == 1 else f"a{k}_um_per_mm{k}")


def _fit_poly(x_mm: np.ndarray, z: np.ndarray, degree: int) -> tuple[np.ndarray, dict[str, float]]:
    """Least-squares polynomial in a Legendre basis on x scaled to [-1, 1].

    On a uniform grid the Legendre polynomials are nearly orthogonal, so the normal equations
    (degree + 1 unknowns) are well conditioned (condition number < 20 up to degree 6) and cost
    O(N·degree), much less than a QR of the Vandermonde matrix.
    """
    from numpy.polynomial import legendre as leg

    x0, x1 = float(x_mm[0]), float(x_mm[-1])
    t = (2.0 * x_mm - (x0 + x1)) / (x1 - x0)
    if degree == 1:  # closed form, centred (t has mean 0 on a uniform grid)
        # einsum, not np.dot: a multithreaded BLAS dot of one long vector is slower here
        tc = t - t.mean()
        slope_t = float(np.einsum("i,i->", tc, z) / np.einsum("i,i->", tc, tc))
        form = z.mean() + slope_t * tc
        coef_t = np.array([float(z.mean()) - slope_t * float(t.mean()), slope_t])
    else:
        v = leg.legvander(t, degree)
        coef_l = np.linalg.solve(v.T @ v, v.T @ z)
        form = v @ coef_l
        coef_t = leg.leg2poly(coef_l)
    # z = Σ c_k t^k with t = (2x − (x0 + x1)) / (x1 − x0): expand into powers of x (mm)
    p = np.polynomial.Polynomial(coef_t, domain=[x0, x1], window=[-1.0, 1.0])
    coef = p.convert().coef
    coef = np.pad(coef, (0, degree + 1 - coef.size))
    return form, {_poly_key(k): float(c) for k, c in enumerate(coef)}


def _fit_arc(x_um: np.ndarray, z: np.ndarray) -> tuple[np.ndarray, dict[str, float]]:
    """Circle through (x, z) in µm: algebraic fit (Kåsa), refined by geometric least squares."""
    from scipy.optimize import least_squares

    # centre the data for conditioning
    xm, zm = float(x_um.mean()), float(z.mean())
    xs, zs = x_um - xm, z - zm
    # Kåsa: x² + z² + D x + E z + F = 0, linear least squares
    a = np.column_stack([xs, zs, np.ones_like(xs)])
    rhs = -(xs * xs + zs * zs)
    (d, e, f), _, rank, _ = np.linalg.lstsq(a, rhs, rcond=None)
    xc0, zc0 = -d / 2.0, -e / 2.0
    r0_sq = xc0 * xc0 + zc0 * zc0 - f
    if rank < 3 or not (r0_sq > 0.0 and np.isfinite(r0_sq)):
        raise SpeccheckError("form 'arc': the profile is not curved enough to fit a circle")

    def distances(p: np.ndarray) -> np.ndarray:
        return np.hypot(xs - p[0], zs - p[1]) - p[2]

    start = np.array([xc0, zc0, math.sqrt(r0_sq)])
    sol = least_squares(distances, start, method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15)
    xc, zc, radius = sol.x
    radius = abs(radius)
    convex = float(np.mean(zs - zc)) > 0.0  # data above the centre: the arc bulges upward
    under = radius * radius - (xs - xc) ** 2
    if np.any(under < 0.0):
        raise SpeccheckError(
            f"form 'arc': fitted radius {radius / 1000:g} mm is shorter than half the trace"
        )
    root = np.sqrt(under)
    form = zm + zc + (root if convex else -root)
    coefs = {
        "radius_mm": float(radius) / 1000.0,
        "centre_x_mm": float(xc + xm) / 1000.0,
        "centre_z_um": float(zc + zm),
        "convex": 1.0 if convex else 0.0,
    }
    return form, coefs


def remove_form(z_um, *, dx_um: float, form: str = "line") -> FormFit:
    """Remove the nominal form by least squares (ISO 4287:1997 3.1.6 / ISO 3274:1996 3.5 primary
    profile after form removal).

    Parameters
    ----------
    z_um:
        Heights in µm.
    dx_um:
        Sampling spacing in µm.
    form:
        ``"line"`` (default), ``"arc"``, ``"poly2"`` … ``"poly6"``, or ``"none"``.

    Returns
    -------
    FormFit

    Notes
    -----
    Line: closed-form least squares. Polynomials: least squares in a Legendre basis with x
    scaled to [-1, 1] (normal equations, well conditioned on a uniform grid).
    Arc: geometric (orthogonal-distance) least squares circle, started from the algebraic
    (Kåsa) circle and refined with ``scipy.optimize.least_squares``; x and z both in µm.
    """
    z = as_heights(z_um)
    dx = positive_length(dx_um, "dx_um")
    if form not in FORM_KINDS:
        raise SpeccheckError(f"unknown form {form!r} (known: {', '.join(FORM_KINDS)})")
    x_um = np.arange(z.size, dtype=np.float64) * dx
    if form == "none":
        shape = np.zeros_like(z)
        coefs: dict[str, float] = {}
    elif form == "arc":
        if z.size < 3:
            raise SpeccheckError(f"form 'arc' needs at least 3 points, got {z.size}")
        shape, coefs = _fit_arc(x_um, z)
    else:
        degree = 1 if form == "line" else int(form[4:])
        if z.size <= degree:
            raise SpeccheckError(f"form {form!r} needs more than {degree} points, got {z.size}")
        shape, coefs = _fit_poly(x_um / 1000.0, z, degree)
    return FormFit(form, shape, z - shape, coefs)
