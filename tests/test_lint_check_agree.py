"""One truth for lint and check: lint exits 2 exactly when check refuses the spec (exit 2).

A property test over generated specs (hypothesis), every example spec, and the refusals the
other tests exercise. The profile is a valid 5.6 mm trace, so check's exit 2 can only come
from the spec. Facts checked: the exit statuses of speccheck's own contract (README: lint
exit 2 on errors; check 0 / 1 / 3, 2 on error); no outside source is needed for agreement.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from speccheck.cli.main import main
from speccheck.profile import Profile
from speccheck.readers import write_csv

EXAMPLES = sorted((Path(__file__).resolve().parents[1] / "rules_examples").glob("*.yaml"))

CALLOUTS = [
    '"Ra 0.8"',
    '"Rz max 6.3"',
    '"Rz 16%"',
    '"U Rz 4; L Rz 1.6"',
    '"U Rz 4; L Rz 6"',
    '"L Ra 0.2"',
    '"Ra 0"',
    '"Rk 1.2"',
    '"Rsk 0.5"',
    '"0.8-8/Wa max 3"',
    '"Wa max 2"',
    '"-0.8/Rz3 6.3"',
    '"0.0025-0.8/Rz 6.3"',
    '"Ra 300"',
    '"Rmr(0.5) 70"',
    "{parameter: Rvk, upper: 2.0um, lower: 0.5um, rule: max, cutoff: 0.8mm}",
    "{parameter: Ra, upper: 0.8}",
    "{parameter: Wt, upper: 3um, rule: max, cutoff: 0.8mm, lf: 8mm}",
    "{parameter: Ra, upper: 3um, lf: 8mm}",
    "{parameter: Wa, upper: 2um, rule: max, cutoff: 2.5mm, lf: 0.8mm}",
]


@pytest.fixture(scope="module")
def profile(tmp_path_factory) -> str:
    path = tmp_path_factory.mktemp("agree") / "p.csv"
    x = np.arange(11200) * 0.5
    write_csv(path, Profile(0.5 * np.sin(2 * np.pi * x / 100.0), 0.5))
    return str(path)


def statuses(spec: Path, profile: str, capsys) -> tuple[int, int]:
    lint = main(["lint", str(spec)])
    check = main(["check", str(spec), profile])
    capsys.readouterr()
    return lint, check


@pytest.mark.parametrize("spec", EXAMPLES, ids=lambda p: p.name)
def test_examples_lint_and_check_agree(spec, profile, capsys):
    lint, check = statuses(spec, profile, capsys)
    assert lint == 0 and check != 2


@settings(
    max_examples=40,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture],
)
@given(
    convention=st.sampled_from(["iso1302", "iso21920", "asme"]),
    decision=st.sampled_from(["simple", "guarded-acceptance", "guarded-rejection"]),
    with_u=st.booleans(),
    units=st.sampled_from([None, "um", "uin"]),
    cutoff=st.sampled_from([None, "0.8mm", "2.5mm", "0.7mm"]),
    reqs=st.lists(st.sampled_from(CALLOUTS), min_size=1, max_size=3),
)
def test_generated_specs_lint_exit_2_iff_check_exit_2(
    tmp_path, profile, capsys, convention, decision, with_u, units, cutoff, reqs
):
    lines = [
        "spec_version: 1",
        "part: {number: KFP-2041, revision: D, surface: seal seat}",
        f"convention: {convention}",
        f"decision_rule: {decision}",
    ]
    if units:
        lines.append(f"units: {units}")
    if cutoff:
        lines.append(f"measurement: {{cutoff: {cutoff}}}")
    if with_u:
        lines.append("uncertainty: {Ra: 0.05um, Rz: 0.2um, Rk: 0.1um, Rvk: 0.1um, Rsk: 0.05}")
    lines.append("requirements:")
    lines += [f"  - {r}" for r in reqs]
    spec = tmp_path / "gen.yaml"
    spec.write_text("\n".join(lines) + "\n", encoding="utf-8")
    lint, check = statuses(spec, profile, capsys)
    assert (lint == 2) == (check == 2), spec.read_text(encoding="utf-8")


HEAD = "spec_version: 1\npart: {number: KFP-2041, revision: D, surface: seal seat}\n"


def test_contradictory_requirements_are_refused_by_both(tmp_path, profile, capsys):
    """Ra ≤ 0.8 µm and Ra ≥ 1.0 µm under the same conditions (both λc 0.8 mm, ISO 4288
    Table 1): no surface meets both."""
    spec = tmp_path / "c.yaml"
    spec.write_text(HEAD + 'requirements:\n  - "Ra 0.8"\n  - "L Ra 1.0"\n', encoding="utf-8")
    message = (
        f"{spec}:5:5: L Ra 1.0 contradicts requirement 1 (Ra 0.8): no Ra can be ≥ 1 µm and ≤ 0.8 µm"
    )
    assert main(["lint", str(spec)]) == 2
    assert capsys.readouterr().out.splitlines() == [message]
    assert main(["check", str(spec), profile]) == 2
    assert capsys.readouterr().err == f"speccheck: error: {message}\n"


def test_duplicated_requirement_is_a_warning(tmp_path, capsys):
    spec = tmp_path / "d.yaml"
    spec.write_text(
        HEAD + 'requirements:\n  - "Ra 0.8"\n  - "Rz max 6.3"\n  - "Ra 0.8"\n  - "Rz 4"\n',
        encoding="utf-8",
    )
    assert main(["lint", str(spec)]) == 0
    out = capsys.readouterr().out.splitlines()
    assert out == [
        f"{spec}:6:5: warning: Ra 0.8 limits the upper side of Ra again (requirement 1: Ra 0.8) "
        "under the same conditions; the stricter limit governs: state it once",
        f"{spec}: ok, 1 warning",
    ]  # Rz max 6.3 and Rz 4 (16 % rule) are different rules: both may stand
