"""Each requirement names the mean line its value is actually measured from.

Sources: ISO 13565-1:1996 clause 5 (the Rk family's reference line: Gaussian mean line, valleys
below it suppressed, filtered again; domain notes section 3 [mem]); ISO 16610-31 for the robust
filter; ISO 16610-21 Gaussian for R parameters.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from speccheck.cli.main import main
from speccheck.parameters.compute import compute_parameters
from speccheck.parameters.conditions import Conditions
from speccheck.profile import Profile
from speccheck.readers import write_csv

HEAD = "spec_version: 1\npart: {number: KFP-3310, revision: B, surface: bore 1}\n"


@pytest.mark.parametrize(
    ("filter_line", "rk_label"),
    [
        ("", "ISO 13565-1 valley-suppressed reference line"),
        ("measurement: {filter: robust}\n", "robust Gaussian regression filter, order 2"),
    ],
)
def test_rk_family_is_labelled_by_the_line_it_is_computed_on(
    tmp_path, capsys, filter_line, rk_label
):
    spec = tmp_path / "s.yaml"
    spec.write_text(
        HEAD + filter_line + 'requirements:\n  - "-0.8/Rpk 0.3"\n  - "Ra 0.8"\n', encoding="utf-8"
    )
    rng = np.random.default_rng(3)
    prof = tmp_path / "p.csv"
    write_csv(prof, Profile(rng.normal(scale=0.3, size=11200), 0.5))
    main(["check", str(spec), str(prof), "--json", "-"])
    d = json.loads(capsys.readouterr().out)
    rpk, ra = d["requirements"]
    assert rpk["conditions"]["reference_line"].startswith(rk_label)
    if not filter_line:
        assert ra["conditions"]["reference_line"] == "Gaussian filter (ISO 16610-21)"
    assert main(["explain", str(spec)]) == 0
    assert f"filter:     {rk_label}" in capsys.readouterr().out


def test_label_matches_what_compute_does():
    """The label and the computation's own note name the same line."""
    z = np.random.default_rng(4).normal(scale=0.3, size=11200)
    ps = compute_parameters(z, dx_um=0.5, conditions=Conditions(0.8, None))
    assert any("ISO 13565-1" in n and n.startswith("Rk family") for n in ps.notes)
