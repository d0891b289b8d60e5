"""Uncertainty of measured values: GUM (JCGM 100:2008) and Monte Carlo (JCGM 101:2008).

Sources beside each check. Clause numbers of the JCGM documents are from memory.
"""

from __future__ import annotations

import math
from statistics import NormalDist

import numpy as np
import pytest

from speccheck.parameters.compute import compute_parameters
from speccheck.parameters.conditions import Conditions
from speccheck.uncertainty import InstrumentErrors, Repeat, estimate_values
from speccheck.uncertainty.gum import Contribution, combine, coverage_factor
from speccheck.uncertainty.heights import SUPPORTED, evaluate_rows, gradient, height_parameter
from speccheck.uncertainty.montecarlo import (
    adaptive_monte_carlo,
    batch_size,
    coverage_interval,
    numerical_tolerance,
)
from speccheck.uncertainty.noise import (
    filtered_noise,
    noise_bandwidth,
    noise_bandwidth_closed_form,
)

DX = 0.5
N = 11_201  # 5.6 mm at 0.5 µm: 7 cut-offs of 0.8 mm
COND = Conditions.standard(0.8)
Z95 = NormalDist().inv_cdf(0.975)  # 1.959964 (normal table)


def sine(amplitude: float = 1.0, wavelength_um: float = 100.0) -> np.ndarray:
    return amplitude * np.sin(2 * np.pi * np.arange(N) * DX / wavelength_um)


def values_of(z: np.ndarray, names, cond: Conditions = COND, dx: float = DX):
    ps = compute_parameters(z, dx_um=dx, conditions=cond)
    return {n: (ps.values[n].value, ps.values[n].unit) for n in names}


# --- GUM ---------------------------------------------------------------------------------------


def test_coverage_factor_normal_and_t():
    # normal table: 1.960 for 95 %, 2.576 for 99 %; t-table (from memory): t(0.975, 16) = 2.120
    assert coverage_factor(0.95, math.inf) == pytest.approx(1.959964, abs=1e-6)
    assert coverage_factor(0.99, math.inf) == pytest.approx(2.575829, abs=1e-6)
    assert coverage_factor(0.95, 16) == pytest.approx(2.120, abs=5e-4)


def test_welch_satterthwaite_by_hand():
    # JCGM 100:2008 G.4.1: uc² = 1 + 1 = 2, ν_eff = uc⁴ / (1⁴/4) = 4 · 4 = 16 (derived by hand)
    g = combine(
        [
            Contribution("b", "type B", 1.0, "µm", 1.0),
            Contribution("a", "type A", 0.5, "µm", 2.0, 4),
        ]
    )
    assert g.combined == pytest.approx(math.sqrt(2))
    assert g.dof == pytest.approx(16)
    assert g.expanded == pytest.approx(coverage_factor(0.95, 16) * math.sqrt(2))
    assert g.share(g.contributions[0]) == pytest.approx(0.5)


# --- Monte Carlo -------------------------------------------------------------------------------


def test_coverage_interval_ranks_by_the_rule():
    # JCGM 101:2008 7.7.2 (from memory), by hand: M = 20, p = 0.95: q = 19, r = 1 -> [y1, y20];
    # M = 10, p = 0.5: q = 5, M - q = 5 odd, r = 3 -> [y3, y8]
    y = np.arange(1.0, 21.0)[::-1]
    ci = coverage_interval(y, probability=0.95)
    assert (ci.low, ci.high) == (1.0, 20.0)
    ci = coverage_interval(np.arange(1.0, 11.0), probability=0.5)
    assert (ci.low, ci.high) == (3.0, 8.0)
    with pytest.raises(ValueError, match="too few"):
        coverage_interval([1.0, 2.0], probability=0.95)


