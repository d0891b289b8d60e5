"""ISO 4287 section means against ISO 21920-2 field values, on profiles with closed forms.

Sources: ISO 4287:1997 4 (parameters defined on a sampling length, ISO 4288:1996 4.4 mean of
five) and ISO 21920-2:2021 (field parameters over the evaluation length; which parameters are
field parameters is from memory, domain notes section 4 [mem]). Closed forms of a sine of
amplitude A (domain notes section 4 [calc]): Ra = 2A/π, mean Z² = A²/2, mean Z⁴ = 3A⁴/8,
RΔq = 2πA/(λ√2).
"""

from __future__ import annotations

import json
import math
import textwrap

import numpy as np
import pytest

from speccheck.cli.main import main
from speccheck.parameters.compute import compute_parameters
from speccheck.parameters.conditions import Conditions
from speccheck.parameters.names import basis
from speccheck.profile import Profile
from speccheck.readers import write_csv

DX_UM = 0.5
LAMBDA_MM = 0.1
X_MM = np.arange(11200) * DX_UM / 1000.0  # 5.6 mm: 5 sections of 0.8 mm plus run-in/out
SECTION = np.floor((X_MM - 0.8) / 0.8).astype(int)  # 0..4 inside the evaluation length


def modulated_sine(a_um: float, b_um: float) -> np.ndarray:
    """Amplitude b in the third section, a elsewhere; the steps fall on zero crossings."""
    amp = np.where(SECTION == 2, b_um, a_um)
    return amp * np.sin(2 * np.pi * X_MM / LAMBDA_MM)


def both(z: np.ndarray):
    out = {}
    for d in ("iso4287", "iso21920-2"):
        ps = compute_parameters(z, dx_um=DX_UM, conditions=Conditions(0.8, None, definitions=d))
        out[d] = {k: v.value for k, v in ps.values.items()}
    return out["iso4287"], out["iso21920-2"]


def test_one_louder_section_separates_field_from_section_values():
    """A = 1 µm in four sections, B = 3 µm in one (closed forms in the module docstring).

    Field: Rq = √((4A²/2 + B²/2)/5) = 1.1402 µm, Rku = mean Z⁴ / Rq⁴ = 3.7722,
    RΔq = 2π/λ · Rq. Section mean: Rq = (4A + B)/(5√2) = 0.98995 µm, Rku = 1.5.
    Ra is linear in |Z| and equal-length sections make both means equal: (8A + 2B)/(5π).
    Tolerance 5e-3: the λc 0.8 mm Gaussian mean line responds slightly to the amplitude step
    (it passes the 0.1 mm carrier to 1e-19, ISO 16610-21, but not the step's sidebands).
    """
    a, b = 1.0, 3.0
    sec, fld = both(modulated_sine(a, b))
    ms_field = (4 * a * a / 2 + b * b / 2) / 5
    rq_field = math.sqrt(ms_field)
    rq_sec = (4 * a + b) / (5 * math.sqrt(2))
    assert fld["Rq"] == pytest.approx(rq_field, rel=5e-3)
    assert sec["Rq"] == pytest.approx(rq_sec, rel=5e-3)
    assert fld["Rku"] == pytest.approx(
        (4 * 3 * a**4 / 8 + 3 * b**4 / 8) / 5 / ms_field**2, rel=5e-3
    )
    assert sec["Rku"] == pytest.approx(1.5, rel=5e-3)
    k = 2 * math.pi / (LAMBDA_MM * 1000.0)
    assert fld["Rdq"] == pytest.approx(k * rq_field, rel=5e-3)
    assert sec["Rdq"] == pytest.approx(k * rq_sec, rel=5e-3)
    ra = (8 * a + 2 * b) / (5 * math.pi)
    assert fld["Ra"] == pytest.approx(ra, rel=5e-3) and sec["Ra"] == pytest.approx(ra, rel=5e-3)
    # Rz, Rp, Rv, Rt are defined the same way in both editions: identical numbers
    for name in ("Rz", "Rp", "Rv", "Rt", "Rz1max"):
        assert fld[name] == sec[name]


def test_profile_elements_pooled_over_the_evaluation_length():
    """λ = 0.1 mm in four sections, 0.2 mm in the third (phase continuous).

    ISO 4287 RSm: mean of the section means (4 × 0.1 + 0.2)/5 = 0.12 mm. Field RSm: mean width
    of all elements of the evaluation length, 4 mm / 36 elements = 0.1111 mm, or 3.9 mm / 35
    when the element cut by an end is dropped (0.1114 mm): tolerance 0.5 %.
    """
    lam = np.where(SECTION == 2, 0.2, 0.1)
    phase = np.cumsum(2 * np.pi * (DX_UM / 1000.0) / lam)
    phase -= phase[np.searchsorted(X_MM, 0.8)]
    sec, fld = both(np.sin(phase))
    assert sec["RSm"] == pytest.approx(0.12, rel=5e-3)
    assert fld["RSm"] == pytest.approx(4.0 / 36.0, rel=5e-3)


