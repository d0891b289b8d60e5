"""``speccheck lot``: exit status, exact messages, and the state read back through the library."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from test_lot import BAD, GOOD, OPEN, build_lot

from speccheck.lot.result import LotResult
from speccheck.records.store import RecordsStore


@pytest.fixture(scope="module")
def reject_lot(tmp_path_factory) -> Path:
    root = tmp_path_factory.mktemp("reject")
    return build_lot(root, {"S-01": GOOD, "S-02": BAD, "S-03": GOOD, "S-04": BAD, "S-05": GOOD})


def test_lot_reject_json_and_record(run_cli, reject_lot: Path, tmp_path: Path):
    out_json, db = tmp_path / "lot.json", tmp_path / "r.sqlite"
    status, out, err = run_cli(
        "lot",
        reject_lot,
        "--data",
        reject_lot.parent / "data",
        "--json",
        out_json,
        "--record",
        "--db",
        db,
    )
    assert status == 1
    assert out.splitlines()[0] == (
        "KFP-2041 lot L-1: REJECT — 2 nonconforming parts in the sample, more than the "
        "acceptance number 1: reject the lot."
    )
    assert out.splitlines()[1:] == [
        "  S-01             conforming",
        "  S-02             nonconforming",
        "  S-03             conforming",
        "  S-04             nonconforming",
        "  S-05             conforming",
    ]
    assert err == f"recorded as record 1 in {db}\n"
    result = LotResult.from_dict(json.loads(out_json.read_text(encoding="utf-8")))
    assert (result.disposition, result.nonconforming) == ("reject", 2)
    with RecordsStore.open(db, create=False) as store:
        (rec,) = store.list()
    assert (rec.kind, rec.part, rec.verdict) == ("lot", "KFP-2041", "reject")
    assert rec.spec_sha256 == result.plan["sha256"]
    assert len(rec.profile_sha256s) == 15  # 5 parts x 3 profiles
    assert rec.result["parts"][1]["verdict"] == "nonconforming"


def test_lot_undecided_lists_parts_to_measure_again(run_cli, tmp_path: Path):
    plan = build_lot(
        tmp_path, {"S-01": GOOD, "S-02": BAD, "S-03": GOOD, "S-04": OPEN, "S-05": GOOD}
    )
    status, out, _ = run_cli("lot", plan, "--data", tmp_path / "data", "--workers", "2")
    assert status == 3
    assert out.splitlines()[-1] == "measure again: S-04"
    assert "UNDECIDED" in out.splitlines()[0]


def test_lot_json_to_stdout(run_cli, reject_lot: Path):
    status, out, _ = run_cli("lot", reject_lot, "--data", reject_lot.parent / "data", "--json", "-")
    assert status == 1
    assert json.loads(out)["disposition"] == "reject"


def test_bad_plan_one_line_exit_2(run_cli, tmp_path: Path):
    plan = tmp_path / "plan.yaml"
    plan.write_text("plan_version: 2\n", encoding="utf-8")
    status, out, err = run_cli("lot", plan, "--data", tmp_path)
    assert status == 2 and out == ""
    assert err == f"speccheck: error: {plan}:1:1: plan_version: Input should be 1\n"


def test_missing_data_one_line_exit_2(run_cli, reject_lot: Path, tmp_path: Path):
    status, _, err = run_cli("lot", reject_lot, "--data", tmp_path)
    assert status == 2
    assert err == (
        f"speccheck: error: {tmp_path}: the plan samples 5 part(s) but 0 match "
        "'{part_serial}/{surface}/*.csv' (none)\n"
    )


def test_sign_needs_report(run_cli, reject_lot: Path, tmp_path: Path):
    status, _, err = run_cli("lot", reject_lot, "--data", tmp_path, "--sign", tmp_path / "k.p12")
    assert status == 2
    assert (
        err
        == "speccheck: error: --sign needs --report OUT.pdf (the signature goes on the report)\n"
    )


def test_signed_lot_report(run_cli, reject_lot: Path, tmp_path: Path):
    from pypdf import PdfReader

    from speccheck.report.pdf import read_embedded_files
    from speccheck.report.signing import new_key

    key = tmp_path / "qa.p12"
    new_key(
        key,
        name="Incoming Inspection",
        passphrase=b"lot-test-passphrase",
        organisation="Kestrel Fluid Power",
    )
    (tmp_path / "pass.txt").write_text("lot-test-passphrase\n", encoding="utf-8")
    pdf, db = tmp_path / "lot.pdf", tmp_path / "r.sqlite"
    status, out, err = run_cli(
        "lot", reject_lot, "--data", reject_lot.parent / "data", "--report", pdf, "--sign", key,
        "--passphrase-file", tmp_path / "pass.txt", "--record", "--db", db,
    )  # fmt: skip
    assert status == 1, err
    assert out.splitlines()[-1] == f"report written to {pdf}"
    data = pdf.read_bytes()
    text = "\n".join(page.extract_text() for page in PdfReader(pdf).pages)
    assert "REJECT" in text and "Cautions" in text and "Incoming Inspection" in text
    assert "code letter C (n = 5)" in text  # ISO 2859-1:1999 Table 1/2-A, lot of 20
    attached = read_embedded_files(data)
    assert json.loads(attached["lot-result.json"])["disposition"] == "reject"
    assert attached["plan.yaml"] == reject_lot.read_bytes()
    assert b"/Sig" in data
    import hashlib

    with RecordsStore.open(db, create=False) as store:
        rec = store.get(1)
    assert rec.report_sha256 == hashlib.sha256(data).hexdigest()
    assert rec.signer == "Incoming Inspection"


def test_unwritable_output_fails_before_anything_is_written(
    run_cli, reject_lot: Path, tmp_path: Path
):
    db, out_json = tmp_path / "r.sqlite", tmp_path / "lot.json"
    bad = tmp_path / "no-such-folder" / "lot.pdf"
    status, out, err = run_cli(
        "lot", reject_lot, "--data", reject_lot.parent / "data", "--report", bad,
        "--json", out_json, "--record", "--db", db,
    )  # fmt: skip
    assert (status, out) == (2, "")
    assert err == f"speccheck: error: {bad}: folder '{bad.parent}' does not exist\n"
    assert not db.exists() and not out_json.exists()


def test_lot_identity_on_every_part_and_serial_refused(run_cli, reject_lot: Path):
    """Each part's record carries its folder's serial and the stated operator and order."""
    data = reject_lot.parent / "data"
    args = ("lot", reject_lot, "--data", data, "--json", "-", "--operator", "A. Bench")
    status, out, _ = run_cli(*args, "--order", "PO-77")
    assert status == 1
    for part in json.loads(out)["parts"]:
        for check in part["surfaces"].values():
            ident = check["identity"]
            assert (ident["serial"], ident["operator"]) == (part["serial"], "A. Bench")
            assert ident["order"] == "PO-77"
    status, _, err = run_cli("lot", reject_lot, "--data", data, "--serial", "S-01")
    assert status == 2
    assert "--serial is for check" in err
