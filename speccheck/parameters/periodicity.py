"""Is a roughness profile periodic? The test that ``periodic: auto`` runs before ISO 4288 7.2.

ISO 4288:1996 7.2 chooses the cut-off of a periodic profile by RSm (Table 3) and of a
non-periodic one by Ra or Rz (Tables 1, 2), but leaves the judgement "periodic" to the
operator. speccheck decides it by the normalised autocorrelation of the roughness profile
(common practice, no source; threshold and search range are our choice):

    r(τ) = Σ z(x) z(x + τ) / ((N − τ) · mean z²)

over lags τ up to half the evaluation length. The profile counts as periodic when r has, after
its first zero crossing, a first secondary maximum (the maximum of the first positive lobe) of
at least :data:`PERIODIC_CORRELATION` (0.5). The lag of
that maximum is the period and is reported with r as the evidence. A sine gives r ≈ 1 at its
wavelength; Gaussian random roughness with a short correlation length gives |r| of order
1/√(number of correlation lengths), well below 0.5.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["PERIODIC_CORRELATION", "Periodicity", "periodicity"]

#: Autocorrelation at the first secondary maximum from which a profile counts as periodic.
PERIODIC_CORRELATION = 0.5


@dataclass(frozen=True)
class Periodicity:
    """The result of :func:`periodicity`; truthy when periodic."""

    periodic: bool
    correlation: float  # r at the first secondary maximum (NaN when none was found)
    lag_mm: float | None  # its lag, the period of a periodic profile
    evidence: str  # one line, for output

    def __bool__(self) -> bool:
        return self.periodic


def periodicity(z_um, *, dx_um: float) -> Periodicity:
    """Periodic or not, by the autocorrelation test of the module docstring (our choice).

    Parameters
    ----------
    z_um : array_like
        Roughness heights from the mean line over the evaluation length, µm.
    dx_um : float
        Sampling spacing, µm.
    """
    z = np.asarray(z_um, dtype=np.float64).reshape(-1)
    z = z - z.mean()
    n = z.size
    power = float(np.mean(z * z))
    if n < 16 or not power > 0.0:
        return Periodicity(False, float("nan"), None, "no texture to correlate: non-periodic")
    size = 1 << int(2 * n - 1).bit_length()
    spec = np.fft.rfft(z, size)
    acf = np.fft.irfft(spec * np.conj(spec), size)[: n // 2]
    r = acf / ((n - np.arange(acf.size)) * power)
    negative = np.flatnonzero(r < 0.0)
    if negative.size == 0:
        return Periodicity(
            False, float("nan"), None, "autocorrelation never falls below zero: non-periodic"
        )
    # the first positive lobe after the first zero crossing holds the first secondary maximum
    first_neg = int(negative[0])
    back = np.flatnonzero(r[first_neg:] > 0.0)
    if back.size == 0:
        return Periodicity(False, float("nan"), None, "no secondary maximum: non-periodic")
    lobe_start = first_neg + int(back[0])
    ends = np.flatnonzero(r[lobe_start:] < 0.0)
    lobe_end = lobe_start + int(ends[0]) if ends.size else r.size
    k = lobe_start + int(np.argmax(r[lobe_start:lobe_end]))
    value = float(r[k])
    lag_mm = k * dx_um / 1000.0
    periodic = value >= PERIODIC_CORRELATION
    verdict = "periodic" if periodic else "non-periodic"
    return Periodicity(
        periodic,
        value,
        lag_mm,
        f"autocorrelation {value:.2f} at lag {lag_mm:.4g} mm "
        f"({'≥' if periodic else '<'} {PERIODIC_CORRELATION:g}): {verdict}",
    )
