"""Height parameters of many roughness profiles at once, and their gradients.

The uncertainty model evaluates the same parameter on thousands of perturbed copies of one
evaluated profile. These functions take the evaluation length as the last axis of an array
(``(..., n_points)``, heights from the mean line in µm) and return one value per row, by the
same formulas as :mod:`speccheck.parameters.amplitude` (ISO 4287:1997 4.1, 4.2; ISO 21920-2:2021),
section means where the parameter is a section parameter. :func:`gradient` gives ∂P/∂zᵢ on one
profile, for the first-order (GUM) propagation of noise.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

from speccheck.parameters import amplitude

__all__ = ["SUPPORTED", "HeightParameter", "height_parameter", "evaluate_rows", "gradient"]

# base name -> degree of homogeneity in the heights: P(s·z) = s^d · P(z)
SUPPORTED: dict[str, int] = {"a": 1, "q": 1, "sk": 0, "ku": 0, "p": 1, "v": 1, "z": 1, "t": 1}

_FUNCTIONS = {
    "a": amplitude.arithmetic_mean_height,
    "q": amplitude.root_mean_square_height,
    "sk": amplitude.skewness,
    "ku": amplitude.kurtosis,
    "p": amplitude.max_peak_height,
    "v": amplitude.max_valley_depth,
    "z": amplitude.max_height,
}


@dataclass(frozen=True)
class HeightParameter:
    """A supported parameter as evaluated: base name, sections it is averaged over (1 = field)."""

    base: str
    sections: int
    basis: Literal["field", "section"]

    @property
    def degree(self) -> int:
        return SUPPORTED[self.base]


def height_parameter(base: str, *, sections: int, definitions: str) -> HeightParameter | None:
    """The parameter as the pipeline computes it, or None if the model does not support it."""
    from speccheck.parameters.names import basis

    if base not in SUPPORTED:
        return None
    b = basis(base, definitions) if sections > 1 else "field"
    return HeightParameter(base, sections if b == "section" else 1, b)


def _rows(z: np.ndarray, sections: int) -> np.ndarray:
    n = z.shape[-1]
    m = n // sections
    return z[..., : m * sections].reshape(*z.shape[:-1], sections, m)


def evaluate_rows(param: HeightParameter, z_um: np.ndarray) -> np.ndarray:
    """The parameter of every row of ``z_um`` (shape (..., n_points), µm from the mean line).

    Returns shape (...,): µm, or no unit for Rsk, Rku (ISO 4287:1997 4.1, 4.2).
    """
    z = np.asarray(z_um, dtype=np.float64)
    if param.base == "t":
        return np.max(z, axis=-1) - np.min(z, axis=-1)
    rows = _rows(z, param.sections)
    flat = rows.reshape(-1, rows.shape[-1])  # the amplitude functions take 1-D or 2-D arrays
    per = np.asarray(_FUNCTIONS[param.base](flat)).reshape(rows.shape[:-1])
    return np.mean(per, axis=-1)


def gradient(param: HeightParameter, z_um: np.ndarray) -> np.ndarray:
    """∂P/∂zᵢ of one profile (1-D, µm from the mean line), same shape (ISO 4287:1997 4.1, 4.2).

    Derived from the formulas: Ra → sign(z)/m, Rq → z/(m Rq), Rsk = m₃/m₂^1.5 and Rku = m₄/m₂²
    by the quotient rule on the moments mₖ = mean zᵏ, Rp/Rv/Rz/Rt → ±1 at the extreme points;
    each section's gradient divided by the number of sections averaged.
    """
    z = np.asarray(z_um, dtype=np.float64)
    s = param.sections if param.base != "t" else 1
    rows = _rows(z, s)
    m = rows.shape[-1]
    g = np.zeros_like(rows)
    idx = np.arange(s)
    if param.base == "a":
        g = np.sign(rows) / m
    elif param.base == "q":
        rq = np.sqrt(np.mean(rows * rows, axis=-1, keepdims=True))
        g = np.divide(rows, m * rq, out=np.zeros_like(rows), where=rq > 0)
    elif param.base in ("sk", "ku"):
        m2 = np.mean(rows**2, axis=-1, keepdims=True)
        k = 3 if param.base == "sk" else 4
        mk = np.mean(rows**k, axis=-1, keepdims=True)
        e = k / 2.0
        g = (k * rows ** (k - 1) / m) / m2**e - e * mk * (2.0 * rows / m) / m2 ** (e + 1.0)
    else:
        if param.base in ("p", "z", "t"):
            g[idx, np.argmax(rows, axis=-1)] += 1.0
        if param.base in ("v", "z", "t"):
            g[idx, np.argmin(rows, axis=-1)] -= 1.0
    out = np.zeros_like(z)
    out[: s * m] = (g / s).reshape(-1)
    return out
