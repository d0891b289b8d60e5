"""Uncertainty of one measured value from the instrument's calibration and the profile itself.

Model (per measurement, per parameter): measured profile = (1 + δa) · true profile at
x(1 + δx), plus noise, plus the repeatability scatter, where

- δa is the vertical amplification error (ISO 12179 calibration on an ISO 5436-1 type A
  depth standard): standard uncertainty u_a, relative;
- δx is the horizontal scale error: u_x, relative;
- the noise is white, σ per sampled point (from the Rq of traces on an optical flat);
- the repeatability is the type A standard deviation s of single values of the parameter, with
  ν degrees of freedom, from repeated traces at one position.

A coefficient that differs from 1 is not corrected (the heights are used as the instrument
gave them); its deviation is added in quadrature to its standard uncertainty, as an
uncorrected systematic effect (common practice, no source).

Both evaluations are made on the evaluated roughness profile r₀ of the actual measurement:

- GUM (JCGM 100:2008): sensitivity coefficients by central differences on r₀ (δa scales r₀;
  δx changes r₀ through the filters, dr/dδx by central differences of the whole pipeline at
  Δx(1 ± h)); noise by the first-order law for a vector input, u² = σ²‖Lᵀ∇P‖², L the filter,
  evaluated by Parseval with the filter's transfer;
- Monte Carlo (JCGM 101:2008): each batch draws a pool of noise realisations through the
  filters (several per FFT call), evaluates the parameter on r₀ plus each (the full non-linear
  parameter), and combines them with draws of δa, δx and the repeatability; the adaptive
  procedure of 7.9 adds batches until the results are stable. δx enters linearly (its effect
  on the filtered profile is first order at the uncertainties of a calibrated scale). The
  noise effect is centred on its mean: the upward bias noise gives to Rq-like parameters
  (Rq² + σ²) is not corrected and is reported as ``noise_bias``.

Where GUM and Monte Carlo disagree by more than the numerical tolerance (JCGM 101 clause 8),
the Monte Carlo interval governs.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from speccheck.uncertainty.gum import Contribution, GumResult, combine
from speccheck.uncertainty.heights import HeightParameter, evaluate_rows, gradient
from speccheck.uncertainty.montecarlo import MonteCarloResult, adaptive_monte_carlo

__all__ = ["Repeat", "InstrumentErrors", "Estimate", "estimate_values", "STEP"]

#: Relative step of the central differences (common practice, no source).
STEP = 1e-6


@dataclass(frozen=True)
class Repeat:
    """Type A repeatability of one parameter: sd of single values (parameter's unit), ν."""

    sd: float
    dof: int
    source: str = "type A: repeated traces at one position"


@dataclass(frozen=True)
class InstrumentErrors:
    """The instrument's error model, every quantity in the unit its name says."""

    amplification_u_rel: float = 0.0
    amplification_deviation_rel: float = 0.0  # coefficient − 1
    amplification_source: str = "type B: amplification calibration"
    scale_u_rel: float = 0.0
    scale_deviation_rel: float = 0.0
    scale_source: str = "type B: horizontal scale calibration"
    noise_sigma_um: float = 0.0  # white noise per sampled point
    noise_source: str = "type B: residual noise on an optical flat"
    repeatability: Mapping[str, Repeat] = field(default_factory=dict)

    @property
    def u_a(self) -> float:
        return math.hypot(self.amplification_u_rel, self.amplification_deviation_rel)

    @property
    def u_x(self) -> float:
        return math.hypot(self.scale_u_rel, self.scale_deviation_rel)


@dataclass(frozen=True)
class Estimate:
    """One value's uncertainty: both evaluations, which governs, and U."""

    name: str
    value: float
    unit: str
    gum: GumResult
    monte_carlo: MonteCarloResult
    index: int  # this output's column in monte_carlo
    agree: bool  # GUM validated by Monte Carlo within the tolerance (JCGM 101 8.2)
    governing: str  # "GUM" or "Monte Carlo"
    expanded: float  # U used by the decision, in ``unit``
    noise_bias: float  # mean shift of the value by the noise, in ``unit``
    tolerance: float  # numerical tolerance δ, in ``unit``

    @property
    def interval(self) -> tuple[float, float]:
        ci = self.monte_carlo.intervals[self.index]
        return ci.low, ci.high

    def to_dict(self) -> dict[str, Any]:
        g, ci = self.gum, self.monte_carlo.intervals[self.index]
        return {
            "parameter": self.name,
            "value": self.value,
            "unit": self.unit,
            "expanded": self.expanded,
            "probability": g.probability,
            "governing": self.governing,
            "agree": self.agree,
            "tolerance": self.tolerance,
            "noise_bias": self.noise_bias,
            "gum": {
                "combined": g.combined,
                "coverage_factor": g.coverage_factor,
                "dof": None if math.isinf(g.dof) else g.dof,
                "expanded": g.expanded,
            },
            "monte_carlo": {
                "low": ci.low,
                "high": ci.high,
                "standard_uncertainty": self.monte_carlo.standard_uncertainty[self.index],
                "trials": self.monte_carlo.trials,
                "batches": self.monte_carlo.batches,
                "stabilised": self.monte_carlo.stabilised,
                "expanded": max(self.value - ci.low, ci.high - self.value),
            },
            "budget": [_budget_row(g, c) for c in g.contributions],
            "dominant": g.dominant.name if g.dominant else None,
        }


def _budget_row(g: GumResult, c: Contribution) -> dict[str, Any]:
    return {
        "input": c.name,
        "source": c.source,
        "u_input": c.u_input,
        "input_unit": c.input_unit,
        "sensitivity": c.sensitivity,
        "contribution": c.u_output,
        "share": g.share(c),
        "dof": None if math.isinf(c.dof) else c.dof,
    }


@dataclass(frozen=True)
class _Setup:
    """What both evaluations need about one evaluated profile."""

    r0: np.ndarray  # evaluated profile over the evaluation length, µm
    r1: np.ndarray  # d r0 / d δx, µm
    dx_um: float
    lambda_c_um: float
    lambda_s_um: float | None


def _difference(p: HeightParameter, plus: np.ndarray, minus: np.ndarray, h: float) -> float:
    both = evaluate_rows(p, np.stack([plus, minus]))
    return float((both[0] - both[1]) / (2.0 * h))


def _noise_u(p: HeightParameter, s: _Setup, sigma_um: float) -> float:
    """σ·‖Lᵀ∇P‖, the first-order noise contribution (JCGM 100 5.1.2 for a vector input)."""
    from speccheck.filters._blockconv import fast_length
    from speccheck.uncertainty.noise import roughness_transfer

    if sigma_um == 0.0:
        return 0.0
    g = gradient(p, s.r0)
    reach = 2 * int(s.lambda_c_um / s.dx_um) + 2 * int((s.lambda_s_um or 0.0) / s.dx_um) + 2
    nfft = fast_length(g.size + reach)
    h = roughness_transfer(nfft, s.dx_um, s.lambda_c_um, s.lambda_s_um)
    spec = np.fft.rfft(g, nfft) * h
    w = np.full(spec.size, 2.0)
    w[0] = 1.0
    if nfft % 2 == 0:
        w[-1] = 1.0
    return sigma_um * math.sqrt(float(np.sum(w * np.abs(spec) ** 2) / nfft))


def _gum(
    name: str, p: HeightParameter, unit: str, s: _Setup, e: InstrumentErrors, probability: float
) -> GumResult:
    h = STEP
    c_a = _difference(p, s.r0 * (1.0 + h), s.r0 * (1.0 - h), h)
    c_x = _difference(p, s.r0 + h * s.r1, s.r0 - h * s.r1, h)
    parts = [
        Contribution("vertical amplification", e.amplification_source, e.u_a, "1", c_a),
        Contribution("horizontal scale", e.scale_source, e.u_x, "1", c_x),
        Contribution("noise", e.noise_source, e.noise_sigma_um, "µm", _noise_u(p, s, 1.0)),
    ]
    rep = e.repeatability.get(name)
    if rep is not None:
        parts.append(Contribution("repeatability", rep.source, rep.sd, unit, 1.0, rep.dof))
    return combine(parts, probability=probability)


def _setup(z_um: np.ndarray, dx_um: float, conditions: Any) -> _Setup:
    """r₀ over the evaluation length and dr₀/dδx by central differences of the pipeline."""
    from speccheck.parameters.compute import evaluated_profile

    ev = conditions.evaluation_slice(z_um.size, dx_um)
    if ev is None:
        raise ValueError("the trace is shorter than the evaluation length plus run-in and run-out")
    h = STEP
    r0 = evaluated_profile(z_um, dx_um=dx_um, conditions=conditions)[2][ev]
    plus = evaluated_profile(z_um, dx_um=dx_um * (1 + h), conditions=conditions)[2][ev]
    minus = evaluated_profile(z_um, dx_um=dx_um * (1 - h), conditions=conditions)[2][ev]
    ls = conditions.lambda_s_um
    return _Setup(r0, (plus - minus) / (2 * h), dx_um, conditions.lambda_c_mm * 1000.0, ls)


@dataclass(frozen=True)
class _Output:
    name: str
    param: HeightParameter
    value: float
    c_x: float
    repeat: Repeat | None


def _noise_effects(
    rng: np.random.Generator, k: int, outputs: Sequence[_Output], s: _Setup, e: InstrumentErrors
) -> np.ndarray:
    """P(r₀ + nᵢ) − P(r₀) for k noise realisations nᵢ, shape (k, outputs); 256 per FFT call."""
    from speccheck.uncertainty.noise import filtered_noise

    effects = np.zeros((k, len(outputs)))
    if e.noise_sigma_um <= 0:
        return effects
    for start in range(0, k, 256):
        count = min(256, k - start)
        noise = filtered_noise(
            rng,
            count,
            s.r0.size,
            sigma_um=e.noise_sigma_um,
            dx_um=s.dx_um,
            lambda_c_um=s.lambda_c_um,
            lambda_s_um=s.lambda_s_um,
        )
        noise += s.r0
        for j, o in enumerate(outputs):
            effects[start : start + count, j] = evaluate_rows(o.param, noise) - o.value
    return effects


def _drawer(outputs: Sequence[_Output], s: _Setup, e: InstrumentErrors, pool: int, bias: list):
    """draw(rng, M) for the adaptive procedure: M trials of every output, one noise pool."""

    def draw(rng: np.random.Generator, m: int) -> np.ndarray:
        k = min(pool, m)
        effects = _noise_effects(rng, k, outputs, s, e)
        bias.append(effects.mean(axis=0))
        effects -= effects.mean(axis=0)
        scale = 1.0 + rng.normal(0.0, e.u_a, m)  # first order of 1/(1 + δa), δa symmetric
        dx = rng.normal(0.0, e.u_x, m)
        pick = rng.integers(0, k, m)
        out = np.empty((m, len(outputs)))
        for j, o in enumerate(outputs):
            y = o.value + o.c_x * dx + effects[pick, j]
            out[:, j] = y * scale**o.param.degree
            if o.repeat is not None:
                out[:, j] += o.repeat.sd * rng.standard_t(o.repeat.dof, m)
        return out

    return draw


def estimate_values(
    z_um,
    *,
    dx_um: float,
    conditions: Any,
    values: Mapping[str, tuple[float, str]],
    errors: InstrumentErrors,
    probability: float = 0.95,
    relative_tolerance: float = 0.005,
    seed: int = 0,
    batch: int = 100_000,
    pool: int = 256,
    max_trials: int = 5_000_000,
    max_noise_realisations: int = 100_000,
) -> dict[str, Estimate]:
    """GUM and Monte Carlo uncertainty of each named value measured on one trace.

    Parameters
    ----------
    z_um, dx_um, conditions:
        The trace (µm, dropouts bridged), its spacing in µm and the
        :class:`~speccheck.parameters.conditions.Conditions` the values were computed under
        (Gaussian filter, roughness profile).
    values:
        name → (value, unit) as the parameter pipeline computed them (``Ra`` ... ``Rt``).
    errors:
        The instrument's error model.
    relative_tolerance:
        Numerical tolerance δ as a fraction of the expanded uncertainty, for the adaptive
        stopping (JCGM 101 7.9) and for the comparison of GUM with Monte Carlo (clause 8).
    seed, batch:
        Random seed (the result is reproducible), trials per batch.
    pool, max_noise_realisations:
        Fewest noise realisations per batch, and most in all. A batch draws
        max(pool, M·w/(1 − w)) realisations, w the noise share of uc² (GUM), so that the
        pool's sampling error stays below the trials'; the procedure stops, not stabilised,
        before it would draw more than ``max_noise_realisations``.

    Raises
    ------
    ValueError
        A parameter, filter or profile kind the model does not support.

    References
    ----------
    JCGM 100:2008 5.1.2, G.4; JCGM 101:2008 7.7, 7.9, 8.2 (clause numbers from memory).
    """
    z = np.asarray(z_um, dtype=np.float64).reshape(-1)
    outputs = _outputs(values, conditions, errors)
    s = _setup(z, float(dx_um), conditions)
    gums = {
        o.name: _gum(o.name, o.param, values[o.name][1], s, errors, probability) for o in outputs
    }
    outputs = [
        _Output(o.name, o.param, o.value, gums[o.name].contributions[1].sensitivity, o.repeat)
        for o in outputs
    ]
    bias: list[np.ndarray] = []
    k = min(_pool_size(list(gums.values()), batch, pool), max(1, max_noise_realisations // 2))
    if errors.noise_sigma_um > 0:
        max_trials = min(max_trials, batch * max(2, max_noise_realisations // k))
    mc = adaptive_monte_carlo(
        _drawer(outputs, s, errors, k, bias),
        rng=np.random.default_rng(seed),
        probability=probability,
        tolerance=lambda u, half: relative_tolerance * half,
        batch=batch,
        max_trials=max_trials,
    )
    mean_bias = np.mean(bias, axis=0)
    return {
        o.name: _estimate(o, j, values[o.name][1], gums[o.name], mc, float(mean_bias[j]))
        for j, o in enumerate(outputs)
    }


def _pool_size(gums: Sequence[GumResult], batch: int, least: int) -> int:
    """Noise realisations per batch: max(least, M·w/(1 − w)), w the largest noise share."""
    w = max((g.share(c) for g in gums for c in g.contributions if c.name == "noise"), default=0.0)
    if w >= 1.0:
        return batch
    return int(min(batch, max(least, math.ceil(batch * w / (1.0 - w)))))


def _outputs(
    values: Mapping[str, tuple[float, str]], conditions: Any, errors: InstrumentErrors
) -> list[_Output]:
    from speccheck.parameters.names import parse_parameter_name
    from speccheck.uncertainty.heights import SUPPORTED, height_parameter

    if conditions.filter != "gaussian" or conditions.profile != "R":
        raise ValueError(
            "the uncertainty model covers the roughness profile under the Gaussian filter "
            f"(got filter {conditions.filter}, profile {conditions.profile})"
        )
    if getattr(conditions, "ends", "run-in") != "run-in":
        raise ValueError(
            "the uncertainty model needs run-in and run-out (stationary filters over the "
            "evaluation length), not filters run to the trace ends"
        )
    out = []
    for name, (value, _unit) in values.items():
        parsed = parse_parameter_name(name)
        param = None
        if parsed is not None and parsed.letter == "R" and parsed.argument is None:
            param = height_parameter(
                parsed.base, sections=conditions.sections, definitions=conditions.definitions
            )
        if param is None:
            known = ", ".join("R" + b for b in SUPPORTED)
            raise ValueError(f"no uncertainty model for {name} (the model covers {known})")
        if not math.isfinite(value):
            raise ValueError(f"{name} has no value to estimate the uncertainty of")
        out.append(_Output(name, param, float(value), 0.0, errors.repeatability.get(name)))
    return out


def _estimate(
    o: _Output, j: int, unit: str, g: GumResult, mc: MonteCarloResult, bias: float
) -> Estimate:
    """Compare GUM with Monte Carlo (JCGM 101:2008 8.2, from memory) and choose U."""
    ci = mc.intervals[j]
    delta = mc.tolerance[j]
    agree = (
        abs(o.value - g.expanded - ci.low) <= delta and abs(o.value + g.expanded - ci.high) <= delta
    )
    u_mc = max(o.value - ci.low, ci.high - o.value)
    governing = "GUM" if agree else "Monte Carlo"
    return Estimate(
        o.name,
        o.value,
        unit,
        g,
        mc,
        j,
        agree,
        governing,
        g.expanded if agree else u_mc,
        bias,
        delta,
    )
