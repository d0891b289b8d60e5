"""Filters run to the trace ends (ISO 16610-28 moment criterion), so a trace of only the
evaluation length is usable when the specification says so.

Sources: ISO 16610-21:2011 Gaussian roughness transmission 1 - exp(-π(αλc/λ)²), α = √(ln 2/π)
(domain notes section 3 [pub/calc]); sine closed forms Ra = 2A/π, Rq = A/√2 (domain notes
section 4 [calc]); ISO 16610-28 end handling by the moment criterion (domain notes section 3,
from memory). The error bounds below are ours, measured on 12 phases and stated in
speccheck/parameters/conditions.py; the test fails if the filters get worse at the ends.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from speccheck.cli.main import main
from speccheck.errors import SpeccheckError
from speccheck.parameters.compute import InsufficientData, compute_parameters, evaluated_profile
from speccheck.parameters.conditions import Conditions
from speccheck.profile import Profile
from speccheck.readers import write_csv
from speccheck.spec.loader import load_spec

ALPHA = math.sqrt(math.log(2) / math.pi)
DX_UM = 0.5
LC_MM = 0.8
PHASES = np.linspace(0.0, 2.0 * np.pi, 13)[:-1]


def transmission(wavelength_um: float) -> float:
    """ISO 16610-21 roughness transmission of a sine of that wavelength at λc 0.8 mm."""
    return 1.0 - math.exp(-math.pi * (ALPHA * LC_MM * 1000.0 / wavelength_um) ** 2)


def worst_errors(filter_: str, wavelength_um: float) -> tuple[float, float, float]:
    """Largest relative Ra and Rq errors and largest pointwise error (in amplitudes) over phases,
    on a trace of exactly the 4 mm evaluation length, against the transmitted sine."""
    t = transmission(wavelength_um)
    x = np.arange(8000) * DX_UM
    cond = Conditions(LC_MM, None, filter=filter_, form="none", ends="moment")
    ra = rq = point = 0.0
    for phase in PHASES:
        z = np.sin(2 * np.pi * x / wavelength_um + phase)
        res = compute_parameters(z, dx_um=DX_UM, conditions=cond)
        assert not isinstance(res, InsufficientData)
        rough = evaluated_profile(z, dx_um=DX_UM, conditions=cond)[2]
        ra = max(ra, abs(res.values["Ra"].value / (2 / np.pi * t) - 1))
        rq = max(rq, abs(res.values["Rq"].value * math.sqrt(2) / t - 1))
        point = max(point, float(np.abs(rough - t * z).max()))
    return ra, rq, point


@pytest.mark.parametrize(
    "filter_, wavelength_um, ra_bound, rq_bound, point_bound",
    [
        ("gaussian", 80.0, 0.0012, 0.0008, 0.07),  # λc/10
        ("gaussian", 250.0, 0.011, 0.0085, 0.24),  # λc/3.2
        ("gaussian", 400.0, 0.025, 0.021, 0.44),  # λc/2
        ("robust", 80.0, 0.003, 0.0018, 0.25),
        ("robust", 250.0, 0.018, 0.013, 0.73),
    ],
)
def test_sine_amplitude_holds_to_the_ends(filter_, wavelength_um, ra_bound, rq_bound, point_bound):
    ra, rq, point = worst_errors(filter_, wavelength_um)
    assert ra <= ra_bound and rq <= rq_bound and point <= point_bound


def test_moment_ends_change_nothing_in_the_interior():
    """Away from the ends the roughness profile equals the run-in one to rounding: the kernel's
    mass beyond ±λc is 9.5e-8 (domain notes section 3 [calc]), so two λc in, both agree."""
    x = np.arange(11200) * DX_UM
    z = np.sin(2 * np.pi * x / 250.0) + 0.3 * np.sin(2 * np.pi * x / 61.0)
    a = evaluated_profile(z, dx_um=DX_UM, conditions=Conditions(LC_MM, None))[2]
    b = evaluated_profile(z, dx_um=DX_UM, conditions=Conditions(LC_MM, None, ends="moment"))[2]
    inner = slice(3200, 11200 - 3200)
    assert np.max(np.abs(a[inner] - b[inner])) < 1e-6


def test_required_trace_is_the_evaluation_length():
    run_in = Conditions(LC_MM, 2.5)
    moment = Conditions(LC_MM, 2.5, ends="moment")
    assert run_in.required_trace_mm == 5.6 and moment.required_trace_mm == 4.0
    assert moment.run_in_mm == 0.0
    assert moment.evaluation_slice(8000, DX_UM) == slice(0, 8000)
    assert run_in.evaluation_slice(8000, DX_UM) is None
    assert moment.evaluation_slice(7000, DX_UM) is None
    with pytest.raises(SpeccheckError, match="unknown ends 'mirror'"):
        Conditions(LC_MM, 2.5, ends="mirror")


HEAD = "spec_version: 1\npart: {number: KFP-2041, revision: C, surface: seal seat}\n"


def test_spec_selects_the_ends_and_the_record_says_so(tmp_path, capsys):
    prof = tmp_path / "short.csv"
    x = np.arange(8000) * DX_UM
    write_csv(prof, Profile(0.5 * np.sin(2 * np.pi * x / 80.0), DX_UM))
    plain = tmp_path / "plain.yaml"
    plain.write_text(HEAD + 'requirements:\n  - "Ra 0.8"\n', encoding="utf-8")
    ends = tmp_path / "ends.yaml"
    ends.write_text(
        HEAD + 'measurement: {ends: moment}\nrequirements:\n  - "Ra 0.8"\n', encoding="utf-8"
    )
    assert main(["check", str(plain), str(prof)]) == 3  # 4 mm < 5.6 mm: undecided
    capsys.readouterr()
    assert main(["check", str(ends), str(prof), "--json", "-"]) == 0
    (req,) = json.loads(capsys.readouterr().out)["requirements"]
    assert req["conditions"]["ends"] == "moment"
    assert req["conditions"]["required_trace_mm"] == 4.0
    assert "ISO 16610-28" in req["conditions"]["ends_source"]
    # Ra of a 0.5 µm sine of λ 80 µm: 2A/π times the λs 2.5 µm low-pass transmission
    # exp(-π(α·2.5/80)²) (ISO 16610-21; ISO 3274 Table 1 λs for λc 0.8 mm), within the λc/10
    # end bound measured above
    t_ls = math.exp(-math.pi * (ALPHA * 2.5 / 80.0) ** 2)
    assert req["values"][0]["value"] == pytest.approx(t_ls / np.pi, rel=1.2e-3)
    assert main(["explain", str(ends)]) == 0
    assert "filters run to the trace ends" in capsys.readouterr().out
    assert load_spec(ends).requirements[0].ends == "moment"
    assert load_spec(plain).requirements[0].ends == "run-in"


def test_unknown_ends_in_a_spec_is_refused_with_its_place(tmp_path, capsys):
    bad = tmp_path / "bad.yaml"
    bad.write_text(HEAD + 'measurement: {ends: mirror}\nrequirements:\n  - "Ra 0.8"\n')
    assert main(["lint", str(bad)]) == 2
    out = capsys.readouterr().out
    assert out.startswith(f"{bad}:3:") and "ends" in out


def test_params_ends_option(tmp_path, capsys):
    prof = tmp_path / "short.csv"
    x = np.arange(8000) * DX_UM
    write_csv(prof, Profile(0.5 * np.sin(2 * np.pi * x / 80.0), DX_UM))
    assert main(["params", str(prof), "--cutoff", "0.8mm", "--json"]) == 3
    capsys.readouterr()
    assert main(["params", str(prof), "--cutoff", "0.8mm", "--ends", "moment", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["conditions"]["ends"] == "moment"
    t_ls = math.exp(-math.pi * (ALPHA * 2.5 / 80.0) ** 2)  # λs 2.5 µm as in the test above
    assert d["parameters"]["Ra"]["value"] == pytest.approx(t_ls / np.pi, rel=1.2e-3)
