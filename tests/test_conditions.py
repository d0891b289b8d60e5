"""Measurement conditions, default cut-offs (ISO 4288, ISO 21920-3), ISO 3274 settings.

Table values: ISO 4288:1996 Table 1 (Ra column), Table 2 (Rz column), Table 3 (RSm column),
as given in the domain notes §1: the first two rows and the Ra and RSm columns are from a public
description of the standard; the Rz rows from 0.8 mm on are from memory. The table numbering
(1 Ra, 2 Rz, 3 RSm) is from memory.
"""

from __future__ import annotations

import math

import pytest

from speccheck.errors import SpeccheckError
from speccheck.parameters.conditions import (
    Conditions,
    cutoff_row,
    default_lambda_c_mm,
    default_lambda_s_um,
    instrument_settings,
    select_lambda_c,
)

# --- ISO 4288 rows ------------------------------------------------------------------------

# (value µm, λc mm): one value inside each row
ISO4288_RA = [(0.01, 0.08), (0.05, 0.25), (0.8, 0.8), (5.0, 2.5), (40.0, 8.0)]  # Table 1 [pub]
ISO4288_RZ = [
    (0.05, 0.08),
    (0.3, 0.25),
    (4.0, 0.8),
    (25.0, 2.5),
    (100.0, 8.0),
]  # Table 2, rows 3-5 from memory
ISO4288_RSM = [
    (20.0, 0.08),
    (80.0, 0.25),
    (250.0, 0.8),
    (800.0, 2.5),
    (2500.0, 8.0),
]  # Table 3 [pub], µm


@pytest.mark.parametrize(("value", "lc"), ISO4288_RA)
def test_iso4288_ra_rows(value, lc):
    assert default_lambda_c_mm("Ra", value) == lc


@pytest.mark.parametrize(("value", "lc"), ISO4288_RZ)
def test_iso4288_rz_rows(value, lc):
    assert default_lambda_c_mm("Rz", value) == lc


@pytest.mark.parametrize(("value", "lc"), ISO4288_RSM)
def test_iso4288_rsm_rows_periodic_and_not(value, lc):
    assert default_lambda_c_mm("RSm", value, periodic=True) == lc
    assert default_lambda_c_mm("RSm", value) == lc


@pytest.mark.parametrize(
    ("parameter", "value", "lc"),
    [
        # "> 0.1 – 2": the upper bound belongs to the row, the lower bound to the row below
        ("Ra", 0.02, 0.08),
        ("Ra", 0.1, 0.25),
        ("Ra", 2.0, 0.8),
        ("Ra", 10.0, 2.5),
        ("Ra", 80.0, 8.0),
        ("Rz", 0.1, 0.08),
        ("Rz", 0.5, 0.25),
        ("Rz", 10.0, 0.8),
        ("Rz", 50.0, 2.5),
        ("Rz", 200.0, 8.0),
        ("RSm", 40.0, 0.08),
        ("RSm", 130.0, 0.25),
        ("RSm", 400.0, 0.8),
        ("RSm", 1300.0, 2.5),
        ("RSm", 4000.0, 8.0),
        # just above a bound: next row (ISO 4288:1996 Tables 1-3, "> lower")
        ("Ra", 2.0000001, 2.5),
        ("Rz", 10.000001, 2.5),
        # a decimal value written as the sum of binary fractions still lands on its bound
        ("Ra", 0.1 + 0.2 - 0.2, 0.25),
    ],
)
def test_iso4288_exact_boundaries(parameter, value, lc):
    assert default_lambda_c_mm(parameter, value) == lc