def test_scratch_in_one_section_against_the_formula_on_the_evaluated_profile():
    """Sine plus a 10 µm deep, 10 µm wide scratch in the second section. Rsk = mean Z³ / Rq³
    (ISO 4287:1997 4.2.3) evaluated with numpy on the evaluated roughness profile: over the
    whole evaluation length (ISO 21920-2 field value) and as the mean of five section values."""
    z = np.sin(2 * np.pi * X_MM / LAMBDA_MM)
    z[(X_MM > 2.0) & (X_MM < 2.01)] -= 10.0
    res = {}
    for d in ("iso4287", "iso21920-2"):
        ps = compute_parameters(z, dx_um=DX_UM, conditions=Conditions(0.8, None, definitions=d))
        res[d] = ps
    r = res["iso21920-2"].profiles.roughness_um
    rows = r.reshape(5, -1)

    def rsk(a):
        return np.mean(a**3, axis=-1) / np.mean(a**2, axis=-1) ** 1.5

    assert res["iso21920-2"].values["Rsk"].value == pytest.approx(rsk(r), rel=1e-12)
    assert res["iso4287"].values["Rsk"].value == pytest.approx(np.mean(rsk(rows)), rel=1e-12)
    # the edition changes the number by a factor of about three on this profile
    assert res["iso21920-2"].values["Rsk"].value < 2.5 * res["iso4287"].values["Rsk"].value


def test_basis_table():
    """Which parameters change definition (ISO 21920-2:2021, from memory)."""
    from speccheck.parameters.names import PARAMETERS

    field_now = {b for b in PARAMETERS if basis(b, "iso21920-2") == "field"}
    field_before = {b for b in PARAMETERS if basis(b, "iso4287") == "field"}
    assert field_now - field_before == {"a", "q", "sk", "ku", "dq", "c", "Sm"}
    assert all(basis(b, "iso4287") == "section" for b in ("a", "q", "sk", "ku", "dq", "z", "p"))
    assert all(basis(b, "iso21920-2") == "section" for b in ("z", "p", "v"))
    assert all(basis(b, d) == "field" for b in ("t", "mr", "k") for d in ("iso4287", "iso21920-2"))
    with pytest.raises(ValueError, match="unknown definitions"):
        basis("a", "iso9999")


def run_params(capsys, path, *extra):
    status = main(["params", str(path), "--cutoff", "0.8mm", "--ls", "none", "--json", *extra])
    return status, json.loads(capsys.readouterr().out)


def test_params_convention_option(tmp_path, capsys):
    path = tmp_path / "modulated.csv"
    write_csv(path, Profile(modulated_sine(1.0, 3.0), DX_UM))
    s0, default = run_params(capsys, path)
    s1, iso1302 = run_params(capsys, path, "--convention", "iso1302")
    s2, iso21920 = run_params(capsys, path, "--convention", "iso21920")
    assert s0 == s1 == s2 == 0
    assert default["parameters"] == iso1302["parameters"]  # iso1302 changes nothing
    assert iso1302["parameters"]["Rq"]["basis"] == "section"
    assert iso21920["parameters"]["Rq"]["basis"] == "field"
    assert iso21920["parameters"]["Rz"]["basis"] == "section"
    assert iso21920["conditions"]["definitions"] == "iso21920-2"
    assert iso21920["parameters"]["Rq"]["value"] == pytest.approx(1.1402, rel=5e-3)
    assert iso1302["parameters"]["Rq"]["value"] == pytest.approx(0.98995, rel=5e-3)
    assert main(["params", str(path), "--cutoff", "0.8mm", "--convention", "iso21920"]) == 0
    out = capsys.readouterr().out
    assert "definitions ISO 21920-2:2021" in out
    rq_line = next(line for line in out.splitlines() if line.strip().startswith("Rq "))
    assert "field" in rq_line


SPEC = """\
spec_version: 1
part: {number: KFP-2041, revision: D, surface: seal seat}
convention: CONV
requirements:
  - "Rq max 1.05"
"""


@pytest.mark.parametrize(
    ("convention", "status", "basis_"), [("iso1302", 0, "section"), ("iso21920", 1, "field")]
)
def test_check_and_explain_state_the_basis(tmp_path, capsys, convention, status, basis_):
    """Rq max 1.05 µm on the modulated sine: the section mean 0.990 µm conforms, the field
    value 1.140 µm does not (closed forms above)."""
    spec = tmp_path / "spec.yaml"
    spec.write_text(textwrap.dedent(SPEC).replace("CONV", convention), encoding="utf-8")
    prof = tmp_path / "p.csv"
    write_csv(prof, Profile(modulated_sine(1.0, 3.0), DX_UM))
    assert main(["check", str(spec), str(prof), "--json", "-"]) == status
    d = json.loads(capsys.readouterr().out)
    assert d["requirements"][0]["conditions"]["basis"] == basis_
    assert main(["explain", str(spec)]) == 0
    out = capsys.readouterr().out
    edition = "ISO 21920-2:2021" if convention == "iso21920" else "ISO 4287:1997"
    assert edition in out
    assert ("field value over the whole evaluation length" in out) == (basis_ == "field")
