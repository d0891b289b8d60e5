"""``speccheck check``: exit statuses, exact messages, and the state read back through the library.

Profiles are sines of known Ra (closed form A·(2/N)·cot(π/N), N samples per period, derived in
tests/test_evaluator.py; → 2A/π); verdicts per ISO 4288:1996 5.2 (16 % rule) and 5.3 (max).
Exit statuses: speccheck.errors.ExitStatus (0 conforming, 1 nonconforming, 3 undecided, 2 error).
"""

from __future__ import annotations

import json
import math
import textwrap

import numpy as np
import pytest

from speccheck.cli.main import main
from speccheck.evaluation.result import CheckResult
from speccheck.profile import Profile
from speccheck.readers import write_csv

N = 100  # samples per period: λ = 50 µm at 0.5 µm
RA_PER_AMPLITUDE = (2 / N) / math.tan(math.pi / N)


def profile_file(tmp_path, name: str, ra_um: float, *, points: int = 11201, dx_um: float = 0.5):
    x_um = np.arange(points) * dx_um
    z = (ra_um / RA_PER_AMPLITUDE) * np.sin(2 * np.pi * x_um / 50.0)
    path = tmp_path / f"{name}.csv"
    write_csv(path, Profile(z, dx_um))
    return str(path)


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


def run(args, capsys):
    status = main(args)
    out = capsys.readouterr()
    return status, out.out, out.err


def test_conforming_exit_0(tmp_path, spec_file, capsys):
    p = profile_file(tmp_path, "a", 0.40)  # ≤ 70 % of 0.8: step 1
    status, out, err = run(["check", spec_file, p], capsys)
    assert (status, err) == (0, "")
    assert "Result: CONFORMING" in out
    assert "│ 1 │ Ra 0.8" in out and "CONFORMING" in out
    assert " ".join(out.split()).endswith("and parts are released by qualified personnel.")
    assert all(line == line.rstrip() for line in out.splitlines())
    assert "governing drawing" in out


def test_nonconforming_exit_1(tmp_path, spec_file, capsys):
    paths = [profile_file(tmp_path, f"p{i}", 0.9 + 0.05 * i) for i in range(3)]
    status, out, _ = run(["check", spec_file, *paths], capsys)
    assert status == 1
    assert "Result: NONCONFORMING" in out
    assert "(exceeding)" in out


def test_undecided_exit_3_with_next_step(tmp_path, spec_file, capsys):
    p = profile_file(tmp_path, "a", 0.64)  # above 70 %, below the limit
    status, out, _ = run(["check", spec_file, p], capsys)
    assert status == 3
    assert "Result: UNDECIDED" in out
    flat = " ".join(out.split())
    expected = "measure 2 more profiles where the highest values are expected (ISO 4288)."
    assert "#1 undecided: " in flat and f"Next: {expected}" in flat


def test_json_to_file_matches_library_result(tmp_path, spec_file, capsys):
    p = profile_file(tmp_path, "a", 0.64)
    out_json = tmp_path / "result.json"
    status, _, _ = run(["check", spec_file, p, "--json", str(out_json)], capsys)
    assert status == 3
    d = json.loads(out_json.read_text(encoding="utf-8"))
    res = CheckResult.from_dict(d)
    assert res.verdict == "undecided"
    r = d["requirements"][0]
    assert (r["text"], r["parameter"], r["verdict"], r["reason"]) == (
        "Ra 0.8",
        "Ra",
        "undecided",
        "more-measurements",
    )
    assert r["values"][0]["value"] == pytest.approx(0.64, rel=1e-6)
    assert d["spec"]["path"] == spec_file and len(d["spec"]["sha256"]) == 64
    assert len(d["measurements"][0]["sha256"]) == 64


def test_json_to_stdout_is_pure_json(tmp_path, spec_file, capsys):
    p = profile_file(tmp_path, "a", 0.40)
    status, out, _ = run(["check", spec_file, p, "--json", "-"], capsys)
    assert status == 0
    assert json.loads(out)["verdict"] == "conforming"