@pytest.mark.parametrize(
    ("parameter", "column"),
    [
        ("Ra", "Ra"),
        ("Rq", "Ra"),
        ("Rsk", "Ra"),
        ("Rku", "Ra"),
        ("Rdq", "Ra"),
        ("Rmr(0.5)", "Ra"),
        ("Rz", "Rz"),
        ("Rz1max", "Rz"),
        ("Rp", "Rz"),
        ("Rv", "Rz"),
        ("Rt", "Rz"),
        ("Rc", "Rz"),
    ],
)
def test_which_column_each_parameter_reads(parameter, column):
    # ISO 4288:1996 Table 1 (Ra, Rq, Rsk, Rku, RΔq, material ratio) / Table 2 (Rz, Rv, Rp,
    # Rc, Rt): from memory
    assert cutoff_row(parameter, 1.0).column == column


def test_first_row_and_evaluation_length():
    # values at or below the parenthesised lower bound (0.006 µm Ra) take the first row (our rule)
    assert default_lambda_c_mm("Ra", 0.004) == 0.08
    # ISO 4288:1996 Tables 1-3: ln = 5 lr
    assert cutoff_row("Ra", 0.8).evaluation_length_mm == pytest.approx(4.0)
    assert cutoff_row("Ra", 5.0).evaluation_length_mm == pytest.approx(12.5)


@pytest.mark.parametrize(
    ("args", "kwargs", "match"),
    [
        (
            ("Ra", 81.0),
            {},
            r"Ra 81 µm is above the iso4288 table \(largest 80 µm\); state lambda_c explicitly",
        ),
        (("Rz", 250.0), {}, r"Rz 250 µm is above the iso4288 table \(largest 200 µm\)"),
        (("Ra", 0.0), {}, r"Ra value 0.0 µm must be a positive finite number"),
        (("Ra", float("nan")), {}, r"Ra value nan µm must be a positive finite number"),
        (("Rk", 1.0), {}, r"no default cut-off for 'Rk' in iso4288; state lambda_c explicitly"),
        (
            ("Ra", 1.0),
            {"periodic": True},
            r"for a periodic profile the default cut-off follows RSm",
        ),
        (("Ra", 1.0), {"table": "iso9999"}, r"unknown cut-off table 'iso9999'"),
        (("RSm", 100.0), {"table": "iso21920-3"}, r"the iso21920-3 table has no RSm column"),
    ],
)
def test_cutoff_errors(args, kwargs, match):
    with pytest.raises(SpeccheckError, match=match):
        default_lambda_c_mm(*args, **kwargs)


# --- ISO 21920-3 --------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("value", "lc"),
    [
        # ISO 21920-3:2021 Rz column (domain notes §1 [pub, one source]); bounds differ from
        # those of ISO 4288
        (0.01, 0.08),
        (0.16, 0.08),
        (0.17, 0.25),
        (0.8, 0.25),
        (0.81, 0.8),
        (16.0, 0.8),
        (16.5, 2.5),
        (80.0, 2.5),
        (80.5, 8.0),
        (5000.0, 8.0),
    ],
)
def test_iso21920_rz_rows(value, lc):
    assert default_lambda_c_mm("Rz", value, table="iso21920-3") == lc


def test_iso21920_differs_from_iso4288_and_ra_top_row_open():
    # Rz 0.3 µm: 0.25 mm under ISO 4288 (> 0.1 – 0.5), 0.25 under ISO 21920-3 (> 0.16 – 0.8);
    # Rz 12 µm: 2.5 mm under ISO 4288 (> 10 – 50), 0.8 mm under ISO 21920-3 (> 0.8 – 16)
    assert default_lambda_c_mm("Rz", 12.0) == 2.5
    assert default_lambda_c_mm("Rz", 12.0, table="iso21920-3") == 0.8
    # Ra column as ISO 4288 with the last row unbounded (domain notes §1)
    assert default_lambda_c_mm("Ra", 2.0, table="iso21920-3") == 0.8
    assert default_lambda_c_mm("Ra", 500.0, table="iso21920-3") == 8.0