def test_numerical_tolerance_from_significant_digits():
    # JCGM 101:2008 7.9.2 rule: u = c·10^l with c of two digits, δ = ½·10^l (derived by hand)
    assert numerical_tolerance(0.0035) == pytest.approx(0.00005)
    assert numerical_tolerance(1.2) == pytest.approx(0.05)
    assert numerical_tolerance(0.99999) == pytest.approx(0.05)  # rounds to 1.0: 10 × 10⁻¹
    assert numerical_tolerance(35.0, digits=1) == pytest.approx(5.0)
    # JCGM 101:2008 7.9.4 b): M = max(J, 10⁴), J = 100/(1 − p) = 2000 for p = 0.95
    assert batch_size(0.95) == 10_000
    assert batch_size(0.9999) == 1_000_000


def test_adaptive_stopping_rule():
    # JCGM 101:2008 7.9.4: stop at the first h >= 2 with 2·s ≤ δ for the batch means of y, u,
    # low and high, s² = Σ(x_r − x̄)²/(h(h − 1)). Re-derived here from the batch statistics.
    delta = 0.01
    res = adaptive_monte_carlo(
        lambda rng, m: rng.standard_normal(m),
        rng=np.random.default_rng(3),
        tolerance=lambda u, half: delta,
        batch=10_000,
    )
    table = res.batch_statistics[:, :, 0]
    h = table.shape[0]

    def spread(t: np.ndarray) -> float:
        n = t.shape[0]
        return 2 * float(np.max(np.sqrt(((t - t.mean(axis=0)) ** 2).sum(axis=0) / (n * (n - 1)))))

    assert res.stabilised and h >= 2 and res.trials == h * 10_000
    assert spread(table) <= delta
    assert all(spread(table[:j]) > delta for j in range(2, h))
    # a standard normal: 95 % interval ±1.959964 (normal table), within the tolerance
    ci = res.intervals[0]
    assert ci.low == pytest.approx(-Z95, abs=2 * delta)
    assert ci.high == pytest.approx(Z95, abs=2 * delta)


def test_adaptive_stops_unstabilised_at_the_trial_limit():
    res = adaptive_monte_carlo(
        lambda rng, m: rng.standard_normal(m),
        rng=np.random.default_rng(0),
        tolerance=lambda u, half: 1e-9,
        batch=1000,
        max_trials=5000,
    )
    assert not res.stabilised and res.trials == 5000 and res.batches == 5


# --- the height parameters of the model --------------------------------------------------------


@pytest.mark.parametrize("base", sorted(SUPPORTED))
def test_batched_heights_equal_the_parameter_pipeline(base):
    # same formulas as speccheck.parameters (ISO 4287:1997 4.1, 4.2): values must agree
    rng = np.random.default_rng(1)
    z = sine(0.8, 83.0) + 0.1 * rng.standard_normal(N)
    ps = compute_parameters(z, dx_um=DX, conditions=COND)
    p = height_parameter(base, sections=5, definitions="iso4287")
    r = ps.profiles.roughness_um
    assert float(evaluate_rows(p, r)) == pytest.approx(ps.values["R" + base].value, rel=1e-12)


@pytest.mark.parametrize("base", sorted(SUPPORTED))
def test_gradient_matches_directional_derivatives(base):
    # calculus: ∇P·v = (P(z + hv) − P(z − hv))/(2h) + O(h²)
    rng = np.random.default_rng(2)
    z = rng.standard_normal(1000) + 0.3 * rng.standard_normal(1000) ** 2
    p = height_parameter(base, sections=5, definitions="iso4287")
    v, h = rng.standard_normal(1000), 1e-6
    num = (evaluate_rows(p, z + h * v) - evaluate_rows(p, z - h * v)) / (2 * h)
    assert float(gradient(p, z) @ v) == pytest.approx(float(num), rel=1e-5, abs=1e-9)


# --- noise -------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("dx", "lc", "ls", "rel"), [(0.5, 800, 2.5, 1e-3), (0.1, 800, 2.5, 1e-6), (1.5, 2500, 8, 1e-3)]
)
def test_noise_bandwidth_discrete_equals_closed_form(dx, lc, ls, rel):
    # closed form from the ISO 16610-21 Gaussian transmission (derivation in the docstring);
    # the discrete filters alias a little at 0.5 µm spacing, not at 0.1 µm
    g = noise_bandwidth(dx_um=dx, lambda_c_um=lc, lambda_s_um=ls)
    assert g == pytest.approx(
        noise_bandwidth_closed_form(dx_um=dx, lambda_c_um=lc, lambda_s_um=ls), rel=rel
    )


