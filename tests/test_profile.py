"""Profile and fill_dropouts (speccheck.profile).

The dropout policy (bridge runs of at most MAX_DROPOUT_RUN_POINTS points spanning at most
MAX_DROPOUT_RUN_UM, refuse longer gaps) is common practice, no source; the tests check the
policy as documented and that bridging is linear (exact on a straight line: closed form).
"""

from __future__ import annotations

import numpy as np
import pytest

from speccheck.profile import (
    MAX_DROPOUT_RUN_POINTS,
    MAX_DROPOUT_RUN_UM,
    Profile,
    fill_dropouts,
)


def _line(n=100, dx_um=0.5, holes=()):
    """z = 0.3 µm + 0.02·i µm: linear interpolation must reproduce it exactly (closed form)."""
    z = 0.3 + 0.02 * np.arange(n)
    z[list(holes)] = np.nan
    return Profile(z_um=z, dx_um=dx_um), 0.3 + 0.02 * np.arange(n)


def test_profile_is_read_only_float64_with_nan_where_invalid():
    p = Profile(z_um=[1, 2, 3, 4], dx_um=0.5, valid=[True, False, True, True])
    assert p.z_um.dtype == np.float64
    assert np.isnan(p.z_um[1]) and p.n_invalid == 1
    assert p.length_mm == pytest.approx(3 * 0.5 / 1e3, rel=1e-15)
    with pytest.raises(ValueError):
        p.z_um[0] = 5.0
    with pytest.raises(ValueError, match="dx_um must be a positive"):
        Profile(z_um=[1, 2], dx_um=0.0)


def test_no_dropouts_leaves_profile_unchanged():
    p, _ = _line()
    q = fill_dropouts(p)
    assert np.array_equal(q.z_um, p.z_um)
    assert q.dropouts.invalid_points == 0 and q.dropouts.usable


def test_short_run_is_bridged_linearly_and_counted():
    p, exact = _line(holes=range(40, 40 + MAX_DROPOUT_RUN_POINTS))
    q = fill_dropouts(p)
    np.testing.assert_allclose(q.z_um, exact, rtol=1e-14)
    d = q.dropouts
    assert (d.invalid_points, d.interpolated_points, d.runs, d.longest_run_points) == (5, 5, 1, 5)
    assert d.usable and q.valid.all()


def test_run_one_point_too_long_is_refused_and_located_in_mm():
    p, _ = _line(holes=range(40, 46))  # 6 points at 0.5 µm: x = 20.0 ... 22.5 µm
    d = fill_dropouts(p).dropouts
    assert not d.usable
    assert d.refused_gaps_mm == ((0.02, 0.0225),)
    assert d.interpolated_points == 0


def test_run_too_wide_in_micrometres_is_refused():
    # 3 points at 4 µm: the bridge spans (3 + 1) · 4 = 16 µm > MAX_DROPOUT_RUN_UM = 10 µm.
    assert MAX_DROPOUT_RUN_UM == 10.0
    p, _ = _line(dx_um=4.0, holes=(10, 11, 12))
    assert fill_dropouts(p).dropouts.refused_gaps_mm == ((0.04, 0.048),)
    # 1 point at 4 µm spans 8 µm: bridged.
    p, exact = _line(dx_um=4.0, holes=(10,))
    q = fill_dropouts(p)
    assert q.dropouts.usable
    np.testing.assert_allclose(q.z_um, exact, rtol=1e-14)


def test_invalid_ends_are_cropped_and_counted():
    p, exact = _line(n=50, holes=(0, 1, 2, 49))
    q = fill_dropouts(p)
    assert q.n_points == 46
    np.testing.assert_allclose(q.z_um, exact[3:49], rtol=1e-14)
    d = q.dropouts
    assert (d.invalid_points, d.interpolated_points, d.runs, d.longest_run_points) == (4, 0, 2, 3)
    assert d.usable


def test_mixed_runs():
    p, exact = _line(n=200, holes=(10, 50, 51, *range(100, 110)))
    q = fill_dropouts(p)
    d = q.dropouts
    assert (d.invalid_points, d.interpolated_points, d.runs, d.longest_run_points) == (13, 3, 3, 10)
    assert d.refused_gaps_mm == ((0.05, 0.0545),)
    np.testing.assert_allclose(q.z_um[:100], exact[:100], rtol=1e-14)
    assert np.isnan(q.z_um[100:110]).all()


def test_all_invalid_is_refused_over_the_whole_trace():
    p = Profile(z_um=[1.0, 2.0, 3.0], dx_um=1.0, valid=[False, False, False])
    d = fill_dropouts(p).dropouts
    assert not d.usable and d.refused_gaps_mm == ((0.0, 0.002),)
