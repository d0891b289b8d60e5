"""The chain anchored outside the database: signed records carry the head, checkpoints, and an
audit that catches a wholesale rewrite.

The rewrite is the attack plain hash chains cannot see (common practice, no source): drop the
append-only triggers, change a verdict, recompute every later hash with the published
definition (record_hash = SHA-256(prev_hash ‖ canonical content)). Profiles are sines with
Ra = 2A/π ([calc]); Ra 0.40 µm against Ra 0.8 decides at the first value (ISO 4288:1996 5.2,
first value ≤ 70 % of the limit).
"""

from __future__ import annotations

import json
import sqlite3
import textwrap
from pathlib import Path

import pytest
from test_verify import sine_profile

from speccheck.cli.main import main
from speccheck.records.anchor import Anchor, check_anchors
from speccheck.records.store import AuditResult, RecordsStore, record_hash
from speccheck.report import new_key, verify_report
from speccheck.report.pdf import read_embedded_files
from speccheck.report.writer import RESULT_NAME

PASS = b"kestrel-anchor-pass"


@pytest.fixture(scope="module")
def world(tmp_path_factory):
    """Three signed checks recorded in one store, their reports in one folder, a checkpoint."""
    d = tmp_path_factory.mktemp("anchor")
    spec = d / "kfp-2041.yaml"
    spec.write_text(
        textwrap.dedent("""\
        spec_version: 1
        part: {number: KFP-2041, revision: C, surface: seal seat}
        requirements:
          - "Ra 0.8"
        """),
        encoding="utf-8",
    )
    key = new_key(d / "qa.p12", name="Dana Whitfield", passphrase=PASS)
    pw = d / "pw"
    pw.write_bytes(PASS + b"\n")
    db, reports = d / "records.sqlite", d / "reports"
    reports.mkdir()
    for i, ra in enumerate((0.40, 0.42, 0.44), 1):
        prof = sine_profile(d / f"p{i}.csv", ra)
        args = ["check", str(spec), str(prof), "--report", str(reports / f"r{i}.pdf")]
        args += ["--sign", str(key.p12_path), "--passphrase-file", str(pw)]
        assert main([*args, "--record", "--db", str(db)]) == 0
    cp = d / "checkpoint.pdf"
    sign = ["--sign", str(key.p12_path), "--passphrase-file", str(pw)]
    assert main(["records", "checkpoint", "--db", str(db), *sign, "--out", str(cp)]) == 0
    return dict(d=d, db=db, reports=reports, checkpoint=cp, key=key)


def _rewrite_wholesale(src: Path, dst: Path, record_id: int) -> None:
    """Copy the store, then change one record's verdict and recompute every hash after it."""
    dst.write_bytes(src.read_bytes())
    with RecordsStore.open(dst, create=False) as store:
        rows = store.list()
    conn = sqlite3.connect(dst, isolation_level=None)
    for name in ("records_no_update", "meta_no_update", "records_no_delete", "meta_no_delete"):
        conn.execute(f"DROP TRIGGER {name}")
    prev = rows[record_id - 2].record_hash if record_id > 1 else "0" * 64
    for r in rows[record_id - 1 :]:
        content = r.content()
        if r.id == record_id:
            result = json.loads(r.result_json)
            result["verdict"] = "nonconforming"
            content["verdict"] = "nonconforming"
            content["result_json"] = json.dumps(result, sort_keys=True, separators=(",", ":"))
        h = record_hash(prev, content)
        conn.execute(
            "UPDATE records SET verdict = ?, result_json = ?, prev_hash = ?, record_hash = ? "
            "WHERE id = ?",
            (content["verdict"], content["result_json"], prev, h, r.id),
        )
        prev = h
    # put the triggers back, as a careful attacker would
    conn.executescript(
        "CREATE TRIGGER records_no_update BEFORE UPDATE ON records BEGIN SELECT RAISE(ABORT, "
        "'x'); END; CREATE TRIGGER records_no_delete BEFORE DELETE ON records BEGIN SELECT "
        "RAISE(ABORT, 'x'); END; CREATE TRIGGER meta_no_update BEFORE UPDATE ON meta BEGIN "
        "SELECT RAISE(ABORT, 'x'); END; CREATE TRIGGER meta_no_delete BEFORE DELETE ON meta "
        "BEGIN SELECT RAISE(ABORT, 'x'); END;"
    )
    conn.close()


