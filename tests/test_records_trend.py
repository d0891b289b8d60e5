"""Trend of a parameter from the records store: values, limits, Cp and Cpk."""

from __future__ import annotations

from pathlib import Path

import pytest
from test_records_store import make_result

from speccheck.records.store import RecordsStore
from speccheck.records.trend import MIN_VALUES_FOR_INDEX, capability, collect_trend, trend_svg

# Hand computation (NIST/SEMATECH e-Handbook of Statistical Methods 6.1.6:
# Cp = (USL − LSL)/6s, Cpk = min(USL − x̄, x̄ − LSL)/3s, s the sample standard deviation):
# values 0.30 0.32 0.28 0.35 0.25 -> x̄ = 1.50/5 = 0.30
# deviations 0, +0.02, −0.02, +0.05, −0.05 -> Σd² = 0.0058 -> s² = 0.0058/4 = 0.00145
# s = √0.00145 = 0.0380789
# LSL 0.10, USL 0.45: Cp = 0.35/(6 × 0.0380789) = 1.53191
# Cpu = 0.15/(3 × 0.0380789) = 1.31306; Cpl = 0.20/(3 × 0.0380789) = 1.75075; Cpk = 1.31306
VALUES = [0.30, 0.32, 0.28, 0.35, 0.25]


def test_capability_two_sided_by_hand():
    cap = capability(VALUES, lower=0.10, upper=0.45)
    assert cap.mean == pytest.approx(0.30, abs=1e-12)
    assert cap.sd == pytest.approx(0.0380789, rel=1e-5)
    assert cap.cp == pytest.approx(1.53191, rel=1e-5)
    assert cap.cpu == pytest.approx(1.31306, rel=1e-5)
    assert cap.cpl == pytest.approx(1.75075, rel=1e-5)
    assert cap.cpk == pytest.approx(1.31306, rel=1e-5)


def test_capability_one_sided_by_hand():
    # only an upper limit (e.g. Ra 0.45): one-sided Cpk = Cpu, no Cp (handbook 6.1.6)
    cap = capability(VALUES, upper=0.45)
    assert cap.cp is None
    assert cap.cpk == pytest.approx(1.31306, rel=1e-5)
    assert "one limit only: one-sided Cpk, no Cp" in cap.note


def test_too_few_values_flagged_at_boundary():
    # fewer than 25 values: not meaningful (common practice, no source); 25 is enough
    assert MIN_VALUES_FOR_INDEX == 25
    base = [0.3 + 0.001 * (i % 7) for i in range(25)]
    assert capability(base[:24], upper=0.45).meaningful is False
    assert "only 24 values: fewer than 25" in capability(base[:24], upper=0.45).note
    assert capability(base, upper=0.45).meaningful is True


def test_degenerate_sets():
    assert capability([0.3], upper=0.4).cpk is None
    cap = capability([0.3, 0.3, 0.3], upper=0.4)
    assert cap.cpk is None and cap.note == "all values equal: capability indices undefined"
    assert capability(VALUES).note.startswith("no limits")


def test_collect_trend_from_store(tmp_path: Path):
    with RecordsStore.open(tmp_path / "r.sqlite") as store:
        for v in VALUES:
            store.append_check(make_result(v))
        store.append_check(make_result(9.9, part="KFP-3310"))  # another part: ignored
        tr = collect_trend(store.list(part="KFP-2041"), part="KFP-2041", parameter="Ra")
    assert [p.value for p in tr.points] == VALUES
    assert (tr.upper, tr.lower, tr.unit) == (0.4, None, "µm")  # from the records' requirement
    # Cpu = (0.4 − 0.30)/(3 × 0.0380789) = 0.875378 (same hand computation as above)
    assert tr.capability.cpk == pytest.approx(0.875378, rel=1e-5)
    assert tr.points[0].label == "record 1, measurement 1"
    svg = trend_svg(tr)
    assert svg.lstrip().startswith("<?xml") and "</svg>" in svg