def test_too_short_trace_exit_3(tmp_path, spec_file, capsys):
    p = profile_file(tmp_path, "short", 0.4, points=6000)
    status, out, _ = run(["check", spec_file, p, "--json", str(tmp_path / "r.json")], capsys)
    assert status == 3
    d = json.loads((tmp_path / "r.json").read_text())
    assert d["requirements"][0]["reason"] == "insufficient-data"
    assert (
        "Measurement 1 (short.csv) not evaluated: trace 3 mm is shorter than the 5.6 mm needed"
        in " ".join(out.split())
    )


def test_coarse_spacing_exit_3(tmp_path, spec_file, capsys):
    # ISO 3274 Table 1 (from memory): 0.5 µm at most for λc 0.8 mm
    p = profile_file(tmp_path, "coarse", 0.4, points=5601, dx_um=1.0)
    out_json = tmp_path / "r.json"
    status, _, _ = run(["check", spec_file, p, "--json", str(out_json)], capsys)
    assert status == 3
    assert json.loads(out_json.read_text())["requirements"][0]["reason"] == "other-conditions"


def test_spec_error_exit_2_and_old_json_intact(tmp_path, capsys):
    spec = tmp_path / "bad.yaml"
    spec.write_text(
        "spec_version: 1\npart: {number: KFP-2041, revision: C, surface: seal seat}\n"
        'decision_rule: guarded-acceptance\nrequirements:\n  - "Ra 0.8"\n',
        encoding="utf-8",
    )
    p = profile_file(tmp_path, "a", 0.4)
    out_json = tmp_path / "r.json"
    out_json.write_text("old", encoding="utf-8")
    status, out, err = run(["check", str(spec), p, "--json", str(out_json)], capsys)
    assert status == 2 and out == ""
    assert err == (
        f"speccheck: error: {spec}:5:5: Ra 0.8: decision rule guarded-acceptance "
        "needs the expanded uncertainty U of Ra (add it under 'uncertainty')\n"
    )
    assert out_json.read_text(encoding="utf-8") == "old"  # nothing half-written, old file kept
    assert [f.name for f in tmp_path.iterdir() if f.name.startswith(".r.json")] == []


def test_missing_profile_exit_2(tmp_path, spec_file, capsys):
    missing = str(tmp_path / "none.csv")
    status, _, err = run(["check", spec_file, missing], capsys)
    assert status == 2
    assert err.startswith(f"speccheck: error: {missing}")
    assert err.count("\n") == 1


def test_sign_needs_report(tmp_path, spec_file, capsys):
    p = profile_file(tmp_path, "a", 0.4)
    status, _, err = run(["check", spec_file, p, "--sign", "key.p12"], capsys)
    assert (status, err) == (2, "speccheck: error: --sign needs --report OUT.pdf\n")


def test_passphrase_file_needs_sign(tmp_path, spec_file, capsys):
    p = profile_file(tmp_path, "a", 0.4)
    status, _, err = run(["check", spec_file, p, "--passphrase-file", "pw.txt"], capsys)
    assert (status, err) == (2, "speccheck: error: --passphrase-file needs --sign KEY.p12\n")


def test_db_needs_record(tmp_path, spec_file, capsys):
    p = profile_file(tmp_path, "a", 0.4)
    status, _, err = run(["check", spec_file, p, "--db", str(tmp_path / "r.sqlite")], capsys)
    assert (status, err) == (2, "speccheck: error: --db needs --record\n")


def test_record_appends_to_store(tmp_path, spec_file, capsys):
    from speccheck.records.store import RecordsStore

    p = profile_file(tmp_path, "a", 0.4)
    db = tmp_path / "records.sqlite"
    status, out, _ = run(["check", spec_file, p, "--record", "--db", str(db)], capsys)
    assert status == 0
    assert "Recorded as entry 1 in the records store." in out
    with RecordsStore.open(db, create=False) as store:
        (rec,) = store.list()
        assert (rec.kind, rec.verdict, rec.part) == ("check", "conforming", "KFP-2041")
        assert rec.result["requirements"][0]["verdict"] == "conforming"


