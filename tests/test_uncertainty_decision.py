"""`uncertainty: estimate`: every value carries its own U; guarded decisions use it."""

from __future__ import annotations

import numpy as np
import pytest

from speccheck.errors import SpecError
from speccheck.evaluation.evaluator import evaluate
from speccheck.instrument import load_instrument
from speccheck.profile import Profile
from speccheck.spec import load_spec

SPEC = (
    "spec_version: 1\npart:\n  number: T-1\n  revision: A\n  surface: face\n"
    "decision_rule: guarded-acceptance\nuncertainty: estimate\n"
    'measurement:\n  cutoff: 0.8mm\nrequirements:\n  - "Ra max 0.66"\n'
)


def _instrument(tmp_path, u_rel: float):
    p = tmp_path / f"bench-{u_rel}.yaml"
    p.write_text(
        "instrument_version: 1\nid: DEMO-BENCH\namplification:\n  coefficient: 1.0\n"
        f"  standard_uncertainty: {u_rel}\n  certificate: DEMO-1\n",
        encoding="utf-8",
    )
    return load_instrument(p)


def test_decision_flips_from_conforming_to_undecided_when_u_grows(tmp_path):
    # a sine of amplitude 1 µm: Ra = 2/π = 0.6366 µm (domain notes [calc]); limit 0.66 µm.
    # ISO 14253-1 guarded acceptance: conforming only if Ra + U ≤ 0.66. U = 1.96·u·Ra (hand
    # derivation, see test_uncertainty): u = 0.5 % gives U = 0.0062 (proven within), u = 3 %
    # gives U = 0.037 (in the uncertainty range: conformity not proven)
    spec_path = tmp_path / "s.yaml"
    spec_path.write_text(SPEC, encoding="utf-8")
    spec = load_spec(spec_path)
    z = np.sin(2 * np.pi * np.arange(11_201) * 0.5 / 100.0)
    prof = Profile(z_um=z, dx_um=0.5)
    small = evaluate(spec, [prof], instrument=_instrument(tmp_path, 0.005))
    large = evaluate(spec, [prof], instrument=_instrument(tmp_path, 0.03))
    rs, rl = small.requirements[0], large.requirements[0]
    assert rs.values[0].zone == "within" and rs.verdict == "conforming"
    assert rl.values[0].zone == "uncertain" and rl.verdict != "conforming"
    ra = rs.values[0].value
    assert rs.values[0].uncertainty == pytest.approx(1.959964 * 0.005 * ra, rel=1e-4)
    assert rl.values[0].uncertainty == pytest.approx(1.959964 * 0.03 * ra, rel=1e-4)
    budget = rl.uncertainty_budget[0]
    assert budget["dominant"] == "vertical amplification"
    assert "DEMO-1" in budget["budget"][0]["source"]
    assert rl.uncertainty_source.startswith("estimated per value")


def test_estimate_needs_an_instrument_file(tmp_path):
    spec_path = tmp_path / "s.yaml"
    spec_path.write_text(SPEC, encoding="utf-8")
    z = np.sin(2 * np.pi * np.arange(11_201) * 0.5 / 100.0)
    with pytest.raises(SpecError, match="needs the instrument file"):
        evaluate(load_spec(spec_path), [Profile(z_um=z, dx_um=0.5)])


def test_parameter_outside_the_model_is_refused_at_its_line(tmp_path):
    spec_path = tmp_path / "s.yaml"
    spec_path.write_text(SPEC.replace("Ra max 0.66", "RSm max 0.2"), encoding="utf-8")
    with pytest.raises(SpecError, match="uncertainty: estimate covers Ra") as info:
        load_spec(spec_path)
    assert info.value.where and info.value.where == "line 11, col 5"
