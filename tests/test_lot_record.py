"""Lot records are records: they attach every input, verify recomputes them, and every page of
every kind of record says how it is signed.

Lot of 20, inspection level II: sample size 5 (ISO 2859-1 Table 1 code letter C, Table 2-A;
from memory), acceptance number 1 from the plan. Profiles are sines, Ra = 2A/π ([calc]); four
parts well inside Ra 0.4 and one with 3 of 3 values over it (ISO 4288:1996 5.2: nonconforming),
so d = 1 ≤ c = 1 accepts the lot; swapping one good part's profile for a rough one leaves that
part undecided, and the lot with it.
"""

from __future__ import annotations

import json
from io import BytesIO
from pathlib import Path

import pytest
from test_lot import BAD, GOOD, build_lot, sine_csv

from speccheck.cli.main import main
from speccheck.lot.plan import load_plan
from speccheck.lot.report import LOT_MANIFEST_NAME, write_lot_report
from speccheck.lot.runner import inspect_lot
from speccheck.lot.verify import verify_record
from speccheck.report import new_key, sign_pdf
from speccheck.report.pdf import EmbeddedFile, embed_files, read_embedded_files

PASS = b"kestrel-lot-pass"


@pytest.fixture(scope="module")
def lot(tmp_path_factory):
    d = tmp_path_factory.mktemp("lotrec")
    parts = {f"S{i:03d}": GOOD for i in range(1, 5)} | {"S005": BAD}
    plan = build_lot(d, parts)
    key = new_key(d / "qa.p12", name="Dana Whitfield", passphrase=PASS)
    pw = d / "pw"
    pw.write_bytes(PASS + b"\n")
    signed = d / "lot.pdf"
    args = ["lot", str(plan), "--data", str(d / "data"), "--workers", "1"]
    assert (
        main(
            [
                *args,
                "--report",
                str(signed),
                "--sign",
                str(key.p12_path),
                "--passphrase-file",
                str(pw),
            ]
        )
        == 0
    )
    result = inspect_lot(load_plan(plan), d / "data", workers=1)
    return dict(d=d, plan=plan, key=key, signed=signed, result=result)


def _pages_text(path: Path) -> list[str]:
    from pypdf import PdfReader

    return [p.extract_text() for p in PdfReader(path).pages]


def test_lot_record_attaches_every_input(lot):
    files = read_embedded_files(lot["signed"].read_bytes())
    manifest = json.loads(files[LOT_MANIFEST_NAME])
    assert (
        manifest["plan"]["name"] == "plan.yaml" and files["plan.yaml"] == lot["plan"].read_bytes()
    )
    assert [s["plan_path"] for s in manifest["specs"]] == ["spec.yaml"]
    assert len(manifest["profiles"]) == 15  # 5 parts × 3 profiles
    first = manifest["profiles"][0]
    assert files[first["name"]] == (lot["d"] / "data" / first["rel_path"]).read_bytes()


def test_untouched_lot_record_verifies(lot, capsys):
    r = verify_record(lot["signed"], trust=[lot["key"].pem_path])
    assert r.ok and r.recorded_verdict == r.recomputed_verdict == "accept", r.problems
    assert main(["verify", str(lot["signed"]), "--trust", str(lot["key"].pem_path)]) == 0
    assert "recomputed:    equal to the record (recorded verdict accept" in capsys.readouterr().out


def _swapped(lot, tmp_path: Path) -> Path:
    """The record's pages and attachments, one good profile replaced by a rough one, signed
    again with the genuine key (what an insider with the key could do)."""
    from pypdf import PdfReader, PdfWriter

    files = read_embedded_files(lot["signed"].read_bytes())
    manifest = json.loads(files[LOT_MANIFEST_NAME])
    victim = next(e["name"] for e in manifest["profiles"] if e["rel_path"].startswith("S001/"))
    rough = tmp_path / "rough.csv"
    sine_csv(rough, BAD[0])
    files[victim] = rough.read_bytes()
    w = PdfWriter()
    for page in PdfReader(lot["signed"]).pages:
        w.add_page(page)
    buf = BytesIO()
    w.write(buf)
    pdf = embed_files(buf.getvalue(), [EmbeddedFile(n, b) for n, b in files.items()])
    out = tmp_path / "swapped.pdf"
    out.write_bytes(sign_pdf(pdf, p12_path=lot["key"].p12_path, passphrase=PASS))
    return out


def test_lot_record_with_one_profile_swapped_fails(lot, tmp_path, capsys):
    bad = _swapped(lot, tmp_path)
    r = verify_record(bad, trust=[lot["key"].pem_path])
    assert r.signature.intact and not r.ok
    assert any("is not the file inspected (SHA-256 differs)" in p for p in r.problems)
    # one rough value of three in S001: ISO 4288:1996 5.2 asks for more values, so S001 is
    # undecided and with d = 1, u = 1, c = 1 the lot could still be rejected: undecided
    assert r.recomputed_verdict == "undecided" and r.differences
    assert main(["verify", str(bad)]) == 1
    assert "DIFFERS from the record" in capsys.readouterr().out


def test_every_page_of_every_record_kind_says_how_it_is_signed(lot, tmp_path):
    unsigned = tmp_path / "unsigned-lot.pdf"
    write_lot_report(
        lot["result"], out_path=unsigned, plan=load_plan(lot["plan"]), data_dir=lot["d"] / "data"
    )
    pages = _pages_text(unsigned)
    assert len(pages) >= 2 and all("NOT SIGNED" in t for t in pages)
    demo = tmp_path / "demo-lot.pdf"
    write_lot_report(
        lot["result"], out_path=demo, sign_p12=lot["key"].p12_path, passphrase=PASS, demo_key=True
    )
    assert all("DEMONSTRATION KEY" in t for t in _pages_text(demo))
    from test_verify import sine_profile

    from speccheck.evaluation.evaluator import evaluate_files
    from speccheck.report import write_report
    from speccheck.spec.loader import load_spec

    spec = lot["d"] / "spec.yaml"
    prof = sine_profile(tmp_path / "m1.csv", 0.19)
    res = evaluate_files(spec, [prof])
    rec = tmp_path / "demo-check.pdf"
    write_report(
        res,
        out_path=rec,
        spec=load_spec(spec),
        profile_paths=[prof],
        sign_p12=lot["key"].p12_path,
        passphrase=PASS,
        demo_key=True,
    )
    assert all("(demonstration key)" in t for t in _pages_text(rec))
    plain = tmp_path / "check.pdf"
    write_report(res, out_path=plain, spec=load_spec(spec), profile_paths=[prof])
    assert all("NOT SIGNED" in t for t in _pages_text(plain))


def test_signed_lot_record_anchors_the_chain(lot, tmp_path, capsys):
    db, out = tmp_path / "r.sqlite", tmp_path / "reports" / "lot.pdf"
    out.parent.mkdir()
    pw = lot["d"] / "pw"
    args = ["lot", str(lot["plan"]), "--data", str(lot["d"] / "data"), "--workers", "1"]
    args += ["--report", str(out), "--sign", str(lot["key"].p12_path), "--passphrase-file"]
    assert main([*args, str(pw), "--record", "--db", str(db)]) == 0
    chain = json.loads(read_embedded_files(out.read_bytes())["lot-result.json"])["records_chain"]
    assert chain == {"records": 0, "head_hash": "0" * 64}
    capsys.readouterr()
    status = main(["records", "audit", "--db", str(db), "--reports", str(out.parent)])
    assert status == 0 and "compared with 1 anchor(s)" in capsys.readouterr().out
