"""Benchmarks: print a Markdown table of median wall times (not part of the test run).

    python bench/run.py            # all cases
    python bench/run.py --repeats 3

Cases
-----
- Full parameter set (``compute_parameters``) on a 5.6 mm trace (λc 0.8 mm, 5 sections,
  λs 2.5 µm, least-squares line) of 10^4 to 10^7 points: dx = 5.6 mm / N, against the bound of
  one ``numpy.fft`` rfft+irfft pair plus one sort of the same heights, timed in the same run.
  Target: ≤ 5 × the bound at 10^6 points.
- Robust Gaussian regression filter (ISO 16610-31, order 2) on 10^6 points at dx 0.5 µm,
  λc 0.8 mm, a plateau-honed profile in closed form + seeded noise, against one Gaussian
  mean-line pass on the same profile. Target ≤ 15 × one pass.
- Gaussian mean line (ISO 16610-21) at dx 0.5 µm, λc 0.8 mm and 0.25 mm, 10^5 and 10^6 points:
  ours (FFT) vs direct convolution with the same kernel (``np.convolve``) vs
  ``scipy.ndimage.gaussian_filter1d`` with σ = αλc/√(2π)/dx samples (its default truncation,
  4σ). Target: ours ≤ 1.5 × scipy.
"""

from __future__ import annotations

import argparse
import math
import os
import platform
import sys

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

from _timing import median_seconds  # noqa: E402

from speccheck.filters import (  # noqa: E402
    ALPHA,
    gaussian_kernel,
    gaussian_mean_line,
    robust_mean_line,
)
from speccheck.parameters.conditions import Conditions  # noqa: E402

ROWS: list[tuple[str, str, str, str, str]] = []


def _row(case: str, n: int, seconds: float | None, target: str, verdict: str) -> None:
    t = "–" if seconds is None else f"{seconds * 1e3:.1f}"
    ROWS.append((case, f"{n:.0e}".replace("+0", ""), t, target, verdict))


def _honed_profile(n: int, dx_um: float, seed: int = 2041) -> np.ndarray:
    """Plateau (fine noise + 0.2 µm sine) with deep valleys every ~150 µm; heights in µm."""
    rng = np.random.default_rng(seed)
    x = np.arange(n) * dx_um
    z = 0.15 * rng.normal(size=n) + 0.2 * np.sin(2 * np.pi * x / 90.0)
    valleys = (x % 150.0) < 12.0
    z[valleys] -= 3.0
    return z


def _fft_sort_bound(z: np.ndarray) -> None:
    """The reference: one rfft + irfft pair and one sort of the same heights."""
    np.fft.irfft(np.fft.rfft(z), z.size)
    np.sort(z)


def bench_parameters(repeats: int) -> None:
    """Full parameter set against one rfft+irfft pair plus one sort, 10^4 to 10^7 points."""
    from speccheck.parameters.compute import compute_parameters

    cond = Conditions.standard(0.8)
    for n in (10**4, 10**5, 10**6, 10**7):
        dx_um = cond.required_trace_mm * 1000.0 / n
        z = _honed_profile(n, dx_um)
        reps = repeats if n <= 10**5 else max(1, repeats // 2)
        sec, res = median_seconds(
            lambda z=z, dx_um=dx_um: compute_parameters(z, dx_um=dx_um, conditions=cond), reps
        )
        bound, _ = median_seconds(lambda z=z: _fft_sort_bound(z), reps)
        ratio = sec / bound
        if n == 10**6:
            target, verdict = "≤ 5 × bound", ("met" if ratio <= 5 else "MISSED")
        else:
            target, verdict = "", "–"
        if not res:
            verdict = "no result"
        _row(
            f"full parameter set (dx {dx_um:.3g} µm)",
            n,
            sec,
            target,
            f"{verdict} ({ratio:.1f} × bound)",
        )
        _row("rfft + irfft + sort (reference bound)", n, bound, "", "reference")


def bench_robust(repeats: int) -> None:
    """Robust regression (ISO 16610-31) against one Gaussian mean-line pass, same profile."""
    n, dx_um = 10**6, 0.5
    z = _honed_profile(n, dx_um)
    reps = max(1, repeats // 2)
    gauss, _ = median_seconds(lambda: gaussian_mean_line(z, dx_um=dx_um, cutoff_um=800.0), repeats)
    for order, target in ((2, 15.0), (0, None)):
        sec, fit = median_seconds(
            lambda order=order: robust_mean_line(z, dx_um=dx_um, cutoff_um=800.0, order=order),
            reps,
        )
        ratio = sec / gauss
        verdict = "–" if target is None else ("met" if ratio <= target else "MISSED")
        _row(
            f"robust regression order {order} ({fit.iterations} it.)",
            n,
            sec,
            "" if target is None else f"≤ {target:g} × Gaussian",
            f"{verdict} ({ratio:.1f} × one Gaussian pass)",
        )
    _row("Gaussian mean line, one pass (reference)", n, gauss, "", "reference")


def bench_gaussian(repeats: int, direct: bool) -> None:
    from scipy.ndimage import gaussian_filter1d

    dx_um = 0.5
    rng = np.random.default_rng(3310)
    for lc_um in (800.0, 250.0):
        k = gaussian_kernel(dx_um=dx_um, cutoff_um=lc_um)
        sigma = ALPHA * lc_um / math.sqrt(2.0 * math.pi) / dx_um
        for n in (10**5, 10**6):
            z = rng.normal(size=n)
            ours, _ = median_seconds(
                lambda z=z, lc_um=lc_um: gaussian_mean_line(z, dx_um=dx_um, cutoff_um=lc_um),
                repeats,
            )
            ref, _ = median_seconds(lambda z=z, s=sigma: gaussian_filter1d(z, s), repeats)
            tag = f"λc {lc_um / 1000:g} mm, {k.size} taps"
            ratio = ours / ref
            _row(
                f"Gaussian, ours (FFT), {tag}",
                n,
                ours,
                "≤ 1.5 × scipy",
                f"{'met' if ratio <= 1.5 else 'MISSED'} ({ratio:.2f} × scipy)",
            )
            _row(f"Gaussian, scipy gaussian_filter1d, {tag}", n, ref, "", "reference")
            if direct:
                reps = repeats if n <= 10**5 else 1
                dsec, _ = median_seconds(
                    lambda z=z, k=k: np.convolve(z, k, mode="same"), reps, warmup=0
                )
                _row(f"Gaussian, direct np.convolve, {tag}", n, dsec, "", "–")


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=5, help="timed calls per case (median)")
    ap.add_argument("--no-direct", action="store_true", help="skip the slow direct convolution")
    args = ap.parse_args(argv)
    load_before = os.getloadavg()[0]
    bench_parameters(args.repeats)
    bench_robust(args.repeats)
    bench_gaussian(args.repeats, direct=not args.no_direct)
    import scipy

    print(
        f"Python {platform.python_version()}, numpy {np.__version__}, scipy {scipy.__version__}, "
        f"{os.cpu_count()} CPUs; median of {args.repeats} runs (fewer for the slowest cases); "
        f"1-min load average {load_before:.1f} before, {os.getloadavg()[0]:.1f} after "
        f"(other processes inflate every figure)\n"
    )
    print("| case | points | median ms | target | result |")
    print("|---|---|---|---|---|")
    for row in ROWS:
        print("| " + " | ".join(row) + " |")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
