"""ISO 16610-21 Gaussian profile filter (mean line), also used as the λs low-pass.

Weighting function s(x) = exp(-π (x / (α λc))²) / (α λc) with α = √(ln 2 / π), so the mean
line passes exp(-π (α λc / λ)²) of a sine of wavelength λ: 50 % at λ = λc, zero phase.

Discrete kernel: s sampled at k·dx for |k·dx| ≤ λc and normalised to sum 1. The mass of s
beyond ±λc is erfc(√π / α) = 9.5e-8, so truncation changes the transmission by < 1e-7
(at ±λc/2 it would be 0.76 % of the mass and 48.9 % instead of 50 % at λc).

Convolution by FFT (overlap-save blocks, or one FFT of the whole profile for kernels long
against it), O(N log N) at most. Ends: the profile is not
extended; each output point is the weighted mean of the heights that exist under the kernel
(the convolution with zero padding divided by the kernel mass inside the profile). That is the
zeroth-order Gaussian regression at the ends (ISO 16610-28 discusses end effects); the first and
last λc are still biased on sloped or curved profiles, which is why
:class:`speccheck.parameters.conditions.Conditions` leaves one λc of run-in and run-out.
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np

from speccheck.filters._checks import as_heights, positive_length

__all__ = [
    "ALPHA",
    "gaussian_kernel",
    "gaussian_mean_line",
    "gaussian_lowpass",
    "mean_line_transmission",
]

#: ISO 16610-21 constant α = √(ln 2 / π) = 0.4697...
ALPHA = math.sqrt(math.log(2.0) / math.pi)

#: Kernel half-width in cut-offs (see module docstring for the truncation error).
TRUNCATE_CUTOFFS = 1.0


def mean_line_transmission(wavelength_um, *, cutoff_um: float) -> np.ndarray:
    """Mean-line transmission exp(-π(αλc/λ)²) (ISO 16610-21:2011 4.2, clause from memory)."""
    lam = np.asarray(wavelength_um, dtype=np.float64)
    return np.exp(-math.pi * (ALPHA * float(cutoff_um) / lam) ** 2)


def gaussian_kernel(
    *, dx_um: float, cutoff_um: float, alpha: float = ALPHA, truncate: float = TRUNCATE_CUTOFFS
) -> np.ndarray:
    """Discrete ISO 16610-21 weighting function, normalised to sum 1 (ISO 16610-21:2011 4.2).

    Parameters
    ----------
    dx_um:
        Sampling spacing in µm.
    cutoff_um:
        Cut-off wavelength in µm (λc, or λs for the short-wave filter).
    alpha:
        Width constant; 0.4697 for ISO 16610-21, 0.7309 for the order-2 regression filter.
    truncate:
        Half-width in cut-offs × (alpha / ALPHA); 1 keeps |x| ≤ λc for the Gaussian.

    Returns
    -------
    ndarray
        Odd length 2r + 1, symmetric, float64, sum 1.
    """
    dx = positive_length(dx_um, "dx_um")
    lc = positive_length(cutoff_um, "cutoff_um")
    half_um = truncate * lc * alpha / ALPHA
    r = int(math.floor(half_um / dx + 1e-9))
    x = np.arange(-r, r + 1, dtype=np.float64) * dx
    s = np.exp(-math.pi * (x / (alpha * lc)) ** 2)
    return s / s.sum()


def _edge_mass(kernel: np.ndarray, n: int) -> np.ndarray:
    """Kernel mass that falls inside a profile of n points, for every output point."""
    from speccheck.filters._blockconv import ones_response

    return ones_response(kernel, n)


@lru_cache(maxsize=8)
def _kernel_spectrum(dx_um: float, cutoff_um: float, nfft: int) -> np.ndarray:
    return np.fft.rfft(gaussian_kernel(dx_um=dx_um, cutoff_um=cutoff_um), nfft)


@lru_cache(maxsize=8)
def _block_convolver(n: int, dx_um: float, cutoff_um: float):
    from speccheck.filters._blockconv import BlockConvolver

    return BlockConvolver(n, [gaussian_kernel(dx_um=dx_um, cutoff_um=cutoff_um)])


def _convolve_same(z: np.ndarray, dx_um: float, cutoff_um: float, r: int) -> np.ndarray:
    """Zero-padded convolution with the Gaussian kernel of half-width r, centred output.

    Kernels short against the profile (16 K ≤ N): overlap-save in blocks of ≥ 4 K
    (speccheck.filters._blockconv); otherwise one FFT of the whole zero-padded profile. Kernel
    spectra are cached (the same λc is applied several times per evaluation). Both ways are
    exact to rounding; the choice is by speed only (bench/run.py).
    """
    from speccheck.filters._blockconv import fast_length

    n, size = z.size, 2 * r + 1
    if 16 * size <= n:
        bc = _block_convolver(n, dx_um, cutoff_um)
        return bc.convolve(bc.transform(z), 0)
    nfft = fast_length(n + size - 1)
    spec = _kernel_spectrum(dx_um, cutoff_um, nfft)
    return np.fft.irfft(np.fft.rfft(z, nfft) * spec, nfft)[r : r + n]


def gaussian_mean_line(z_um, *, dx_um: float, cutoff_um: float) -> np.ndarray:
    """Gaussian mean line of a profile (ISO 16610-21:2011 4.2, clause from memory).

    Parameters
    ----------
    z_um:
        Heights in µm, uniformly spaced, finite.
    dx_um:
        Sampling spacing in µm.
    cutoff_um:
        λc in µm.

    Returns
    -------
    ndarray
        Mean line in µm, same length as ``z_um``. Roughness = z − mean line.

    Notes
    -----
    FFT convolution with the truncated, normalised kernel; at the ends the weighted mean over
    the heights present (module docstring).

    References
    ----------
    ISO 16610-21:2011 Geometrical product specifications (GPS) -- Filtration -- Part 21:
    Linear profile filters: Gaussian filters.
    """
    z = as_heights(z_um, min_points=1)
    dx = positive_length(dx_um, "dx_um")
    lc = positive_length(cutoff_um, "cutoff_um")
    k = gaussian_kernel(dx_um=dx, cutoff_um=lc)
    if k.size == 1:
        return z.copy()
    out = _convolve_same(z, dx, lc, (k.size - 1) // 2)
    out /= _edge_mass(k, z.size)
    return out


def gaussian_lowpass(z_um, *, dx_um: float, lambda_s_um: float) -> np.ndarray:
    """λs short-wave filter: the ISO 16610-21 Gaussian at λs (ISO 3274:1996 3.4.1; ISO 16610-21).

    Returns the primary profile (heights in µm) from the traced profile.
    """
    return gaussian_mean_line(z_um, dx_um=dx_um, cutoff_um=lambda_s_um)
