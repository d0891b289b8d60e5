"""The evaluator on sine profiles whose parameters are known in closed form.

Closed forms (derived here): a sine z = A·sin(2πx/λ) sampled with N points per period, N even
and the sections holding whole periods, has the discrete mean |z| = A·(2/N)·cot(π/N) (the sum
of sin(2πk/N) over k = 0 … N/2 − 1 is cot(π/N)); this tends to the continuous Ra = 2A/π
(domain notes §4, "Check values [calc]"). With a sample on every crest Rp = Rv = A, Rz = 2A.
The specs below state ``ls: none`` (no λs filter), and λ = 50 µm against λc = 0.8 mm passes the
ISO 16610-21 roughness filter with transmission 1 − exp(−π(0.4697·16)²) = 1 − 1e-77, so the
closed forms hold to rounding.

Acceptance rules: ISO 4288:1996 5.2 (16 %), 5.3 (max); decision rules: ISO 14253-1:2017 and
ILAC G8:2019 (from memory for clause numbers); sampling spacing: ISO 3274:1996 Table 1 (0.5 µm
for λc 0.8 mm, from memory); trace length: evaluation length + one λc run-in and run-out
(speccheck.parameters.conditions, common practice, no source).
"""

from __future__ import annotations

import json
import math
import textwrap

import numpy as np
import pytest

from speccheck.errors import SpecError
from speccheck.evaluation import evaluate
from speccheck.evaluation.evaluator import max_spacing_for_um
from speccheck.evaluation.result import CheckResult
from speccheck.profile import Profile, SourceInfo
from speccheck.spec.loader import load_spec

WAVELENGTH_UM = 50.0
DX_UM = 0.5
N_PER_PERIOD = int(WAVELENGTH_UM / DX_UM)  # 100
RA_PER_AMPLITUDE = (2 / N_PER_PERIOD) / math.tan(math.pi / N_PER_PERIOD)  # → 2/π as N → ∞
FULL_POINTS = 11201  # 7 × 0.8 mm at 0.5 µm = 11200 points needed (λc 0.8 mm, 5 sections)


def amplitude_for_ra(ra_um: float) -> float:
    return ra_um / RA_PER_AMPLITUDE


def sine(
    amplitude_um: float, *, points: int = FULL_POINTS, dx_um: float = DX_UM, name: str = "p"
) -> Profile:
    x_um = np.arange(points) * dx_um
    z = amplitude_um * np.sin(2 * np.pi * x_um / WAVELENGTH_UM)
    return Profile(
        z, dx_um, source=SourceInfo(path=f"{name}.csv", sha256=f"sha-{name}", format="csv")
    )


def write_spec(tmp_path, requirements: str, extra: str = "", measurement: str = "{ls: none}"):
    text = textwrap.dedent(
        """\
        spec_version: 1
        part: {number: KFP-2041, revision: C, surface: seal seat,
               supplier: Ardent Precision Grinding}
        """
    )
    text += f"measurement: {measurement}\n"
    text += (
        "requirements:\n"
        + textwrap.indent(textwrap.dedent(requirements), "  ")
        + textwrap.dedent(extra)
    )
    path = tmp_path / "spec.yaml"
    path.write_text(text, encoding="utf-8")
    return load_spec(path)


def test_closed_form_reference_is_close_to_2a_over_pi():
    # sanity of the closed form itself: N = 100 gives 2/π to 3.3e-4 (cot expansion, 1 − π²/(3N²))
    assert RA_PER_AMPLITUDE == pytest.approx(
        2 / math.pi * (1 - math.pi**2 / (3 * N_PER_PERIOD**2)), rel=1e-7
    )


def test_sine_ra_matches_closed_form(tmp_path):
    spec = write_spec(tmp_path, '- "Ra 0.8"\n')
    res = evaluate(spec, [sine(1.0)], created="t")
    (v,) = res.requirements[0].values
    assert v.value == pytest.approx(RA_PER_AMPLITUDE * 1.0, rel=1e-6)  # closed form above
    assert v.unit == "µm"
    assert res.measurements[0].parameters["Ra"]["value"] == pytest.approx(v.value)


