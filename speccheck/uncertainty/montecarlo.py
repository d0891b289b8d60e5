"""Monte Carlo propagation of distributions (JCGM 101:2008): coverage interval, adaptive trials.

Clause numbers of JCGM 101:2008 are from memory: 7.7 (coverage interval from the ordered
values), 7.9 (adaptive Monte Carlo procedure), 7.9.2 (numerical tolerance from the significant
digits of u(y)), 8 (validation of the GUM framework against Monte Carlo).

Several output quantities can be propagated together (one column each): the procedure stops
when every column is stable.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

__all__ = [
    "CoverageInterval",
    "MonteCarloResult",
    "coverage_interval",
    "numerical_tolerance",
    "batch_size",
    "adaptive_monte_carlo",
]


@dataclass(frozen=True)
class CoverageInterval:
    """Probabilistically symmetric coverage interval [low, high] for coverage probability p."""

    low: float
    high: float
    probability: float


def _ranks(m: int, probability: float) -> tuple[int, int]:
    """1-based ranks (r, r + q) of the interval limits among m ordered values (JCGM 101 7.7.2)."""
    if not 0.0 < probability < 1.0:
        raise ValueError(f"probability must lie in (0, 1), got {probability!r}")
    pm = probability * m
    q = int(round(pm)) if abs(pm - round(pm)) < 1e-9 else int(pm + 0.5)
    if q < 1 or q >= m:
        raise ValueError(f"{m} values are too few for a {probability:g} coverage interval")
    r = (m - q) // 2 if (m - q) % 2 == 0 else (m - q + 1) // 2
    return r, r + q


def _limits(y: np.ndarray, probability: float) -> tuple[np.ndarray, np.ndarray]:
    """Interval limits of each column of y (m, q), by partial sorting."""
    lo, hi = _ranks(y.shape[0], probability)
    part = np.partition(y, (lo - 1, hi - 1), axis=0)
    return part[lo - 1], part[hi - 1]


def coverage_interval(values, *, probability: float = 0.95) -> CoverageInterval:
    """Probabilistically symmetric coverage interval from M model values (JCGM 101:2008 7.7.2).

    q = pM if that is an integer, else the integer part of pM + 1/2; r = (M − q)/2 if that is
    an integer, else the integer part of (M − q + 1)/2; the interval is [y(r), y(r+q)] of the
    values sorted ascending (1-based order statistics). Clause and rule from memory.
    """
    y = np.asarray(values, dtype=np.float64).reshape(-1, 1)
    low, high = _limits(y, probability)
    return CoverageInterval(float(low[0]), float(high[0]), probability)


def numerical_tolerance(u: float, *, digits: int = 2) -> float:
    """δ = ½·10^l where u written with ``digits`` significant digits is c·10^l (JCGM 101 7.9.2).

    Example, derived from the rule: u = 0.0035 with 2 digits is 35 × 10⁻⁴, so δ = 0.00005.
    """
    if not (u > 0.0 and math.isfinite(u)):
        raise ValueError(f"u must be a positive number, got {u!r}")
    if digits < 1:
        raise ValueError(f"digits must be ≥ 1, got {digits!r}")
    l_exp = math.floor(math.log10(u)) - (digits - 1)
    # guard against log10 rounding just below a power of ten
    if round(u / 10.0**l_exp) >= 10**digits:
        l_exp += 1
    return 0.5 * 10.0**l_exp


def batch_size(probability: float) -> int:
    """Trials per batch: max(J, 10⁴), J = ⌈100/(1 − p)⌉ (JCGM 101:2008 7.9.4)."""
    return max(math.ceil(round(100.0 / (1.0 - probability), 6)), 10_000)


@dataclass(frozen=True)
class MonteCarloResult:
    """Outcome of the adaptive procedure over all trials performed, one entry per output."""

    estimate: tuple[float, ...]  # mean of the model values
    standard_uncertainty: tuple[float, ...]  # their standard deviation
    intervals: tuple[CoverageInterval, ...]
    trials: int
    batches: int
    tolerance: tuple[float, ...]  # δ of each output at the last check
    stabilised: bool  # False when max_trials was reached first
    largest_spread: tuple[float, ...]  # max of 2·s over y, u, low, high at the last check
    batch_statistics: np.ndarray  # (batches, 4, outputs): mean, sd, low, high of each batch


def _batch_spread(stats: np.ndarray) -> np.ndarray:
    """Per output, max of 2·s, s² = Σ(x_r − x̄)² / (h(h − 1)) over the h batches (7.9.4)."""
    h = stats.shape[0]
    s = np.sqrt(np.sum((stats - stats.mean(axis=0)) ** 2, axis=0) / (h * (h - 1)))
    return 2.0 * np.max(s, axis=0)


def adaptive_monte_carlo(
    draw: Callable[[np.random.Generator, int], np.ndarray],
    *,
    rng: np.random.Generator,
    probability: float = 0.95,
    tolerance: Callable[[float, float], float],
    batch: int | None = None,
    max_trials: int = 2_000_000,
) -> MonteCarloResult:
    """The adaptive Monte Carlo procedure of JCGM 101:2008 7.9.4.

    Parameters
    ----------
    draw:
        ``draw(rng, M)`` returns M model values of each output, shape (M,) or (M, outputs).
    tolerance:
        ``tolerance(u, U)`` gives the numerical tolerance δ from the current standard
        uncertainty u and half-width U of the interval (7.9.2 uses the significant digits of u:
        ``lambda u, U: numerical_tolerance(u)``; a relative tolerance on U is
        ``lambda u, U: 0.005 * U``).
    batch:
        Trials per batch, M; :func:`batch_size` when None.

    Notes
    -----
    Batches of M trials are added until, for every output, twice the standard deviation of the
    batch averages of y, u(y) and both interval limits is at most δ (step i), using all trials
    for the results (step g). At least two batches are run.
    """
    m = batch or batch_size(probability)
    chunks: list[np.ndarray] = []
    stats: list[np.ndarray] = []
    while True:
        y = np.asarray(draw(rng, m), dtype=np.float64).reshape(m, -1)
        low, high = _limits(y, probability)
        stats.append(np.stack([y.mean(axis=0), y.std(axis=0, ddof=1), low, high]))
        chunks.append(y)
        if len(stats) < 2:
            continue
        every = np.concatenate(chunks)
        lo_all, hi_all = _limits(every, probability)
        u_all = every.std(axis=0, ddof=1)
        delta = np.array(
            [
                tolerance(float(u), 0.5 * float(b - a))
                for u, a, b in zip(u_all, lo_all, hi_all, strict=True)
            ]
        )
        table = np.asarray(stats)
        spread = _batch_spread(table)
        done = bool(np.all(spread <= delta))
        if done or every.shape[0] + m > max_trials:
            return MonteCarloResult(
                tuple(float(v) for v in every.mean(axis=0)),
                tuple(float(v) for v in u_all),
                tuple(
                    CoverageInterval(float(a), float(b), probability)
                    for a, b in zip(lo_all, hi_all, strict=True)
                ),
                every.shape[0],
                len(stats),
                tuple(float(d) for d in delta),
                done,
                tuple(float(s) for s in spread),
                table,
            )
