"""``speccheck uncertainty noise|repeat``: exit status, messages, and the file read back."""

from __future__ import annotations

import hashlib
import math
from pathlib import Path

import numpy as np
import pytest

from speccheck.cli.main import main
from speccheck.instrument import load_instrument
from speccheck.instrument.calibration import instrument_errors, noise_sigma_um
from speccheck.parameters.compute import compute_parameters
from speccheck.parameters.conditions import Conditions
from speccheck.profile import Profile
from speccheck.readers import write_csv
from speccheck.uncertainty.noise import noise_bandwidth_closed_form

DX = 0.5
X = np.arange(11_201) * DX

INSTRUMENT = """instrument_version: 1
id: BENCH-7   # invented demonstration bench
# calibration state
calibration:
  date: 2026-06-01
  interval_days: 365
amplification:
  coefficient: 1.002
  standard_uncertainty: 0.004
  certificate: DEMO-AMP-1
  date: 2026-06-01
noise:
  rq0: 0.1um
  lambda_c: 0.8mm
  lambda_s: 2.5um
  spacing: 0.5um
# notes follow
notes: invented values for a demonstration
"""


@pytest.fixture
def instrument(tmp_path):
    path = tmp_path / "bench7.yaml"
    path.write_text(INSTRUMENT, encoding="utf-8")
    return path


def _flats(tmp_path, sigma: float, count: int = 3) -> list[str]:
    rng = np.random.default_rng(7)
    out = []
    for i in range(count):
        p = tmp_path / f"flat{i}.csv"
        z = sigma * rng.standard_normal(X.size) + 2e-4 * X  # a slightly tilted optical flat
        write_csv(p, Profile(z_um=z, dx_um=DX))
        out.append(str(p))
    return out


def test_noise_recovers_sigma_of_a_synthetic_flat(tmp_path, instrument, capsys):
    # white noise σ = 0.01 µm on a flat: Rq0 = σ·√g, g the closed-form bandwidth of the λc 0.8 mm
    # and λs 2.5 µm Gaussians (speccheck.uncertainty.noise, derived from ISO 16610-21);
    # 3 traces of 8000 evaluated points: the estimate of σ is within 3 % (≈ 4 standard errors)
    flats = _flats(tmp_path, 0.01)
    out = tmp_path / "bench7-new.yaml"
    status = main(
        [
            "uncertainty",
            "noise",
            *flats,
            "--instrument",
            str(instrument),
            "-o",
            str(out),
            "--date",
            "2026-12-01",
            "--certificate",
            "FLAT-3",
        ]
    )
    assert status == 0
    printed = capsys.readouterr().out
    assert printed.startswith("Rq0 = ") and "written to" in printed
    loaded = load_instrument(out)
    noise = loaded.model.noise
    assert noise is not None and noise.certificate == "FLAT-3"
    assert noise_sigma_um(loaded) == pytest.approx(0.01, rel=0.03)
    g = noise_bandwidth_closed_form(dx_um=DX, lambda_c_um=800, lambda_s_um=2.5)
    rq0 = float(str(noise.rq0).removesuffix("um"))
    assert rq0 == pytest.approx(0.01 * math.sqrt(g), rel=0.03)
    assert noise.profiles == [hashlib.sha256(Path(f).read_bytes()).hexdigest() for f in flats]
    text = out.read_text(encoding="utf-8")
    # everything else is kept as written, comments included; the input is unchanged
    assert "id: BENCH-7   # invented demonstration bench\n# calibration state\n" in text
    assert "# notes follow\nnotes: invented values" in text
    assert "rq0: 0.1um" not in text
    assert instrument.read_text(encoding="utf-8") == INSTRUMENT


def test_noise_from_rq0_and_its_conditions(tmp_path):
    # without sigma, σ = Rq0/√g at the stated λc, λs and spacing (same closed form)
    path = tmp_path / "i.yaml"
    path.write_text(
        "instrument_version: 1\nid: B\nnoise:\n  rq0: 0.005um\n  lambda_c: 0.8mm\n"
        "  lambda_s: 2.5um\n  spacing: 0.5um\n",
        encoding="utf-8",
    )
    g = noise_bandwidth_closed_form(dx_um=0.5, lambda_c_um=800, lambda_s_um=2.5)
    assert noise_sigma_um(load_instrument(path)) == pytest.approx(0.005 / math.sqrt(g), rel=1e-3)
    path.write_text("instrument_version: 1\nid: B\nnoise:\n  rq0: 0.005um\n", encoding="utf-8")
    with pytest.raises(Exception, match="noise needs 'sigma'"):
        noise_sigma_um(load_instrument(path))