def _rq_squared_with_noise(amplitude: float, sigma: float, count: int) -> np.ndarray:
    rng = np.random.default_rng(11)
    base = sine(amplitude)
    return np.array(
        [
            compute_parameters(base + sigma * rng.standard_normal(N), dx_um=DX, conditions=COND)
            .values["Rq"]
            .value
            ** 2
            for _ in range(count)
        ]
    )


@pytest.mark.parametrize("amplitude", [0.0, 1.0])
def test_white_noise_raises_rq_in_quadrature(amplitude):
    # Rq_meas² = Rq² + σ²·g (domain notes 9, [calc]), g the closed-form noise bandwidth of the
    # λs and λc Gaussians; through the real parameter pipeline, mean of 40 noisy traces,
    # within 4 standard errors of that mean
    sigma = 0.1
    rq0 = 0.0  # a flat trace has Rq 0 (the pipeline refuses to evaluate a flat trace)
    if amplitude:
        rq0 = compute_parameters(sine(amplitude), dx_um=DX, conditions=COND).values["Rq"].value
    g = noise_bandwidth_closed_form(dx_um=DX, lambda_c_um=800, lambda_s_um=2.5)
    rq2 = _rq_squared_with_noise(amplitude, sigma, 40)
    se = rq2.std(ddof=1) / math.sqrt(rq2.size)
    assert abs(rq2.mean() - (rq0**2 + sigma**2 * g)) < 4 * se
    assert sigma**2 * g > 10 * se  # the noise term is resolved, not lost in the scatter


def test_filtered_noise_has_the_bandwidth_variance():
    # stationary filtered noise: variance σ²·g at every point (definition of g)
    rng = np.random.default_rng(5)
    n = filtered_noise(rng, 512, 8000, sigma_um=2.0, dx_um=DX, lambda_c_um=800, lambda_s_um=2.5)
    g = noise_bandwidth(dx_um=DX, lambda_c_um=800, lambda_s_um=2.5)
    assert n.shape == (512, 8000)
    assert np.mean(n**2) == pytest.approx(4.0 * g, rel=0.02)


# --- the model ---------------------------------------------------------------------------------


@pytest.mark.parametrize("name", ["Ra", "Rq", "Rz", "Rt"])
def test_sine_with_amplification_only(name):
    # Derived by hand: the height parameters are homogeneous of degree 1 (P(s·z) = s·P(z)), so
    # c_a = ∂P/∂δa = P and uc = u_rel·P (JCGM 100 5.1.2); k = 1.959964 for 95 % (normal table,
    # ν_eff infinite): U = k·u_rel·P exactly. Monte Carlo of P(1 + δa), δa ~ N(0, u_rel): the
    # same interval, within the numerical tolerance (JCGM 101 8.2).
    u_rel = 0.01
    z = sine()
    est = estimate_values(
        z,
        dx_um=DX,
        conditions=COND,
        values=values_of(z, [name]),
        errors=InstrumentErrors(amplification_u_rel=u_rel),
    )[name]
    assert est.gum.expanded == pytest.approx(Z95 * u_rel * est.value, rel=1e-6)
    assert est.agree and est.governing == "GUM"
    low, high = est.interval
    assert abs(est.value - Z95 * u_rel * est.value - low) <= est.tolerance
    assert abs(est.value + Z95 * u_rel * est.value - high) <= est.tolerance
    assert est.monte_carlo.stabilised
    assert est.gum.dominant is not None and est.gum.dominant.name == "vertical amplification"