def test_signed_report_and_record(tmp_path, spec_file, capsys, monkeypatch):
    import hashlib

    from speccheck.records.store import RecordsStore
    from speccheck.report.pdf import read_embedded_files
    from speccheck.report.signing import new_key

    monkeypatch.delenv("SPECCHECK_PASSPHRASE", raising=False)
    key = tmp_path / "inspector.p12"
    new_key(
        key, name="Test Inspector", passphrase=b"correct horse", organisation="Kestrel Fluid Power"
    )
    pw = tmp_path / "pw.txt"
    pw.write_text("correct horse\n", encoding="utf-8")
    p = profile_file(tmp_path, "a", 0.4)
    pdf = tmp_path / "record.pdf"
    db = tmp_path / "records.sqlite"
    args = [
        "check",
        spec_file,
        p,
        "--report",
        str(pdf),
        "--sign",
        str(key),
        "--passphrase-file",
        str(pw),
    ]
    status, out, err = run([*args, "--record", "--db", str(db)], capsys)
    assert (status, err) == (0, "")
    assert f"Conformance record written: {pdf} (signed by Test Inspector" in out
    data = pdf.read_bytes()
    assert data.startswith(b"%PDF")
    embedded = read_embedded_files(data)
    assert json.loads(embedded["speccheck-result.json"])["verdict"] == "conforming"
    with RecordsStore.open(db, create=False) as store:
        (rec,) = store.list()
        assert rec.report_sha256 == hashlib.sha256(data).hexdigest()
    # wrong passphrase: exit 2, one line, no PDF left behind
    pw.write_text("wrong\n", encoding="utf-8")
    pdf2 = tmp_path / "record2.pdf"
    args2 = [
        "check",
        spec_file,
        p,
        "--report",
        str(pdf2),
        "--sign",
        str(key),
        "--passphrase-file",
        str(pw),
    ]
    status, _, err = run(args2, capsys)
    assert status == 2 and err.startswith("speccheck: error: ") and err.count("\n") == 1
    assert not pdf2.exists()


def test_values_in_the_uncertainty_range_are_marked(tmp_path, capsys):
    # ISO 14253-1: Ra 0.78 lies within ±U = 0.05 of 0.8; guarded acceptance counts it exceeding
    spec = tmp_path / "g.yaml"
    spec.write_text(
        "spec_version: 1\npart: {number: KFP-3310, revision: B, surface: bore}\n"
        "measurement: {ls: none}\ndecision_rule: guarded-acceptance\n"
        'uncertainty: {Ra: 0.05um}\nrequirements:\n  - "Ra max 0.8"\n',
        encoding="utf-8",
    )
    p = profile_file(tmp_path, "a", 0.78)
    status, out, _ = run(["check", str(spec), p], capsys)
    assert status == 1
    flat = " ".join(out.split())
    assert "0.78 (±U, counted exceeding)" in flat
    assert "conformity is not proven because values lie within U of a limit." in flat


def test_z_only_file_with_dx_and_decimal_comma(tmp_path, spec_file, capsys):
    # a z-only column with decimal commas: spacing from --dx, separator from --decimal
    z = (0.40 / RA_PER_AMPLITUDE) * np.sin(2 * np.pi * np.arange(11201) * 0.5 / 50.0)
    path = tmp_path / "z.txt"
    path.write_text("z [um]\n" + "".join(f"{v:.6f}".replace(".", ",") + "\n" for v in z))
    args = ["check", spec_file, str(path), "--dx", "0.5um", "--decimal", ",", "--json", "-"]
    status, out, _ = run(args, capsys)
    assert status == 0
    d = json.loads(out)
    assert d["measurements"][0]["spacing_um"] == 0.5
    # rel 1e-5: heights written with 6 decimals (±5e-7 µm each)
    assert d["requirements"][0]["values"][0]["value"] == pytest.approx(0.40, rel=1e-5)
