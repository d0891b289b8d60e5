"""Relative material ratio: Rmr at a depth below the level of a reference ratio Rmr0.

Sources: ISO 4287:1997 4.5.4 (relative material ratio, from memory; the level is Rδc below
the reference C0 = C(Rmr0)). Closed form for a sine of amplitude A: the material ratio at
height h is arccos(h/A)/π, so C0 = A cos(π Rmr0) and Rmr = arccos((C0 − c)/A)/π (domain notes
section 4 [calc] for the sine's material ratio curve).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from speccheck.cli.main import main
from speccheck.parameters.material import (
    material_ratio_at_depth,
    parse_relative_level,
    relative_material_ratio,
)

X = np.arange(200_000) / 200_000 * 20.0  # 20 periods, 10 000 points each


def sine_with_spike(spike_um: float) -> np.ndarray:
    z = np.sin(2 * np.pi * X)
    z[50_000:50_003] += spike_um  # three points: 0.0015 % of the profile
    return z


def test_relative_ratio_of_a_sine_and_its_spike_robustness():
    c0 = math.cos(math.pi * 0.05)
    expected = math.acos(c0 - 0.5) / math.pi * 100  # 33.80 %
    clean = relative_material_ratio(sine_with_spike(0.0), depth_um=0.5, reference_pct=5.0)
    spiked = relative_material_ratio(sine_with_spike(5.0), depth_um=0.5, reference_pct=5.0)
    assert clean == pytest.approx(expected, abs=0.01)
    assert spiked == pytest.approx(expected, abs=0.01)  # the spike does not move C0
    # measured from the highest peak, the same spike moves the level by 5 µm: Rmr(0.5) ≈ 0
    plain_clean = material_ratio_at_depth(sine_with_spike(0.0), depth_um=0.5)
    assert plain_clean == pytest.approx(100 / 3, abs=0.01)  # arccos(0.5)/π
    assert material_ratio_at_depth(sine_with_spike(5.0), depth_um=0.5) < 0.01


@pytest.mark.parametrize(
    ("text", "value"), [("0.5", (0.5, None)), ("0.5,5%", (0.5, 5.0)), ("0.3, 2%", (0.3, 2.0))]
)
def test_parse_level(text, value):
    assert parse_relative_level(text) == value


@pytest.mark.parametrize("text", ["0.5,5", "-1", "0.5,100%", "a", "0.5,1%,2%"])
def test_parse_level_refuses(text):
    with pytest.raises(ValueError):
        parse_relative_level(text)


def test_relative_ratio_in_a_spec_lint_equals_check(tmp_path, capsys):
    head = "spec_version: 1\npart: {number: A, revision: B, surface: C}\n"
    ok = tmp_path / "ok.yaml"
    ok.write_text(head + 'measurement: {cutoff: 0.8mm}\nrequirements:\n  - "L Rmr(0.5,5%) 60"\n')
    assert main(["lint", str(ok)]) == 0
    bad = tmp_path / "bad.yaml"
    bad.write_text(head + 'measurement: {cutoff: 0.8mm}\nrequirements:\n  - "Rmr(0.5,5) 60"\n')
    assert main(["lint", str(bad)]) == 2
    assert "e.g. Rmr(0.5,5%)" in capsys.readouterr().out