def test_conforming_by_first_value_at_most_70_percent(tmp_path):
    # ISO 4288 5.2 step 1: Ra 0.40 ≤ 0.56 = 70 % of 0.8
    spec = write_spec(tmp_path, '- "Ra 0.8"\n')
    res = evaluate(spec, [sine(amplitude_for_ra(0.40))], created="t")
    r = res.requirements[0]
    assert (res.verdict, r.verdict, r.reason, r.next) == ("conforming", "conforming", None, None)
    assert "70 %" in r.explanation
    assert r.values[0].zone is None  # no U given: no ISO 14253-1 zone
    assert r.values[0].counts_as == "within"


def test_undecided_first_value_above_70_percent(tmp_path):
    # ISO 4288 5.2: Ra 0.64 > 0.56 but ≤ 0.8: two more values needed for step 3
    spec = write_spec(tmp_path, '- "Ra 0.8"\n')
    res = evaluate(spec, [sine(amplitude_for_ra(0.64))], created="t")
    r = res.requirements[0]
    assert (res.verdict, r.reason) == ("undecided", "more-measurements")
    assert r.next == "measure 2 more profiles where the highest values are expected (ISO 4288)"


def test_conforming_at_step_3_and_nonconforming(tmp_path):
    spec = write_spec(tmp_path, '- "Ra 0.8"\n')
    ok = [sine(amplitude_for_ra(ra), name=f"p{i}") for i, ra in enumerate((0.64, 0.70, 0.75))]
    assert evaluate(spec, ok, created="t").verdict == "conforming"
    # 3 of 3 exceed 0.8: more than 2 of 12 can never conform (ISO 4288 5.2)
    bad = [sine(amplitude_for_ra(ra), name=f"q{i}") for i, ra in enumerate((0.9, 0.95, 1.0))]
    res = evaluate(spec, bad, created="t")
    assert res.verdict == "nonconforming"
    assert [v.counts_as for v in res.requirements[0].values] == ["exceeding"] * 3
    assert res.requirements[0].next is None


def test_max_rule_on_rz(tmp_path):
    # Rz = 2A for a sine sampled on its crests; ISO 1302 "max": no value may exceed.
    # rel 1e-7: the mean line of a trace that is not whole periods deviates by ~1e-8 µm.
    spec = write_spec(tmp_path, '- "Rz max 6.3"\n')
    res = evaluate(spec, [sine(3.0), sine(3.1)], created="t")  # Rz 6.0, 6.2
    assert [v.value for v in res.requirements[0].values] == pytest.approx([6.0, 6.2], rel=1e-7)
    assert res.verdict == "conforming"
    res = evaluate(spec, [sine(3.0), sine(3.2)], created="t")  # Rz 6.4 > 6.3
    assert res.verdict == "nonconforming"


def test_lower_and_two_sided_limits(tmp_path):
    spec = write_spec(
        tmp_path,
        """\
        - "L Ra 0.2"
        - {parameter: Ra, upper: 0.8um, lower: 0.2um}
        """,
    )
    # one value: lower limits take no 70 % shortcut -> 2 more needed (speccheck.evaluation.rules)
    res = evaluate(spec, [sine(amplitude_for_ra(0.3))], created="t")
    assert [r.verdict for r in res.requirements] == ["undecided", "undecided"]
    assert (
        res.requirements[0].next
        == "measure 2 more profiles where the lowest values are expected (ISO 4288)"
    )
    assert res.requirements[1].next == (
        "measure 2 more profiles where the highest and the lowest values are expected (ISO 4288)"
    )
    three = [sine(amplitude_for_ra(0.3), name=f"p{i}") for i in range(3)]
    assert evaluate(spec, three, created="t").verdict == "conforming"
    low = [sine(amplitude_for_ra(0.1), name=f"p{i}") for i in range(3)]  # below 0.2 each
    res = evaluate(spec, low, created="t")
    assert [r.verdict for r in res.requirements] == ["nonconforming", "nonconforming"]