# --- ISO 3274 -----------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("lc", "ls", "ratio", "tip", "spacing"),
    # ISO 3274:1996 Table 1 (domain notes §1): λs, λc/λs, tip radius [pub]; spacing from memory
    [
        (0.08, 2.5, 32, 2.0, 0.5),
        (0.25, 2.5, 100, 2.0, 0.5),
        (0.8, 2.5, 320, 2.0, 0.5),
        (2.5, 8.0, 312.5, 5.0, 1.5),
        (8.0, 25.0, 320, 10.0, 5.0),
    ],
)
def test_iso3274_settings(lc, ls, ratio, tip, spacing):
    row = instrument_settings(lc)
    assert (row.lambda_s_um, row.max_tip_radius_um, row.max_spacing_um) == (ls, tip, spacing)
    # the nominal ratios 30/100/300 are rounded: 80/2.5 = 32, 800/2.5 = 320, 2500/8 = 312.5
    assert row.ratio == pytest.approx(ratio)
    assert default_lambda_s_um(lc) == ls


def test_iso3274_unknown_cutoff():
    with pytest.raises(SpeccheckError, match=r"lambda_c 1.0 mm is not in ISO 3274 Table 1"):
        instrument_settings(1.0)


# --- Conditions: evaluation length in the trace --------------------------------------------


def test_required_trace_is_seven_cutoffs_at_0_8():
    # 5 sections × 0.8 mm + 0.8 mm run-in + 0.8 mm run-out = 5.6 mm (conditions.py docstring)
    c = Conditions.standard(0.8)
    assert c.lambda_s_um == 2.5
    assert c.evaluation_length_mm == 4.0
    assert c.required_trace_mm == 5.6  # exactly: a 5.6 mm trace is long enough


@pytest.mark.parametrize("n_points", [11200, 11201, 11199])
def test_a_5_6_mm_trace_is_evaluable_over_its_central_4_mm(n_points):
    # 11200 points = 5.6 mm read as N·dx, 11201 read as (N − 1)·dx; 11199 one short
    c = Conditions.standard(0.8)
    ev = c.evaluation_slice(n_points, 0.5)
    assert ev is not None
    assert ev.stop - ev.start == 8000  # 4 mm at 0.5 µm
    # centred: equal margins (within one point for an odd surplus)
    assert abs(ev.start - (n_points - ev.stop)) <= 1
    assert ev.start >= 1599  # λc = 1600 points before, less the rounding slack
    sections = c.section_slices(n_points, 0.5)
    assert [s.stop - s.start for s in sections] == [1600] * 5
    assert sections[0].start == ev.start and sections[-1].stop == ev.stop


@pytest.mark.parametrize("dx_um", [0.5, 0.56, 0.056, 0.0056, 0.37, 1.3])
def test_exactly_5_6_mm_is_evaluable_at_any_spacing(dx_um):
    # λc/dx not a whole number: sections are rounded to whole samples (conditions.py)
    c = Conditions.standard(0.8)
    n = round(5600.0 / dx_um)
    ev = c.evaluation_slice(n, dx_um)
    assert ev is not None
    assert (ev.stop - ev.start) * dx_um == pytest.approx(4000.0, abs=5 * dx_um / 2)
    # run-in: λc less at most ~2 samples
    assert ev.start * dx_um >= 800.0 - 2.5 * dx_um


def test_a_shorter_trace_is_not_evaluable():
    c = Conditions.standard(0.8)
    # slack is ceil(5/2) + 2 = 5 points: 11195 is the shortest trace accepted at 0.5 µm
    assert c.evaluation_slice(11195, 0.5) is not None
    assert c.evaluation_slice(11194, 0.5) is None
    assert c.section_slices(11194, 0.5) is None
    # a 5.5 mm trace is clearly short
    assert c.evaluation_slice(11000, 0.5) is None


