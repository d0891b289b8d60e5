"""The same profile is not counted twice: fingerprints of decoded heights across formats.

The fingerprint is our own definition (speccheck.evaluation.fingerprint); the checks compare it
with numpy's reading of the same heights and with hashlib's SHA-256 of the canonical bytes.
That one profile measured once is one measurement is common practice, no source.
"""

from __future__ import annotations

import hashlib
import json
import textwrap

import numpy as np
import pytest

from speccheck.cli.main import main
from speccheck.evaluation.fingerprint import height_fingerprint
from speccheck.profile import Profile
from speccheck.readers import read_profile, write_csv
from speccheck.readers.x3p import write_x3p


@pytest.fixture
def spec_file(tmp_path):
    path = tmp_path / "kfp-2041.yaml"
    path.write_text(
        textwrap.dedent(
            """\
            spec_version: 1
            part: {number: KFP-2041, revision: C, surface: seal seat}
            measurement: {ls: none}
            requirements:
              - "Ra 0.8"
            """
        ),
        encoding="utf-8",
    )
    return str(path)


def _heights(seed: int) -> Profile:
    rng = np.random.default_rng(seed)
    x = np.arange(11201) * 0.5
    return Profile(0.5 * np.sin(2 * np.pi * x / 50.0) + 0.02 * rng.standard_normal(x.size), 0.5)


def test_fingerprint_is_sha256_of_canonical_metres():
    p = _heights(1)
    z_m = np.round(p.z_um * 1e-6 / 1e-13) * 1e-13
    want = hashlib.sha256(
        np.uint64(p.n_points).astype("<u8").tobytes()
        + np.float64(round(0.5e-6 / 1e-13) * 1e-13).astype("<f8").tobytes()
        + z_m.astype("<f8").tobytes()
    ).hexdigest()
    assert height_fingerprint(p) == want
    assert height_fingerprint(_heights(2)) != want


def test_csv_written_from_x3p_heights_is_caught(tmp_path, spec_file, capsys):
    x3p = tmp_path / "seat-1.x3p"
    write_x3p(x3p, _heights(1))
    csv = tmp_path / "seat-1-export.csv"
    write_csv(csv, read_profile(x3p))  # the X3P's decoded heights at full precision
    assert height_fingerprint(read_profile(csv)) == height_fingerprint(read_profile(x3p))
    status = main(["check", spec_file, str(x3p), str(csv)])
    err = capsys.readouterr().err
    assert status == 2
    assert "seat-1.x3p" in err and "seat-1-export.csv" in err
    assert "Traceback" not in err


def test_six_digit_csv_is_a_different_data_set(tmp_path):
    """Documented limit: heights rounded to 6 significant digits are not the same heights."""
    p = _heights(1)
    csv = tmp_path / "rounded.csv"
    x_mm = np.arange(p.n_points) * 0.5e-3
    rows = "\n".join(f"{x:.12g},{z:.6g}" for x, z in zip(x_mm, p.z_um, strict=True))
    csv.write_text("x [mm],z [um]\n" + rows + "\n", encoding="utf-8")
    assert height_fingerprint(read_profile(csv)) != height_fingerprint(p)


def test_allow_repeat_accepts_and_says_so(tmp_path, spec_file, capsys):
    a = tmp_path / "a.csv"
    write_csv(a, _heights(3))
    b = tmp_path / "b.csv"
    b.write_bytes(a.read_bytes())
    out_json = tmp_path / "r.json"
    status = main(["check", spec_file, str(a), str(b), "--allow-repeat", "--json", str(out_json)])
    out = capsys.readouterr().out
    assert status == 0
    assert "Repeat allowed" in out and "b.csv" in out and "a.csv" in out
    doc = json.loads(out_json.read_text(encoding="utf-8"))
    assert len(doc["repeats_allowed"]) == 1
    prints = [m["fingerprint"] for m in doc["measurements"]]
    assert prints[0] == prints[1] == height_fingerprint(read_profile(a))


def test_lot_refuses_the_same_profile_in_two_parts(tmp_path, capsys):
    from test_lot import GOOD, build_lot

    plan = build_lot(tmp_path, {f"S-0{i}": GOOD for i in range(1, 6)})  # the plan samples 5
    data = tmp_path / "data"
    (data / "S-02" / "seal-seat" / "p2.csv").write_bytes(
        (data / "S-01" / "seal-seat" / "p1.csv").read_bytes()
    )
    status = main(["lot", str(plan), "--data", str(data)])
    err = capsys.readouterr().err
    assert status == 2
    assert "part S-02" in err and "part S-01" in err and "p1.csv" in err and "p2.csv" in err
    status = main(["lot", str(plan), "--data", str(data), "--allow-repeat"])
    out = capsys.readouterr().out
    assert status == 0
    assert "repeat allowed" in out
