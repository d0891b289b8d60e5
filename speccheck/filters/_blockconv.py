"""Overlap-save FFT convolution of one grid with several fixed kernels.

The robust regression convolves the same two signals (δ and δ·z) with up to five kernels in
every iteration. Transforming each signal once per iteration, in blocks of a few times the
kernel length, and reusing precomputed kernel spectra is several times faster than full-length
FFTs (the blocks stay in cache; see bench/run.py).
"""

from __future__ import annotations

import numpy as np

__all__ = ["BlockConvolver", "ones_response", "fast_length"]


def fast_length(n: int) -> int:
    """Smallest 5-smooth length (2^a 3^b 5^c) ≥ n: a fast size for numpy's pocketfft."""
    best = _pow2_at_least(n)
    p5 = 1
    while p5 < best:
        p35 = p5
        while p35 < best:
            m = p35 * _pow2_at_least(-(-n // p35))  # least power of two taking p35 to ≥ n
            best = min(best, m)
            p35 *= 3
        p5 *= 5
    return best


def ones_response(kernel: np.ndarray, n: int) -> np.ndarray:
    """'same' convolution of n ones with an odd-length kernel, in O(n + K).

    Output i sums the kernel taps j with 0 ≤ i + r − j ≤ n − 1: the whole kernel inside the
    profile, a difference of cumulative sums within r points of either end.
    """
    r = (kernel.size - 1) // 2
    c = np.concatenate(([0.0], np.cumsum(kernel)))
    out = np.full(n, c[-1])
    edge = np.arange(n) if n <= 2 * r else np.concatenate((np.arange(r), np.arange(n - r, n)))
    lo = np.maximum(0, edge + r - (n - 1))
    hi = np.minimum(2 * r, edge + r)
    out[edge] = c[hi + 1] - c[lo]
    return out


def _pow2_at_least(n: int) -> int:
    return 1 << max(0, int(n - 1).bit_length())


class BlockConvolver:
    """Zero-padded 'same' convolutions of length-n signals with odd, centred kernels.

    Parameters
    ----------
    n:
        Signal length.
    kernels:
        Kernels of one common odd length 2r + 1, centred on index r.

    Notes
    -----
    Overlap-save: block b holds padded samples [bS, bS + L) with S = L − 2r; its circular
    convolution is exact for outputs 2r … L − 1, which are 'same' outputs bS … bS + S − 1 when
    the signal is preceded by r zeros.
    """

    def __init__(self, n: int, kernels: list[np.ndarray]):
        size = kernels[0].size
        if size % 2 != 1 or any(k.size != size for k in kernels):
            raise ValueError("kernels must share one odd length")
        self.n = n
        self.r = (size - 1) // 2
        self.block = min(_pow2_at_least(max(4 * size, 8192)), _pow2_at_least(n + size - 1))
        self.step = self.block - 2 * self.r
        self.nblocks = -(-n // self.step)
        self.spectra = [np.fft.rfft(k, self.block) for k in kernels]

    def transform(self, f: np.ndarray) -> np.ndarray:
        """Block spectra of a signal (nblocks × block/2+1)."""
        padded = np.zeros(self.nblocks * self.step + 2 * self.r)
        padded[self.r : self.r + self.n] = f
        blocks = np.lib.stride_tricks.sliding_window_view(padded, self.block)[:: self.step]
        return np.fft.rfft(blocks[: self.nblocks], axis=-1)

    def convolve(self, spectrum: np.ndarray, kernel_index: int) -> np.ndarray:
        """'same' convolution of the transformed signal with kernel ``kernel_index``."""
        y = np.fft.irfft(spectrum * self.spectra[kernel_index], self.block, axis=-1)
        return y[:, 2 * self.r :].reshape(-1)[: self.n]