def test_repeat_stores_sd_and_dof_with_the_evidence(tmp_path, instrument, capsys):
    # type A (JCGM 100:2008 4.2.2): s of single values with n − 1 degrees of freedom; the
    # reference is numpy's sample standard deviation of the pipeline's values
    rng = np.random.default_rng(3)
    files, ra = [], []
    cond = Conditions.standard(0.8)
    for i in range(5):
        z = (1 + 0.004 * rng.standard_normal()) * np.sin(2 * np.pi * X / 100.0)
        z = z + 0.005 * rng.standard_normal(X.size)
        p = tmp_path / f"rep{i}.csv"
        write_csv(p, Profile(z_um=z, dx_um=DX))
        files.append(str(p))
        ra.append(compute_parameters(z, dx_um=DX, conditions=cond).values["Ra"].value)
    out = tmp_path / "with-repeat.yaml"
    status = main(
        [
            "uncertainty",
            "repeat",
            *files,
            "--instrument",
            str(instrument),
            "-o",
            str(out),
            "--parameter",
            "Ra",
            "--parameter",
            "Rz",
            "--date",
            "2026-12-02",
        ]
    )
    assert status == 0
    assert capsys.readouterr().out.startswith("Ra: mean ")
    loaded = load_instrument(out)
    rep = loaded.model.repeatability
    assert rep is not None and str(rep.date) == "2026-12-02"
    assert sorted(rep.parameters) == ["Ra", "Rz"]
    assert rep.profiles == [hashlib.sha256(Path(f).read_bytes()).hexdigest() for f in files]
    errors = instrument_errors(loaded)
    assert errors.repeatability["Ra"].dof == 4
    assert errors.repeatability["Ra"].sd == pytest.approx(np.std(ra, ddof=1), rel=1e-3)
    # the amplification coefficient's deviation from 1 joins its uncertainty in quadrature
    assert errors.u_a == pytest.approx(math.hypot(0.004, 0.002))
    assert "DEMO-AMP-1" in errors.amplification_source


@pytest.mark.parametrize(
    ("extra", "message"),
    [
        (
            ["--parameter", "RSm"],
            "option --parameter: no uncertainty model for RSm (a repeatability study records "
            "Ra, Rq, Rsk, Rku, Rp, Rv, Rz, Rt)",
        ),
        (["--date", "2026-13-01"], "option --date: '2026-13-01' is not a date YYYY-MM-DD"),
        (["--cutoff", "0mm"], "option --cutoff: '0mm' must be a positive length"),
    ],
)
def test_bad_options_are_one_line_errors(tmp_path, instrument, capsys, extra, message):
    flats = _flats(tmp_path, 0.01, 2)
    status = main(
        [
            "uncertainty",
            "repeat",
            *flats,
            "--instrument",
            str(instrument),
            "-o",
            str(tmp_path / "o.yaml"),
            *extra,
        ]
    )
    err = capsys.readouterr().err
    assert status == 2
    assert err == f"speccheck: error: {message}\n"
    assert not (tmp_path / "o.yaml").exists()


def test_output_never_overwrites_the_instrument_file(tmp_path, instrument, capsys):
    flats = _flats(tmp_path, 0.01, 2)
    status = main(
        ["uncertainty", "noise", *flats, "--instrument", str(instrument), "-o", str(instrument)]
    )
    assert status == 2
    assert "would overwrite the input instrument file" in capsys.readouterr().err
    assert instrument.read_text(encoding="utf-8") == INSTRUMENT


def test_bad_instrument_file_named_with_its_place(tmp_path, capsys):
    bad = tmp_path / "bad.yaml"
    bad.write_text("instrument_version: 1\nid: B\namplification:\n  standard_uncertainty: -1\n")
    flats = _flats(tmp_path, 0.01, 2)
    status = main(
        ["uncertainty", "noise", *flats, "--instrument", str(bad), "-o", str(tmp_path / "o.yaml")]
    )
    err = capsys.readouterr().err
    assert status == 2
    assert err.startswith(f"speccheck: error: {bad}:4:") and err.count("\n") == 1


def test_one_trace_is_not_a_repeatability_study(tmp_path, instrument, capsys):
    flats = _flats(tmp_path, 0.01, 1)
    status = main(
        [
            "uncertainty",
            "repeat",
            *flats,
            "--instrument",
            str(instrument),
            "-o",
            str(tmp_path / "o.yaml"),
        ]
    )
    assert status == 2
    assert (
        capsys.readouterr().err
        == "speccheck: error: a repeatability study needs at least 2 traces\n"
    )
