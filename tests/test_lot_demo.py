"""The demo lot (invented Kestrel Fluid Power scenario): plan, spec and profiles that run."""

from __future__ import annotations

from pathlib import Path

from speccheck.demo.data import ground_profile
from speccheck.lot.demo import DEMO_LOT_ROUGH, DEMO_LOT_SERIALS, build_demo_lot
from speccheck.lot.plan import load_plan
from speccheck.lot.runner import inspect_lot


def test_demo_lot_has_mixed_parts_and_is_rejected(tmp_path: Path):
    plan_path = build_demo_lot(tmp_path / "demo", ground_profile=ground_profile)
    plan = load_plan(plan_path)
    # lot of 20, level II: code letter C, n = 5 (ISO 2859-1:1999 Tables 1 and 2-A)
    assert (plan.lot["size"], plan.sampling.code_letter, plan.sampling.sample_size) == (20, "C", 5)
    assert len(DEMO_LOT_SERIALS) == plan.sampling.sample_size
    result = inspect_lot(plan, plan_path.parent / "data", workers=1)
    verdicts = {p.serial: p.verdict for p in result.parts}
    # the rougher shafts (generated Ra ≥ 0.52 µm against Ra 0.4) fail, the others pass
    assert verdicts == {
        s: ("nonconforming" if s in DEMO_LOT_ROUGH else "conforming") for s in DEMO_LOT_SERIALS
    }
    # 2 nonconforming > c = 1: reject, exit status 1
    assert (result.disposition, int(result.exit_status)) == ("reject", 1)
