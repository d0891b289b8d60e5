"""P profile from the least-squares line of the evaluated portion; W requirements need λf.

Sources: ISO 4287:1997 3.1.8.3 (mean line of the primary profile: least-squares line of the
nominal form, from memory) and 3.1.9 (primary sampling length = evaluation length); reference:
numpy.linalg.lstsq on the evaluated portion.
"""

from __future__ import annotations

import numpy as np
import pytest

from speccheck.cli.main import main
from speccheck.parameters.compute import compute_parameters
from speccheck.parameters.conditions import Conditions

DX_UM = 0.5


def test_primary_heights_from_the_least_squares_line_of_the_evaluated_portion():
    """Random heights on a tilt and a bow (seed fixed), no λs: Pa, Pq, Pp, Pv, Pt against the
    residual of numpy's least-squares line fitted over the evaluation length only. The bow makes
    the whole-trace line and the evaluated-portion line differ by tenths of a µm."""
    rng = np.random.default_rng(7)
    n = 11200
    x = np.arange(n) * DX_UM
    z = 0.002 * x + 4e-7 * (x - x.mean()) ** 2 + rng.normal(scale=0.3, size=n)
    cond = Conditions(0.8, None, profile="P", form="none")
    ps = compute_parameters(z, dx_um=DX_UM, conditions=cond)
    ev = cond.evaluation_slice(n, DX_UM)
    xe, ze = x[ev], z[ev]
    a = np.column_stack([xe, np.ones_like(xe)])
    coef, *_ = np.linalg.lstsq(a, ze, rcond=None)
    r = ze - a @ coef
    v = {k: p.value for k, p in ps.values.items()}
    assert v["Pa"] == pytest.approx(np.mean(np.abs(r)), rel=1e-10)
    assert v["Pq"] == pytest.approx(np.sqrt(np.mean(r**2)), rel=1e-10)
    assert v["Pp"] == pytest.approx(r.max(), rel=1e-10)
    assert v["Pv"] == pytest.approx(-r.min(), rel=1e-10)
    assert v["Pt"] == pytest.approx(r.max() - r.min(), rel=1e-10)
    # the line of the whole trace would have given other numbers: the test can fail
    whole = np.polyfit(x, z, 1)
    r_whole = ze - np.polyval(whole, xe)
    assert abs(np.mean(np.abs(r_whole)) - v["Pa"]) > 0.01


HEAD = """\
spec_version: 1
part: {number: KFP-1187, revision: A, surface: gasket face}
"""


def write_spec(tmp_path, body: str, name: str = "w.yaml"):
    path = tmp_path / name
    path.write_text(HEAD + body, encoding="utf-8")
    return path


def test_waviness_without_lambda_f_is_a_lint_and_check_error(tmp_path, capsys):
    path = write_spec(
        tmp_path,
        'measurement: {cutoff: 0.8mm}\nrequirements:\n  - "Wa max 2"\n'
        "  - {parameter: Wt, upper: 3um, rule: max}\n",
    )
    assert main(["lint", str(path)]) == 2
    out = capsys.readouterr().out.splitlines()
    assert out == [
        f"{path}:5:5: Wa is a waviness parameter: state its transmission band with a band "
        "λc-λf in mm such as '0.8-8/Wa ...'; no λf is assumed",
        f"{path}:6:5: Wt is a waviness parameter: state its transmission band with 'lf' such as "
        "'8mm' (and 'cutoff' for λc); no λf is assumed",
    ]
    assert main(["check", str(path), str(path)]) == 2
    assert capsys.readouterr().err.startswith(f"speccheck: error: {path}:5:5: Wa is a waviness")


def test_lambda_f_on_a_roughness_parameter_is_refused(tmp_path, capsys):
    path = write_spec(tmp_path, "requirements:\n  - {parameter: Ra, upper: 3um, lf: 8mm}\n")
    assert main(["lint", str(path)]) == 2
    assert "λf applies to waviness (W) parameters only, not Ra" in capsys.readouterr().out


@pytest.mark.parametrize(("limit", "status"), [("3", 0), ("2.8", 1)])
def test_waviness_requirement_checked_in_its_band(tmp_path, capsys, limit, status):
    """A = 5 µm, λ = 2 mm, band λc 0.8 – λf 8 mm. W transmission = mean-line transmission at
    λc minus that at λf (ISO 16610-21: exp(−π(αλc/λ)²)): 0.89510 − 0.00001 = 0.8951, so
    Wa = 2A/π · 0.8951 = 2.849 µm (sine closed form, domain notes section 4). 5 sections of
    λf = 40 mm plus 8 mm run-in and run-out: a 56 mm trace at 0.5 µm spacing."""
    from speccheck.profile import Profile
    from speccheck.readers import write_x3p

    alpha = np.sqrt(np.log(2) / np.pi)
    t = np.exp(-np.pi * (alpha * 0.8 / 2.0) ** 2) - np.exp(-np.pi * (alpha * 8.0 / 2.0) ** 2)
    x_mm = np.arange(112_000) * 0.5e-3
    prof = tmp_path / "wavy.x3p"
    write_x3p(prof, Profile(5.0 * np.sin(2 * np.pi * x_mm / 2.0), 0.5))
    spec = write_spec(tmp_path, f'requirements:\n  - "0.8-8/Wa max {limit}"\n')
    assert main(["explain", str(spec)]) == 0
    assert "waviness band λc 0.8 mm – λf 8 mm" in capsys.readouterr().out
    assert main(["check", str(spec), str(prof), "--json", "-"]) == status
    import json

    d = json.loads(capsys.readouterr().out)
    (value,) = d["requirements"][0]["values"]
    assert value["value"] == pytest.approx(2 * 5.0 / np.pi * t, rel=2e-3)
    assert d["requirements"][0]["conditions"]["lambda_f_mm"] == 8.0