GUARD = '- "Ra max 0.8"\n'
GUARD_U = "uncertainty: {Ra: 0.05um}\ndecision_rule: %s\n"


@pytest.mark.parametrize(
    ("rule", "ra", "zone", "counts", "verdict", "reason"),
    [
        # ISO 14253-1: 0.78 lies in (0.75, 0.85]: the uncertainty range of the upper limit 0.8
        ("simple", 0.78, "uncertain", "within", "conforming", "uncertainty-range"),
        (
            "guarded-acceptance",
            0.78,
            "uncertain",
            "exceeding",
            "nonconforming",
            "uncertainty-range",
        ),
        ("guarded-rejection", 0.78, "uncertain", "within", "conforming", "uncertainty-range"),
        # 0.82 lies in the uncertainty range above the limit
        ("simple", 0.82, "uncertain", "exceeding", "nonconforming", "uncertainty-range"),
        ("guarded-rejection", 0.82, "uncertain", "within", "conforming", "uncertainty-range"),
        # 0.70 ≤ 0.75 = USL − U: conformity proven, no rule hinges on U
        ("guarded-acceptance", 0.70, "within", "within", "conforming", None),
        # 0.90 > 0.85 = USL + U: non-conformity proven
        ("guarded-rejection", 0.90, "outside", "exceeding", "nonconforming", None),
    ],
)
def test_decision_rules_on_measured_values(tmp_path, rule, ra, zone, counts, verdict, reason):
    spec = write_spec(tmp_path, GUARD, GUARD_U % rule)
    res = evaluate(spec, [sine(amplitude_for_ra(ra))], created="t")
    r = res.requirements[0]
    assert (r.values[0].zone, r.values[0].counts_as, r.verdict, r.reason) == (
        zone,
        counts,
        verdict,
        reason,
    )
    assert r.decision_rule == rule and r.uncertainty == 0.05


def test_too_short_trace_is_undecided_insufficient_data(tmp_path):
    spec = write_spec(tmp_path, '- "Ra 0.8"\n')
    short = sine(1.0, points=6000)  # 3 mm < 5.6 mm needed
    res = evaluate(spec, [short], created="t")
    r, m = res.requirements[0], res.measurements[0]
    assert (res.verdict, r.verdict, r.reason) == ("undecided", "undecided", "insufficient-data")
    assert m.status == "insufficient-data"
    assert r.values[0].value is None and r.values[0].note.startswith(
        "insufficient-data: trace 3 mm"
    )
    assert r.next.startswith("measurement 1: trace 3 mm is shorter than the 5.6 mm needed")
    assert "measure again with a trace of at least 5.6 mm" in r.next


def test_coarse_spacing_is_undecided_other_conditions(tmp_path):
    # ISO 3274 Table 1 (from memory): at most 0.5 µm for λc 0.8 mm; 1 µm is never evaluated
    spec = write_spec(tmp_path, '- "Ra 0.8"\n')
    coarse = sine(1.0, points=5601, dx_um=1.0)
    res = evaluate(spec, [coarse], created="t")
    r = res.requirements[0]
    assert (r.verdict, r.reason, res.measurements[0].status) == (
        "undecided",
        "other-conditions",
        "other-conditions",
    )
    assert (
        "sampling spacing 1 µm is coarser than the 0.5 µm ISO 3274 allows for λc 0.8 mm" in r.next
    )
    assert res.measurements[0].parameters == {}  # nothing computed under other conditions


def test_max_spacing_table():
    # ISO 3274:1996 Table 1, spacing column from memory (domain notes §1)
    assert [max_spacing_for_um(lc) for lc in (0.08, 0.25, 0.8, 2.5, 8.0)] == [
        0.5,
        0.5,
        0.5,
        1.5,
        5.0,
    ]
    assert max_spacing_for_um(1.0) == 0.5  # between rows: the stricter neighbour
    assert max_spacing_for_um(0.04) == pytest.approx(0.25)


