"""Inequalities every profile must satisfy, checked on random profiles (hypothesis).

Each property is a mathematical fact about the definitions, with its reason beside it.
"""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

from speccheck.parameters import amplitude, material, rk, spacing

heights = arrays(
    np.float64,
    st.integers(min_value=30, max_value=400),
    # heights to the nm, as instruments give them (keeps squares and cubes far from underflow)
    elements=st.integers(min_value=-50_000, max_value=50_000).map(lambda n: n / 1000.0),
)


@settings(max_examples=60, deadline=None)
@given(heights)
def test_amplitude_inequalities(z):
    """Ra ≤ Rq (Cauchy–Schwarz: mean|z| ≤ √(mean z²)); Rq ≤ max|z| = max(Rp, Rv);
    Rku ≥ 1 (Jensen: mean z⁴ ≥ (mean z²)²); Rsk² ≤ Rku (Cauchy–Schwarz on z·z²:
    (mean z³)² ≤ mean z² · mean z⁴)."""
    ra = amplitude.arithmetic_mean_height(z)
    rq = amplitude.root_mean_square_height(z)
    assert ra <= rq * (1 + 1e-12)
    peak = max(amplitude.max_peak_height(z), amplitude.max_valley_depth(z))
    assert rq <= peak * (1 + 1e-12)
    if rq > 1e-6:
        assert amplitude.kurtosis(z) >= 1 - 1e-9
        assert abs(amplitude.skewness(z)) <= np.sqrt(amplitude.kurtosis(z)) * (1 + 1e-9)


@settings(max_examples=60, deadline=None)
@given(heights, st.floats(min_value=0, max_value=120), st.floats(min_value=0, max_value=120))
def test_material_ratio_is_monotone_in_depth(z, c1, c2):
    """Rmr(c) is non-decreasing in c (a lower level has at least as much material below the
    profile), 0 ≤ Rmr ≤ 100 %, and reaches 100 % below the deepest valley (c > Rt)."""
    lo, hi = sorted((c1, c2))
    m1 = material.material_ratio_at_depth(z, depth_um=lo)
    m2 = material.material_ratio_at_depth(z, depth_um=hi)
    assert 0.0 <= m1 <= m2 + 1e-9 <= 100.0 + 1e-9
    assert material.material_ratio_at_depth(z, depth_um=amplitude.total_height(z) + 1) == 100.0


@settings(max_examples=40, deadline=None)
@given(heights)
def test_rk_family_is_consistent(z):
    """ISO 13565-2 definitions: 0 ≤ Mr1 ≤ Mr2 ≤ 100 % (the upper core bound lies above the lower
    one), areas and reduced heights ≥ 0, and the core bounds lie on the equivalent line, so
    Rk = top − bottom > 0."""
    res = rk.rk_parameters(z)
    if not res:
        return
    assert 0.0 <= res.Mr1 <= res.Mr2 <= 100.0
    assert res.A1 >= 0 and res.A2 >= 0 and res.Rpk >= 0 and res.Rvk >= 0
    assert res.Rk > 0
    assert res.Rk == res.core_top_um - res.core_bottom_um


@settings(max_examples=40, deadline=None)
@given(heights)
def test_elements_lie_inside_the_section(z):
    """Profile elements are consecutive and within the section, so the sum of their widths
    cannot exceed the section length, and each element height is at most the section Rz."""
    el = spacing.profile_elements(z, dx_um=1.0)
    assert np.sum(el.widths_um) <= z.size * 1.0 + 1e-9
    assert np.all(el.heights_um <= amplitude.max_height(z) * (1 + 1e-12))
    assert np.all(el.widths_um > 0)