def test_kernel_mass_left_out_by_the_run_in():
    """Numbers quoted in conditions.py: Gaussian kernel mass beyond ±λc/2 and ±λc.

    ∫_{|x|>a} s = erfc(√π a / (αλc)) for s(x) = exp(-π(x/(αλc))²)/(αλc) (closed form).
    """
    alpha = math.sqrt(math.log(2) / math.pi)
    assert math.erfc(math.sqrt(math.pi) * 0.5 / alpha) == pytest.approx(0.0076, abs=5e-5)
    assert math.erfc(math.sqrt(math.pi) / alpha) == pytest.approx(9.5e-8, rel=0.01)


def test_sections_and_waviness_lengths():
    c = Conditions(2.5, 8.0, sections=3)
    assert c.evaluation_length_mm == pytest.approx(7.5)
    assert c.required_trace_mm == pytest.approx(12.5)
    w = Conditions(0.8, 2.5, lambda_f_mm=8.0, profile="W")
    assert w.section_length_mm == 8.0 and w.run_in_mm == 8.0
    assert w.required_trace_mm == pytest.approx(56.0)


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        (
            {"lambda_c_mm": 0.0, "lambda_s_um": 2.5},
            "lambda_c_mm must be a positive number, got 0.0",
        ),
        (
            {"lambda_c_mm": 0.8, "lambda_s_um": 800.0},
            "lambda_s 800 µm must be shorter than lambda_c 0.8 mm",
        ),
        (
            {"lambda_c_mm": 0.8, "lambda_s_um": 2.5, "lambda_f_mm": 0.5},
            "lambda_f 0.5 mm must be longer",
        ),
        (
            {"lambda_c_mm": 0.8, "lambda_s_um": 2.5, "sections": 0},
            "sections must be a whole number ≥ 1, got 0",
        ),
        ({"lambda_c_mm": 0.8, "lambda_s_um": 2.5, "filter": "median"}, "unknown filter 'median'"),
        ({"lambda_c_mm": 0.8, "lambda_s_um": 2.5, "form": "spline"}, "unknown form 'spline'"),
        (
            {"lambda_c_mm": 0.8, "lambda_s_um": 2.5, "profile": "W"},
            "a waviness profile \\(W\\) needs lambda_f",
        ),
    ],
)
def test_conditions_reject_bad_values(kwargs, match):
    with pytest.raises(SpeccheckError, match=match):
        Conditions(**kwargs)


def test_filter_and_form_names_match_the_filters_package():
    from speccheck.filters import FORM_KINDS
    from speccheck.parameters.conditions import FORMS

    assert tuple(FORMS) == tuple(FORM_KINDS)


# --- ISO 4288 selection procedure ---------------------------------------------------------


def _measure_from(table: dict[float, float]):
    calls: list[float] = []

    def measure(lambda_c_mm: float) -> float:
        calls.append(lambda_c_mm)
        return table[lambda_c_mm]

    return measure, calls


def test_selection_settles_in_first_row():
    # ISO 4288:1996 7.2.2: estimate Ra 0.5 → λc 0.8; measured 0.6 lies in > 0.1 – 2; the next
    # shorter λc 0.25 gives 0.55, not in its row > 0.02 – 0.1 (Table 1): 0.8 mm stays
    measure, calls = _measure_from({0.8: 0.6, 0.25: 0.55})
    sel = select_lambda_c("Ra", 0.5, measure)
    assert sel.settled and sel.lambda_c_mm == 0.8 and calls == [0.8, 0.25]
    assert [s.row_lambda_c_mm for s in sel.steps] == [0.8, 0.8]
    assert "next shorter λc 0.25 mm" in sel.message


def test_selection_takes_the_shorter_cutoff_when_its_value_fits_its_row():
    # ISO 4288:1996 7.2.2 shorter-cut-off step (from memory), ISO 4288 Table 1 rows:
    # at 0.8 mm Ra 0.15 lies in > 0.1 – 2 (0.8 mm); at 0.25 mm Ra 0.09 lies in > 0.02 – 0.1
    # (0.25 mm): take 0.25 mm; at 0.08 mm Ra 0.05 is not in its row (≤ 0.02): 0.25 mm stays.
    measure, calls = _measure_from({0.8: 0.15, 0.25: 0.09, 0.08: 0.05})
    sel = select_lambda_c("Ra", 0.5, measure)
    assert sel.settled and sel.lambda_c_mm == 0.25
    assert calls == [0.8, 0.25, 0.08]
    assert [s.row_lambda_c_mm for s in sel.steps] == [0.8, 0.25, 0.25]