def test_refused_dropout_gap_is_undecided(tmp_path):
    spec = write_spec(tmp_path, '- "Ra 0.8"\n')
    p = sine(1.0)
    z = np.array(p.z_um)
    z[5000:5040] = np.nan  # 40 points = 20 µm: too wide to bridge (speccheck.profile policy)
    gappy = Profile(z, p.dx_um, source=p.source)
    res = evaluate(spec, [gappy], created="t")
    assert (res.requirements[0].reason, res.measurements[0].status) == ("dropouts", "dropouts")
    assert res.measurements[0].dropouts["refused_gaps_mm"] == [[2.5, 2.5195]]


def test_short_bridged_dropout_still_evaluates(tmp_path):
    spec = write_spec(tmp_path, '- "Ra 0.8"\n')
    p = sine(amplitude_for_ra(0.4))
    z = np.array(p.z_um)
    z[5001:5003] = np.nan  # 2 points: bridged linearly
    res = evaluate(spec, [Profile(z, p.dx_um, source=p.source)], created="t")
    assert res.verdict == "conforming"
    assert res.measurements[0].dropouts["interpolated_points"] == 2


def test_unknown_measurement_is_not_a_step_of_the_procedure(tmp_path):
    # ISO 4288:1996 5.2 step procedure on the values evaluated: a trace too short gave no value
    spec = write_spec(tmp_path, '- "Ra 0.8"\n')
    good = [sine(amplitude_for_ra(0.64), name=f"p{i}") for i in range(3)]  # 80 % of the limit
    short = sine(1.0, points=6000, name="short")
    res = evaluate(spec, [short, *good], created="t")
    r = res.requirements[0]
    assert r.verdict == "conforming"  # none of the first 3 values exceeds (step 3)
    assert r.values[0].note.startswith("insufficient-data:")
    assert [v.after_decision for v in r.values] == [False] * 4
    res = evaluate(spec, [short, *good[:2]], created="t")
    r = res.requirements[0]
    assert (r.verdict, r.reason) == ("undecided", "insufficient-data")
    assert r.next == (
        "measurement 1: trace 3 mm is shorter than the 5.6 mm needed for 5 × λc 0.8 mm plus "
        "run-in and run-out; measure again with a trace of at least 5.6 mm; "
        "measure 1 more profile where the highest values are expected (ISO 4288)"
    )
    # nonconforming: 3 exceed, the unknown one cannot change it
    bad = [sine(amplitude_for_ra(1.0), name=f"q{i}") for i in range(3)]
    assert evaluate(spec, [short, *bad], created="t").verdict == "nonconforming"


def test_unknown_member_of_a_fixed_sample_decides_when_it_matters(tmp_path):
    # a sample fixed in advance (ISO 4288:1996 5.2, 16 % of all): 1 of 12 exceeds, the
    # unevaluated 12th could make it 2 of 12 = 16.7 %
    spec = write_spec(tmp_path, '- "Ra 0.8"\n', "sampling: fixed\n")
    good = [sine(amplitude_for_ra(0.64), name=f"p{i}") for i in range(10)]
    high = sine(amplitude_for_ra(1.0), name="high")
    short = sine(1.0, points=6000, name="short")
    r = evaluate(spec, [high, *good, short], created="t").requirements[0]
    assert (r.verdict, r.reason, r.sampling) == ("undecided", "insufficient-data", "fixed")
    r = evaluate(spec, [high, *good, good[0]], created="t").requirements[0]
    assert r.verdict == "conforming"