def test_repeatability_is_type_a_with_its_degrees_of_freedom():
    # JCGM 100 G.4.1 with one type A input of ν = 4 and no other: ν_eff = 4, k = t(0.975, 4)
    # = 2.776 (t-table, from memory); Monte Carlo draws s·t₄ (JCGM 101 6.4.9, from memory)
    z = sine()
    est = estimate_values(
        z,
        dx_um=DX,
        conditions=COND,
        values=values_of(z, ["Ra"]),
        errors=InstrumentErrors(repeatability={"Ra": Repeat(0.01, 4)}),
        batch=200_000,
    )["Ra"]
    assert est.gum.dof == pytest.approx(4)
    assert est.gum.expanded == pytest.approx(2.776 * 0.01, abs=2e-5)
    low, high = est.interval
    assert high - est.value == pytest.approx(0.02776, rel=0.02)


def test_unsupported_parameter_and_filter_are_refused():
    z = sine()
    with pytest.raises(ValueError, match="no uncertainty model for RSm"):
        estimate_values(
            z, dx_um=DX, conditions=COND, values=values_of(z, ["RSm"]), errors=InstrumentErrors()
        )
    robust = Conditions.standard(0.8, filter="robust")
    with pytest.raises(ValueError, match="Gaussian filter"):
        estimate_values(
            z, dx_um=DX, conditions=robust, values={"Ra": (0.6, "µm")}, errors=InstrumentErrors()
        )


def test_noise_makes_rt_monte_carlo_governed():
    # Rt rests on two points: first-order propagation of noise misses that the largest of many
    # noisy peaks is raised (extreme values); JCGM 101 8: Monte Carlo governs when they differ
    z = sine()
    est = estimate_values(
        z,
        dx_um=DX,
        conditions=COND,
        values=values_of(z, ["Rt"]),
        errors=InstrumentErrors(amplification_u_rel=0.002, noise_sigma_um=0.02),
        batch=10_000,
        relative_tolerance=0.05,
    )["Rt"]
    assert est.noise_bias > 0.01  # the maximum of 80 noisy peaks sits above the noiseless one
    assert not est.agree and est.governing == "Monte Carlo"
    low, high = est.interval
    assert est.expanded == pytest.approx(max(est.value - low, high - est.value))


SHORT = Conditions.standard(0.25)  # 7 × 0.25 mm = 3501 points at 0.5 µm


def _coverage_case(rng: np.random.Generator, truth_fn, u_a: float, u_x: float, sigma: float):
    d_a, d_x = rng.normal(0, u_a), rng.normal(0, u_x)
    x = np.arange(3501) * DX
    truth = truth_fn(x)
    measured = (1 + d_a) * truth_fn(x * (1 + d_x)) + sigma * rng.standard_normal(x.size)
    true_ra = compute_parameters(truth, dx_um=DX, conditions=SHORT).values["Ra"].value
    est = estimate_values(
        measured,
        dx_um=DX,
        conditions=SHORT,
        values=values_of(measured, ["Ra"], SHORT),
        errors=InstrumentErrors(amplification_u_rel=u_a, scale_u_rel=u_x, noise_sigma_um=sigma),
        seed=int(rng.integers(1 << 31)),
        batch=10_000,
        relative_tolerance=0.02,
    )["Ra"]
    return est.value, est.expanded, true_ra


def test_coverage_over_synthetic_instruments():
    # A coverage simulation: 200 instruments with known errors drawn from the stated
    # distributions measure a known surface; the 95 % intervals y ± U must contain the true Ra
    # at a rate consistent with 95 %: two-sided exact binomial test (scipy.stats.binomtest),
    # p > 0.01. Halving U must fail the same test (the check can fail).
    from scipy.stats import binomtest

    rng = np.random.default_rng(2026)

    def truth_fn(x):
        return 0.5 * np.sin(2 * np.pi * x / 31.0) + 0.2 * np.sin(2 * np.pi * x / 13.0 + 1.0)

    cases = [_coverage_case(rng, truth_fn, 0.01, 0.002, 0.005) for _ in range(200)]
    inside = sum(abs(y - t) <= u for y, u, t in cases)
    inside_half = sum(abs(y - t) <= u / 2 for y, u, t in cases)
    assert binomtest(inside, len(cases), 0.95).pvalue > 0.01
    assert binomtest(inside_half, len(cases), 0.95).pvalue < 0.01
