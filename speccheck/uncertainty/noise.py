"""Instrument noise through the roughness filter: noise bandwidth and filtered noise in batches.

The residual noise of a stylus instrument is modelled as white noise of standard deviation σ
per sampled point (common practice, no source). The roughness profile passes it through the
λs low-pass and the λc high-pass of ISO 16610-21, so its Rq is σ·√g, with g the noise
bandwidth factor: g = Σ|H(f)|² / n over the discrete frequencies, H the transfer of the two
filters. :func:`noise_bandwidth_closed_form` gives the same factor from the continuous Gaussian
transfer functions, a closed form used to check the discrete one.
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np

__all__ = [
    "noise_bandwidth",
    "noise_bandwidth_closed_form",
    "roughness_transfer",
    "filtered_noise",
]


@lru_cache(maxsize=16)
def roughness_transfer(
    nfft: int, dx_um: float, lambda_c_um: float, lambda_s_um: float | None
) -> np.ndarray:
    """Real transfer (rfft bins) of the discrete λs low-pass times (1 − λc mean line).

    Both kernels are the truncated, normalised ISO 16610-21 kernels the parameter pipeline
    applies (:func:`speccheck.filters.gaussian.gaussian_kernel`), taken as zero-phase.
    """
    from speccheck.filters.gaussian import gaussian_kernel

    def zero_phase(kernel: np.ndarray) -> np.ndarray:
        r = (kernel.size - 1) // 2
        padded = np.zeros(nfft)
        padded[: r + 1] = kernel[r:]
        if r:
            padded[-r:] = kernel[:r]
        return np.fft.rfft(padded).real

    h = 1.0 - zero_phase(gaussian_kernel(dx_um=dx_um, cutoff_um=lambda_c_um))
    if lambda_s_um is not None:
        h = h * zero_phase(gaussian_kernel(dx_um=dx_um, cutoff_um=lambda_s_um))
    h.setflags(write=False)
    return h


def _nfft(n: int) -> int:
    from speccheck.filters._blockconv import fast_length

    return fast_length(max(int(n), 2))


def noise_bandwidth(*, dx_um: float, lambda_c_um: float, lambda_s_um: float | None) -> float:
    """g = Rq²/σ² of white noise on the roughness profile (discrete filters; Parseval).

    Computed on a period long against λc (at least 8 λc), so the value does not depend on the
    period; dimensionless.
    """
    n = _nfft(max(int(8 * lambda_c_um / dx_um), 4096))
    h = roughness_transfer(n, float(dx_um), float(lambda_c_um), lambda_s_um)
    w = np.full(h.size, 2.0)  # rfft bins stand for two DFT bins except DC and Nyquist
    w[0] = 1.0
    if n % 2 == 0:
        w[-1] = 1.0
    return float(np.sum(w * h * h) / n)


def noise_bandwidth_closed_form(*, dx_um: float, lambda_c_um: float, lambda_s_um: float) -> float:
    """g = 2Δx ∫₀^∞ |Hs(f)(1 − Hc(f))|² df with Gaussian transfers (ISO 16610-21 transmission).

    Hs = exp(−π(αλs f)²), Hc = exp(−π(αλc f)²), α = √(ln 2/π); expanding the square gives three
    Gaussian integrals, ∫₀^∞ exp(−a f²) df = ½√(π/a):
    g = Δx √π [c^-½ − 2 (b + c)^-½ + (2b + c)^-½], b = π(αλc)², c = 2π(αλs)².
    Exact for white noise band-limited at 1/(2Δx) when Hs is negligible there.
    """
    alpha = math.sqrt(math.log(2.0) / math.pi)
    b = math.pi * (alpha * lambda_c_um) ** 2
    c = 2.0 * math.pi * (alpha * lambda_s_um) ** 2
    return dx_um * math.sqrt(math.pi) * (c**-0.5 - 2.0 * (b + c) ** -0.5 + (2.0 * b + c) ** -0.5)


def filtered_noise(
    rng: np.random.Generator,
    count: int,
    n_points: int,
    *,
    sigma_um: float,
    dx_um: float,
    lambda_c_um: float,
    lambda_s_um: float | None,
) -> np.ndarray:
    """``count`` independent realisations of white noise (σ per point) on the roughness profile.

    One rfft and one irfft of a (count, nfft) array: all realisations in one FFT call each.
    Circular filtering of periodic white noise gives exactly stationary filtered noise; the
    first ``n_points`` of each period are returned, shape (count, n_points), µm.
    """
    nfft = _nfft(max(n_points, int(2 * lambda_c_um / dx_um) + 1))
    h = roughness_transfer(nfft, float(dx_um), float(lambda_c_um), lambda_s_um)
    white = rng.standard_normal((count, nfft))
    white *= sigma_um
    out = np.fft.irfft(np.fft.rfft(white, axis=1) * h, nfft, axis=1)
    return out[:, :n_points]