def test_signed_record_carries_the_chain_head(world):
    with RecordsStore.open(world["db"], create=False) as store:
        first = store.get(1)
    files = read_embedded_files((world["reports"] / "r2.pdf").read_bytes())
    chain = json.loads(files[RESULT_NAME])["records_chain"]
    assert chain == {"records": 1, "head_hash": first.record_hash}
    from pypdf import PdfReader

    text = " ".join(p.extract_text() for p in PdfReader(world["reports"] / "r2.pdf").pages)
    assert "Records store before this record: 1 records" in text
    # the head is not part of the evaluation: the record still verifies and recomputes
    assert verify_report(world["reports"] / "r2.pdf", trust=[world["key"].pem_path]).ok


def test_untouched_store_agrees_with_every_anchor(world, capsys):
    cp, rep = str(world["checkpoint"]), str(world["reports"])
    args = ["records", "audit", "--db", str(world["db"]), "--checkpoint", cp, "--reports", rep]
    assert main(args) == 0
    out = capsys.readouterr().out
    assert "chain intact, compared with 4 anchor(s)" in out and "integrity check: ok" in out


def test_wholesale_rewrite_passes_plain_audit_but_not_anchors(world, tmp_path, capsys):
    bad = tmp_path / "rewritten.sqlite"
    _rewrite_wholesale(world["db"], bad, 2)
    assert main(["records", "audit", "--db", str(bad)]) == 0  # what plain audit cannot see
    assert "chain intact" in capsys.readouterr().out
    cp = ["--checkpoint", str(world["checkpoint"])]
    assert main(["records", "audit", "--db", str(bad), *cp]) == 1
    out = capsys.readouterr().out
    assert f"TAMPERED: record 2 disagrees with {world['checkpoint']}: its hash differs" in out
    assert "first record that disagrees with an anchor: 2" in out
    assert main(["records", "audit", "--db", str(bad), "--reports", str(world["reports"])]) == 1
    out = capsys.readouterr().out
    assert "the stored result differs from the signed one (verdict stored 'nonconforming'" in out
    assert "first record that disagrees with an anchor: 2" in out


def test_truncated_store_fails_against_checkpoint(world, tmp_path):
    cut = tmp_path / "cut.sqlite"
    cut.write_bytes(world["db"].read_bytes())
    conn = sqlite3.connect(cut, isolation_level=None)
    conn.execute("DROP TRIGGER records_no_delete")
    conn.execute("DELETE FROM records WHERE id = 3")
    conn.close()
    from speccheck.report.checkpoint import read_checkpoint

    st = read_checkpoint(world["checkpoint"]).statement
    res = AuditResult(path=str(cut), records=2, head_hash="")
    with RecordsStore.open(cut, create=False) as store:
        check_anchors(
            store.list(),
            [Anchor("cp", st["records"], st["head_hash"], tuple(st["record_hashes"]))],
            res,
        )
    assert "records 3–3 were removed" in res.findings[0].message


def test_forged_checkpoint_is_not_an_anchor(world, tmp_path, capsys):
    """A checkpoint signed by another key, with --trust: refused as an anchor, exit 1."""
    other = new_key(tmp_path / "other.p12", name="Someone Else", passphrase=PASS)
    pw = tmp_path / "pw"
    pw.write_bytes(PASS + b"\n")
    forged = tmp_path / "forged.pdf"
    sign = ["--sign", str(other.p12_path), "--passphrase-file", str(pw)]
    assert (
        main(["records", "checkpoint", "--db", str(world["db"]), *sign, "--out", str(forged)]) == 0
    )
    args = ["records", "audit", "--db", str(world["db"]), "--checkpoint", str(forged)]
    assert main([*args, "--trust", str(world["key"].pem_path)]) == 1
    assert "its signer matches no --trust certificate" in capsys.readouterr().out


def test_checkpoint_never_overwrites_the_store(world, capsys):
    pw = world["d"] / "pw"
    sign = ["--sign", str(world["key"].p12_path), "--passphrase-file", str(pw)]
    status = main(
        ["records", "checkpoint", "--db", str(world["db"]), *sign, "--out", str(world["db"])]
    )
    assert status == 2
    assert capsys.readouterr().err.startswith("speccheck: error: ")