def test_selection_moves_rows_until_the_value_lies_in_its_row():
    # A ground surface whose measured Ra grows with λc (waviness let through):
    # estimate 0.08 → 0.25 mm; at 0.25 measured 0.15 → row 0.8; at 0.8 measured 1.2 → stays.
    measure, calls = _measure_from({0.25: 0.15, 0.8: 1.2})
    sel = select_lambda_c("Ra", 0.08, measure)
    assert sel.settled and sel.lambda_c_mm == 0.8
    assert calls == [0.25, 0.8]
    assert [(s.lambda_c_mm, s.measured_um, s.row_lambda_c_mm) for s in sel.steps] == [
        (0.25, 0.15, 0.8),
        (0.8, 1.2, 0.8),
    ]


def test_selection_periodic_by_rsm():
    # periodic profile (turned face): RSm estimate 100 µm → 0.25 mm; measured 160 µm → 0.8 mm row
    measure, calls = _measure_from({0.25: 160.0, 0.8: 170.0})
    sel = select_lambda_c("RSm", 100.0, measure, periodic=True)
    assert sel.settled and sel.lambda_c_mm == 0.8 and calls == [0.25, 0.8]


def test_selection_stops_on_oscillation_and_says_so():
    # measured at 0.8 → belongs to 2.5; measured at 2.5 → belongs to 0.8: a cycle
    measure, calls = _measure_from({0.8: 2.2, 2.5: 1.9})
    sel = select_lambda_c("Ra", 1.0, measure)
    assert not sel.settled and not sel
    assert calls == [0.8, 2.5]
    assert sel.lambda_c_mm == 0.8
    assert "oscillates between λc 0.8 and 2.5 mm" in sel.message


def test_selection_stops_when_value_leaves_the_table():
    measure, _ = _measure_from({2.5: 120.0})
    sel = select_lambda_c("Ra", 5.0, measure)
    assert not sel.settled and sel.steps[-1].row_lambda_c_mm is None
    assert "above the iso4288 table" in sel.message


@pytest.mark.parametrize(
    ("parameter", "table", "top"),
    [
        ("Ra", "iso4288", 80.0),
        ("Rz", "iso4288", 200.0),
        ("RSm", "iso4288", 4000.0),
        ("Rz", "iso21920-3", 1e4),
        ("Ra", "iso21920-3", 1e4),
    ],
)
def test_cutoff_never_decreases_with_the_value(parameter, table, top):
    # the rows of every table are ordered: a larger value never gets a shorter cut-off
    from hypothesis import given, settings
    from hypothesis import strategies as st

    values = st.floats(min_value=1e-3, max_value=top)

    @settings(max_examples=200, deadline=None)
    @given(values, values)
    def check(a, b):
        lo, hi = sorted((a, b))
        assert default_lambda_c_mm(parameter, lo, table=table) <= default_lambda_c_mm(
            parameter, hi, table=table
        )

    check()


def test_numpy_scalars_are_accepted_and_normalised():
    import numpy as np

    c = Conditions(np.float64(0.8), np.float32(2.5), sections=np.int64(3))
    assert type(c.lambda_c_mm) is float and type(c.sections) is int
    assert c == Conditions(0.8, 2.5, sections=3)
    with pytest.raises(SpeccheckError, match="sections must be a whole number ≥ 1, got 2.5"):
        Conditions(0.8, 2.5, sections=2.5)
    with pytest.raises(SpeccheckError, match="lambda_c_mm must be a positive number, got True"):
        Conditions(True, 2.5)