def test_values_after_the_decision_are_shown_not_counted(tmp_path):
    # ISO 4288:1996 5.2: 3 of 3 over the limit decide; the later values within it do not count
    spec = write_spec(tmp_path, '- "Ra 0.8"\n')
    bad = [sine(amplitude_for_ra(1.0), name=f"q{i}") for i in range(3)]
    good = [sine(amplitude_for_ra(0.4), name=f"p{i}") for i in range(16)]
    res = evaluate(spec, [*bad, *good], created="t")
    r = res.requirements[0]
    assert r.verdict == "nonconforming"
    assert [v.after_decision for v in r.values] == [False] * 3 + [True] * 16
    assert "3 of the first 3 values exceed" in r.explanation
    assert "16 values after the decision, not counted" in r.explanation
    assert res.to_dict()["requirements"][0]["values"][3]["after_decision"] is True
    # the same values as a fixed sample: 3 of 19 = 15.8 % exceed
    fixed = write_spec(tmp_path, '- "Ra 0.8"\n', "sampling: fixed\n")
    assert evaluate(fixed, [*bad, *good], created="t").verdict == "conforming"


def test_values_per_section(tmp_path):
    spec = write_spec(tmp_path, '- "Ra 0.8"\n', measurement="{ls: none, value_per: section}")
    res = evaluate(spec, [sine(amplitude_for_ra(0.64))], created="t")
    r = res.requirements[0]
    assert [v.section for v in r.values] == [0, 1, 2, 3, 4]
    assert [v.value for v in r.values] == pytest.approx(
        [RA_PER_AMPLITUDE * amplitude_for_ra(0.64)] * 5, rel=1e-6
    )
    assert r.verdict == "conforming"  # 5 section values, none exceeds: step 3 met


def test_parameter_not_computed_on_flat_profile(tmp_path):
    # a flat trace has Rq = 0 and no skewness (0/0): not evaluated, never 0 or NaN in the record
    spec = write_spec(tmp_path, '- {parameter: Rsk, upper: "0.5", cutoff: 0.8mm}\n')
    flat = Profile(np.zeros(FULL_POINTS), DX_UM, source=SourceInfo(path="flat.csv", sha256="s"))
    res = evaluate(spec, [flat], created="t")
    r = res.requirements[0]
    assert (r.verdict, r.reason, r.values[0].value) == ("undecided", "insufficient-data", None)
    assert "flat over the evaluation length" in r.next
    json.dumps(res.to_dict(), allow_nan=False)  # NaN never reaches the JSON


def test_guarded_rule_without_uncertainty_is_a_spec_error(tmp_path):
    # refused when the spec is resolved, so that lint and check refuse it alike
    with pytest.raises(
        SpecError,
        match=r"spec\.yaml:6:5: Ra 0\.8: decision rule guarded-acceptance needs",
    ):
        spec = write_spec(tmp_path, '- "Ra 0.8"\n', "decision_rule: guarded-acceptance\n")
        evaluate(spec, [sine(1.0)])


def test_overall_verdict_and_provenance(tmp_path):
    spec = write_spec(
        tmp_path,
        """\
        - "Ra 0.8"
        - "Rz max 6.3"
        - "L Ra 0.2"
        """,
    )
    res = evaluate(spec, [sine(amplitude_for_ra(0.4))], created="2026-12-02T00:00:00Z")
    # Ra conforming (step 1), Rz conforming (max), lower limit undecided -> overall undecided
    assert [r.verdict for r in res.requirements] == ["conforming", "conforming", "undecided"]
    assert (res.verdict, res.reason) == ("undecided", "more-measurements")
    assert res.spec["sha256"] == spec.sha256 and res.spec["path"] == spec.path
    assert (res.spec["part"], res.spec["revision"], res.spec["surface"]) == (
        "KFP-2041",
        "C",
        "seal seat",
    )
    assert (
        res.spec["supplier"] == "Ardent Precision Grinding"
        and res.spec["decision_rule"] == "simple"
    )
    assert res.software["name"] == "speccheck"
    assert res.measurements[0].sha256 == "sha-p"
    assert res.requirements[0].conditions["lambda_c_mm"] == 0.8
    assert res.requirements[0].diagnostics == []


