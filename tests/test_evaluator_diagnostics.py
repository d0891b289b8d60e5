"""Diagnostics in `check` results and the opt-in `isolated_features: undecided` policy.

Profiles: the ideal turned profile (circular cusps of nose radius r = 0.8 mm at feed f = 0.1 mm,
the classical kinematic model; common practice, no source) plus small seeded noise, with and
without one V-shaped scratch 10 µm deep and 6 µm wide. Rsk (ISO 4287:1997 4.2.3) of the cusp
profile is positive; heights cubed let the scratch turn it negative.
"""

from __future__ import annotations

import textwrap

import numpy as np
import pytest

from speccheck.evaluation.evaluator import evaluate
from speccheck.profile import Profile, SourceInfo
from speccheck.spec.loader import load_spec

DX_UM = 0.5
TRACE_UM = 5600.0  # 7 cut-offs of 0.8 mm
FEED_UM, NOSE_UM = 100.0, 800.0
SCRATCH_X_UM = 2850.0


def turned(*, scratch: bool, seed: int = 3) -> Profile:
    x = np.arange(int(TRACE_UM / DX_UM) + 1) * DX_UM
    u = ((x + 13.0) % FEED_UM) - FEED_UM / 2
    z = NOSE_UM - np.sqrt(NOSE_UM**2 - u**2) + np.random.default_rng(seed).normal(0, 0.02, x.size)
    if scratch:
        d = np.abs(x - SCRATCH_X_UM)
        z = z - np.where(d < 3.0, 10.0 * (1 - d / 3.0), 0.0)
    name = "scratched" if scratch else "clean"
    return Profile(z, DX_UM, source=SourceInfo(path=f"{name}.csv", sha256=name, format="csv"))


def spec(tmp_path, policy: str):
    text = textwrap.dedent(
        f"""\
        spec_version: 1
        part: {{number: KFP-1187, revision: A, surface: sealing face}}
        measurement: {{cutoff: 0.8mm, ls: none}}
        diagnostics: {{isolated_features: {policy}}}
        requirements:
          - {{parameter: Rsk, lower: 0, rule: max}}
        """
    )
    path = tmp_path / f"spec-{policy}.yaml"
    path.write_text(text, encoding="utf-8")
    return load_spec(path)


def test_clean_profile_conforms_without_diagnostics(tmp_path):
    result = evaluate(spec(tmp_path, "report"), [turned(scratch=False)])
    req = result.requirements[0]
    assert req.verdict == "conforming"
    assert req.values[0].value > 0.3  # positive skew of turned cusps (common practice, no source)
    assert req.diagnostics == []


def test_scratch_is_reported_but_the_verdict_stands_by_default(tmp_path):
    result = evaluate(spec(tmp_path, "report"), [turned(scratch=True)])
    req = result.requirements[0]
    assert req.values[0].value < 0  # the scratch flips the sign
    assert req.verdict == "nonconforming"  # diagnostics never change a verdict silently
    [diag] = req.diagnostics
    assert diag["measurement"] == 0
    assert "Rsk" in diag["parameters"]
    [feature] = diag["features"]
    assert feature["x_mm"] == pytest.approx(SCRATCH_X_UM / 1e3, abs=4 * DX_UM / 1e3)
    assert diag["without_features"]["Rsk"] > 0.3


def test_policy_undecided_turns_the_flagged_requirement_undecided(tmp_path):
    result = evaluate(spec(tmp_path, "undecided"), [turned(scratch=True)])
    req = result.requirements[0]
    assert (req.verdict, req.reason) == ("undecided", "isolated-features")
    assert result.verdict == "undecided"
    assert "x = 2.85" in req.explanation


def test_policy_undecided_leaves_a_clean_profile_decided(tmp_path):
    result = evaluate(spec(tmp_path, "undecided"), [turned(scratch=False)])
    assert result.requirements[0].verdict == "conforming"


def test_diagnostics_in_the_plain_check_output_and_params_json(tmp_path, capsys):
    import json

    from speccheck.cli.main import main
    from speccheck.readers import write_csv

    profile = tmp_path / "scratched.csv"
    write_csv(profile, turned(scratch=True))
    spec_path = tmp_path / "spec.yaml"
    spec_path.write_text(
        "spec_version: 1\n"
        "part: {number: KFP-1187, revision: A, surface: sealing face}\n"
        "measurement: {cutoff: 0.8mm, ls: none}\n"
        "requirements:\n"
        "  - {parameter: Rsk, lower: 0, rule: max}\n",
        encoding="utf-8",
    )
    assert main(["check", str(spec_path), str(profile)]) == 1
    out = " ".join(capsys.readouterr().out.split())
    assert "Warning (profile 1): Rsk rests on a few points" in out
    assert "x = 2.850 mm" in out

    assert main(["params", str(profile), "--cutoff", "0.8mm", "--ls", "none", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    [diag] = data["diagnostics"]
    assert "Rsk" in diag["parameters"]
    assert diag["features"][0]["x_mm"] == pytest.approx(2.85, abs=4 * DX_UM / 1e3)
