"""Single sampling plans by attributes: sample sizes and the operating characteristic.

Pure functions, no I/O. The sample size comes from the lot size through the code letters of
ISO 2859-1:1999 (general inspection level II, single sampling, normal inspection); the
acceptance number ``c`` is always given by the user's plan: the master table that pairs an
AQL with ``c`` is not reproduced here.

The operating characteristic (OC) gives the probability of accepting a lot whose fraction
nonconforming is ``p``: P(accept | p) = P(D ≤ c), D the number of nonconforming parts in the
sample. D is binomial (n, p) when the sample is a small part of the lot. When the sample is
more than a tenth of the lot (n/N > 0.1) sampling without replacement matters and D is
hypergeometric: a lot of N parts holding round(p·N) nonconforming ones, n drawn.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

__all__ = [
    "SamplingPlan",
    "OcPoint",
    "code_letter",
    "sample_size_for_letter",
    "plan_for_level",
    "plan_for_sample_size",
    "oc_model",
    "acceptance_probability",
    "oc_curve",
    "fraction_at_probability",
    "HYPERGEOMETRIC_ABOVE",
]

# Sampling fraction n/N above which the hypergeometric model is used (common practice, no
# source: the binomial approximation of sampling without replacement is usually accepted
# up to a sampling fraction of about 10 %).
HYPERGEOMETRIC_ABOVE = 0.1

# ISO 2859-1:1999 Table 1, general inspection level II: (largest lot size, code letter).
_LEVEL_II_LETTERS: tuple[tuple[int, str], ...] = (
    (8, "A"),
    (15, "B"),
    (25, "C"),
    (50, "D"),
    (90, "E"),
    (150, "F"),
    (280, "G"),
    (500, "H"),
    (1200, "J"),
    (3200, "K"),
    (10000, "L"),
    (35000, "M"),
    (150000, "N"),
    (500000, "P"),
)
_LAST_LETTER = "Q"  # 500 001 and over

# ISO 2859-1:1999 Table 2-A, sample size per code letter (single sampling, normal inspection).
SAMPLE_SIZES: dict[str, int] = {
    "A": 2,
    "B": 3,
    "C": 5,
    "D": 8,
    "E": 13,
    "F": 20,
    "G": 32,
    "H": 50,
    "J": 80,
    "K": 125,
    "L": 200,
    "M": 315,
    "N": 500,
    "P": 800,
    "Q": 1250,
    "R": 2000,
}


@dataclass(frozen=True)
class SamplingPlan:
    """A single sampling plan applied to one lot.

    Attributes
    ----------
    lot_size:
        N, parts in the lot.
    sample_size:
        n, parts to inspect; equals ``lot_size`` when every part is inspected.
    acceptance_number:
        c: accept the lot with at most c nonconforming parts in the sample.
    code_letter:
        ISO 2859-1 code letter, or None when the sample size was given directly.
    every_part:
        True when the plan's sample size reached the lot size, so every part is inspected.
    source:
        How the sample size was found, one line for the report.
    """

    lot_size: int
    sample_size: int
    acceptance_number: int
    code_letter: str | None
    every_part: bool
    source: str

    @property
    def model(self) -> Literal["binomial", "hypergeometric"]:
        return oc_model(self.sample_size, self.lot_size)

    def to_dict(self) -> dict[str, object]:
        return {
            "lot_size": self.lot_size,
            "sample_size": self.sample_size,
            "acceptance_number": self.acceptance_number,
            "code_letter": self.code_letter,
            "every_part": self.every_part,
            "source": self.source,
            "oc_model": self.model,
        }


@dataclass(frozen=True)
class OcPoint:
    """One point of the OC curve: fraction nonconforming p (0–1) and P(accept)."""

    fraction_nonconforming: float
    probability_accept: float


def _check_count(name: str, value: int, minimum: int) -> int:
    if isinstance(value, bool) or not isinstance(value, int) or value < minimum:
        raise ValueError(f"{name} must be an integer ≥ {minimum}, got {value!r}")
    return value


def code_letter(lot_size: int, *, level: str = "II") -> str:
    """Sample size code letter for a lot size (ISO 2859-1:1999 Table 1, general level II).

    Parameters
    ----------
    lot_size:
        N ≥ 2 (Table 1 starts at lots of 2).
    level:
        Only the general inspection level ``"II"`` is provided.

    Returns
    -------
    str
        ``"A"`` … ``"Q"``.
    """
    _check_count("lot_size", lot_size, 2)
    if level != "II":
        raise ValueError(f"only general inspection level II is provided, got {level!r}")
    for largest, letter in _LEVEL_II_LETTERS:
        if lot_size <= largest:
            return letter
    return _LAST_LETTER


def sample_size_for_letter(letter: str) -> int:
    """Sample size of a code letter (ISO 2859-1:1999 Table 2-A, single sampling, normal)."""
    try:
        return SAMPLE_SIZES[letter]
    except KeyError:
        raise ValueError(f"unknown code letter {letter!r} (A–R, without I and O)") from None


def plan_for_level(lot_size: int, acceptance_number: int, *, level: str = "II") -> SamplingPlan:
    """Sampling plan from the lot size by code letter (ISO 2859-1:1999 Tables 1 and 2-A).

    When the code letter's sample size reaches the lot size every part is inspected
    (ISO 2859-1:1999 Table 2-A, note: if the sample size equals or exceeds the lot size,
    carry out 100 % inspection; from memory).
    """
    _check_count("acceptance_number", acceptance_number, 0)
    letter = code_letter(lot_size, level=level)
    n = sample_size_for_letter(letter)
    every = n >= lot_size
    source = f"ISO 2859-1 general inspection level {level}, code letter {letter} (n = {n})"
    if every:
        source += f"; n ≥ lot size {lot_size}, every part inspected"
    return SamplingPlan(lot_size, min(n, lot_size), acceptance_number, letter, every, source)


def plan_for_sample_size(lot_size: int, sample_size: int, acceptance_number: int) -> SamplingPlan:
    """Sampling plan with a sample size stated by the user (capped at the lot size)."""
    _check_count("lot_size", lot_size, 1)
    _check_count("sample_size", sample_size, 1)
    _check_count("acceptance_number", acceptance_number, 0)
    every = sample_size >= lot_size
    source = f"sample size stated in the plan (n = {sample_size})"
    if every:
        source += f"; n ≥ lot size {lot_size}, every part inspected"
    return SamplingPlan(
        lot_size, min(sample_size, lot_size), acceptance_number, None, every, source
    )


def oc_model(sample_size: int, lot_size: int | None) -> Literal["binomial", "hypergeometric"]:
    """``"hypergeometric"`` when the sample is more than a tenth of a known lot, else binomial."""
    if lot_size is not None and sample_size / lot_size > HYPERGEOMETRIC_ABOVE:
        return "hypergeometric"
    return "binomial"


def acceptance_probability(
    fraction_nonconforming,
    *,
    sample_size: int,
    acceptance_number: int,
    lot_size: int | None = None,
):
    """P(accept | p) = P(D ≤ c) of a single sampling plan (operating characteristic).

    Parameters
    ----------
    fraction_nonconforming:
        p in [0, 1] (a fraction, not a percentage); scalar or array.
    sample_size, acceptance_number:
        n and c.
    lot_size:
        N; when given and n/N > 0.1 the hypergeometric model is used with round(p·N)
        nonconforming parts in the lot, otherwise the binomial model.

    Returns
    -------
    float or numpy.ndarray
        Probability of acceptance, same shape as ``fraction_nonconforming``.

    Notes
    -----
    Binomial: P = Σ_{d=0..c} C(n, d) p^d (1 − p)^(n − d). Hypergeometric: P = Σ_{d=0..c}
    C(D, d) C(N − D, n − d) / C(N, n), D = round(p·N). Both via ``scipy.stats`` cdf.

    References
    ----------
    NIST/SEMATECH e-Handbook of Statistical Methods 6.2.3.2 (binomial OC of a single
    sampling plan; from memory); hypergeometric form: any probability text on sampling
    without replacement.
    """
    import numpy as np
    from scipy import stats

    n = _check_count("sample_size", sample_size, 1)
    c = _check_count("acceptance_number", acceptance_number, 0)
    p = np.asarray(fraction_nonconforming, dtype=np.float64)
    if np.any(~np.isfinite(p)) or np.any(p < 0) or np.any(p > 1):
        raise ValueError("fraction_nonconforming must lie in [0, 1]")
    if oc_model(n, lot_size) == "hypergeometric":
        assert lot_size is not None
        big_n = _check_count("lot_size", lot_size, n)
        defectives = np.rint(p * big_n).astype(np.int64)
        out = stats.hypergeom.cdf(c, big_n, defectives, n)
    else:
        out = stats.binom.cdf(c, n, p)
    out = np.clip(np.asarray(out, dtype=np.float64), 0.0, 1.0)
    return float(out) if out.ndim == 0 else out


def oc_curve(plan: SamplingPlan, fractions) -> list[OcPoint]:
    """OC points of ``plan`` at the given fractions nonconforming (0–1)."""
    import numpy as np

    p = np.asarray(fractions, dtype=np.float64).reshape(-1)
    pa = np.atleast_1d(
        acceptance_probability(
            p,
            sample_size=plan.sample_size,
            acceptance_number=plan.acceptance_number,
            lot_size=plan.lot_size,
        )
    )
    return [OcPoint(float(a), float(b)) for a, b in zip(p, pa, strict=True)]


def fraction_at_probability(plan: SamplingPlan, probability_accept: float) -> float | None:
    """Fraction nonconforming at which the plan accepts with the given probability.

    Used for the AQL/LTPD-style reading of a plan: p at P(accept) = 0.95 (the quality the
    plan nearly always accepts) and p at P(accept) = 0.10 (the quality it nearly always
    rejects). Solved on the binomial OC (continuous in p) with ``scipy.optimize.brentq``;
    for hypergeometric plans the step function is searched over D = 0..N and the smallest
    D/N with P(accept) ≤ the probability is returned. None when every part is inspected and
    c = N (the plan never rejects).
    """
    if not 0.0 < probability_accept < 1.0:
        raise ValueError("probability_accept must lie strictly between 0 and 1")
    n, c, big_n = plan.sample_size, plan.acceptance_number, plan.lot_size
    if c >= n:
        return None
    if plan.model == "hypergeometric":
        import numpy as np

        fractions = np.arange(big_n + 1) / big_n
        pa = np.atleast_1d(
            acceptance_probability(fractions, sample_size=n, acceptance_number=c, lot_size=big_n)
        )
        idx = np.nonzero(pa <= probability_accept)[0]
        return float(fractions[idx[0]]) if idx.size else None
    from scipy.optimize import brentq

    def f(p: float) -> float:
        return (
            float(acceptance_probability(p, sample_size=n, acceptance_number=c))
            - probability_accept
        )

    return float(brentq(f, 0.0, 1.0, xtol=1e-12))