def test_deterministic_except_created(tmp_path):
    spec = write_spec(tmp_path, '- "Ra 0.8"\n- "Rz max 6.3"\n')
    profiles = [sine(amplitude_for_ra(0.6), name="a"), sine(amplitude_for_ra(0.7), name="b")]
    a = evaluate(spec, profiles).to_dict()
    b = evaluate(spec, profiles).to_dict()
    a.pop("created"), b.pop("created")
    assert json.dumps(a, sort_keys=True) == json.dumps(b, sort_keys=True)


def test_result_round_trips_through_json(tmp_path):
    spec = write_spec(tmp_path, '- "Ra 0.8"\n')
    res = evaluate(spec, [sine(1.0, points=6000), sine(amplitude_for_ra(0.5))], created="t")
    d = json.loads(json.dumps(res.to_dict(), allow_nan=False))
    assert CheckResult.from_dict(d).to_dict() == res.to_dict()


def test_no_profiles_is_undecided(tmp_path):
    spec = write_spec(tmp_path, '- "Ra 0.8"\n')
    res = evaluate(spec, [], created="t")
    assert (res.verdict, res.requirements[0].next) == (
        "undecided",
        "measure 1 more profile where the highest values are expected (ISO 4288)",
    )


def test_no_core_for_rk_is_parameter_not_computed(tmp_path, monkeypatch):
    # ISO 13565-2 needs a material ratio curve with a core; when the Rk construction finds none
    # on a textured profile, Rk is not computed (a flat profile is refused before, see above)
    import speccheck.parameters.rk as rk

    monkeypatch.setattr(
        rk, "rk_parameters", lambda r, curve=None: rk.NoCore("no core found for Rk: test")
    )
    spec = write_spec(tmp_path, "- {parameter: Rk, upper: 2um, cutoff: 0.8mm}\n")
    x = np.arange(FULL_POINTS) * DX_UM
    z = np.sin(2 * np.pi * x / 100.0)
    textured = Profile(z, DX_UM, source=SourceInfo(path="sine.csv", sha256="s"))
    r = evaluate(spec, [textured], created="t").requirements[0]
    assert (r.verdict, r.reason) == ("undecided", "parameter-not-computed")
    assert r.values[0].note.startswith("parameter-not-computed: no core found for Rk")


def test_parameters_computed_once_per_conditions(tmp_path, monkeypatch):
    # three requirements, two sets of conditions (λc 0.8 mm; λc 2.5 mm) -> 2 computations/profile
    import speccheck.parameters.compute as compute

    calls = []
    real = compute.compute_parameters

    def counting(z_um, *, dx_um, conditions, extra=()):
        calls.append((conditions.lambda_c_mm, tuple(extra)))
        return real(z_um, dx_um=dx_um, conditions=conditions, extra=extra)

    monkeypatch.setattr(compute, "compute_parameters", counting)
    spec = write_spec(
        tmp_path,
        """\
        - "Ra 0.8"
        - "Rz max 6.3"
        - {parameter: Rmr(0.5), lower: 10%, cutoff: 2.5mm}
        """,
    )
    long = sine(1.0, points=7 * 5000 + 1, dx_um=0.5)  # 17.5 mm: enough for λc 2.5 mm
    res = evaluate(spec, [long, long], created="t")
    assert sorted(calls) == [(0.8, ()), (0.8, ()), (2.5, ("Rmr(0.5)",)), (2.5, ("Rmr(0.5)",))]
    assert res.requirements[2].values[0].unit == "%"


def test_each_unusable_measurement_gets_its_own_next_step(tmp_path):
    spec = write_spec(tmp_path, '- "Ra 0.8"\n')
    short = sine(1.0, points=6000, name="short")
    coarse = sine(1.0, points=5601, dx_um=1.0, name="coarse")
    r = evaluate(spec, [short, coarse], created="t").requirements[0]
    assert r.reason == "insufficient-data"
    assert "measurement 1: trace 3 mm is shorter" in r.next
    assert "measurement 2: sampling spacing 1 µm is coarser" in r.next
