"""The error contract on every output and every kind of damaged input file.

Every failure is exit 2 with one line ``speccheck: error: FILE[:PLACE]: message`` naming the
file, no traceback and no "internal error" (DEVELOPERS.md, "Errors from input"). A full disk is
a real full file system: a 256 KiB tmpfs mounted for the test and filled until write(2) returns
ENOSPC (tmpfs(5), "size"; mount(8)), so the kernel, not a stub, makes every write fail.
Mounting needs root (CI runs as root); without it these tests fail rather than pass unproven.
SQLite result codes are from sqlite.org/rescode.html.
"""

from __future__ import annotations

import contextlib
import io
import os
import shutil
import sqlite3
import subprocess
from pathlib import Path

import numpy as np
import pytest
from _contract import assert_refused, fingerprint

from speccheck.profile import Profile
from speccheck.readers import write_csv
from speccheck.records.store import RecordsStore
from speccheck.report import new_key, write_report
from speccheck.report.pdf import EmbeddedFile, embed_files, read_embedded_files, render_pdf
from speccheck.report.writer import MANIFEST_NAME, RESULT_NAME

PASS = "kestrel-contract-pass"
SPEC = """\
spec_version: 1
part: {number: KFP-2041, revision: C, surface: seal seat}
measurement: {ls: none}
requirements:
  - "Ra 0.8"
"""


@pytest.fixture(scope="module")
def world(tmp_path_factory):
    """Spec, a sine profile (Ra = 2A/π, closed form), a key, a signed record and a store."""
    from speccheck.evaluation.evaluator import evaluate_files
    from speccheck.spec.loader import load_spec

    d = tmp_path_factory.mktemp("contract")
    spec = d / "spec.yaml"
    spec.write_text(SPEC, encoding="utf-8")
    prof = d / "p.csv"
    x_um = np.arange(11201) * 0.5
    write_csv(prof, Profile(0.5 * np.sin(2 * np.pi * x_um / 50.0), 0.5))
    pw = d / "pw.txt"
    pw.write_text(PASS + "\n", encoding="utf-8")
    key = new_key(d / "k.p12", name="Dana Whitfield", passphrase=PASS.encode())
    result = evaluate_files(spec, [prof])
    signed = write_report(
        result,
        out_path=d / "signed.pdf",
        spec=load_spec(spec),
        profile_paths=[prof],
        sign_p12=key.p12_path,
        passphrase=PASS.encode(),
    ).path
    db = d / "db.sqlite"
    with RecordsStore.open(db) as store:
        store.append_check(result)
    return dict(d=d, spec=spec, prof=prof, pw=pw, key=key, signed=signed, db=db)


@contextlib.contextmanager
def small_fs(where: Path, *, size: str = "256k"):
    """A tmpfs of ``size`` mounted at ``where`` for the block; fails (never skips) without root."""
    where.mkdir()
    proc = subprocess.run(
        ["mount", "-t", "tmpfs", "-o", f"size={size}", "tmpfs", str(where)],
        capture_output=True,
        text=True,
    )
    if proc.returncode != 0:
        pytest.fail(f"cannot mount a small tmpfs (needs root, as CI runs): {proc.stderr.strip()}")
    try:
        yield where
    finally:
        subprocess.run(["umount", "-l", str(where)], check=True)


def fill(fs: Path) -> None:
    """Write zeros until the kernel answers ENOSPC."""
    fd = os.open(fs / "filler", os.O_WRONLY | os.O_CREAT)
    try:
        while True:
            os.write(fd, b"\0" * 4096)
    except OSError as exc:
        assert exc.errno == 28, exc
    finally:
        os.close(fd)
    assert shutil.disk_usage(fs).free == 0


def outputs(w: dict, target: Path) -> dict[str, list]:
    """One command per kind of output, each writing ``target``'s folder."""
    base = ["check", w["spec"], w["prof"]]
    return {
        "json": [*base, "--json", target / "r.json"],
        "report": [*base, "--report", target / "r.pdf"],
        "signed report": [
            *base, "--report", target / "s.pdf", "--sign", w["key"].p12_path,
            "--passphrase-file", w["pw"],
        ],
        "new store": [*base, "--record", "--db", target / "new.sqlite"],
        "export csv": ["records", "export", "--db", w["db"], "--csv", target / "x.csv"],
        "export json": ["records", "export", "--db", w["db"], "--json", target / "x.json"],
        "key": ["key", "new", "--name", "Dana Whitfield", "--out", target / "k.p12",
                "--passphrase-file", w["pw"]],
    }  # fmt: skip


OUTPUT_KINDS = ["json", "report", "signed report", "new store", "export csv", "export json", "key"]


@pytest.mark.parametrize("kind", OUTPUT_KINDS)
def test_full_disk_says_no_space_left_and_names_the_output(world, run_cli, tmp_path, kind):
    with small_fs(tmp_path / "fs") as fs:
        fill(fs)
        args = outputs(world, fs)[kind]
        before = fingerprint([world["spec"], world["prof"], world["db"]])
        status, _, err = run_cli(*args)
        target = next(a for a in reversed(args) if isinstance(a, Path) and a.parent == fs)
        line = assert_refused(status, err, [target])
        assert "no space left" in line
        assert sorted(p.name for p in fs.iterdir()) == ["filler"]  # nothing half-written
        assert fingerprint([world["spec"], world["prof"], world["db"]]) == before


def test_full_disk_append_to_a_healthy_store_keeps_it(world, run_cli, tmp_path):
    """Appending on a full disk is "no space left", never "not a records store"; the store
    audits intact once space is freed."""
    with small_fs(tmp_path / "fs") as fs:
        store = fs / "db.sqlite"
        status, _, err = run_cli("check", world["spec"], world["prof"], "--record", "--db", store)
        assert status == 0, err
        fill(fs)
        status, _, err = run_cli("check", world["spec"], world["prof"], "--record", "--db", store)
        line = assert_refused(status, err, [store])
        assert "no space left" in line and "not a speccheck records store" not in line
        (fs / "filler").unlink()
        status, out, err = run_cli("records", "audit", "--db", store)
        assert status == 0, (out, err)
        with RecordsStore.open(store, create=False) as s:
            assert len(s.list()) == 1


@pytest.mark.parametrize("kind", OUTPUT_KINDS)
def test_unwritable_folder_is_named(world, run_cli, tmp_path, kind):
    """A read-only file system as root (permissions do not bind root), a folder without write
    permission otherwise."""
    if os.geteuid() == 0:
        ctx = small_fs(tmp_path / "fs")
        fs = ctx.__enter__()
        subprocess.run(["mount", "-o", "remount,ro", str(fs)], check=True)
        reason = "read-only"
    else:
        ctx = contextlib.nullcontext()
        fs = tmp_path / "fs"
        fs.mkdir(mode=0o555)
        reason = "permission denied"
    try:
        args = outputs(world, fs)[kind]
        status, _, err = run_cli(*args)
        target = next(a for a in reversed(args) if isinstance(a, Path) and a.parent == fs)
        line = assert_refused(status, err, [target])
        assert reason in line, line
        assert list(fs.iterdir()) == []
    finally:
        ctx.__exit__(None, None, None)


@pytest.mark.parametrize("kind", ["json", "report", "new store", "export csv", "key"])
def test_folder_given_as_an_output_is_named(world, run_cli, tmp_path, kind):
    args = outputs(world, tmp_path)[kind]
    folder = tmp_path / "out.d"
    folder.mkdir()
    target = next(a for a in reversed(args) if isinstance(a, Path) and a.parent == tmp_path)
    args = [folder if a == target else a for a in args]
    status, _, err = run_cli(*args)
    assert_refused(status, err, [folder])


# -- keys and certificates -------------------------------------------------------------


def test_wrong_key_files_are_named(world, run_cli, tmp_path):
    garbage = tmp_path / "garbage.p12"
    garbage.write_bytes(bytes(range(256)) * 3)
    wrong = tmp_path / "wrong.txt"
    wrong.write_text("not-the-passphrase\n", encoding="utf-8")
    base = ["check", world["spec"], world["prof"], "--report", tmp_path / "r.pdf"]
    for key, pw in (
        (garbage, world["pw"]),  # not PKCS#12 at all
        (world["key"].p12_path, wrong),  # wrong passphrase
        (world["key"].pem_path, world["pw"]),  # a certificate where the key belongs
        (world["spec"], world["pw"]),  # a text file
    ):
        status, _, err = run_cli(*base, "--sign", key, "--passphrase-file", pw)
        assert "cannot open the key" in assert_refused(status, err, [key])
    assert not (tmp_path / "r.pdf").exists()


def test_key_or_garbage_given_as_trust_certificate_is_named(world, run_cli, tmp_path):
    garbage = tmp_path / "garbage.pem"
    garbage.write_bytes(b"-----BEGIN CERTIFICATE-----\nAAAA\n-----END CERTIFICATE-----\n")
    for cert in (world["key"].p12_path, garbage, world["spec"]):
        status, _, err = run_cli("verify", world["signed"], "--trust", cert)
        assert "cannot read the certificate" in assert_refused(status, err, [cert])


# -- malformed records -----------------------------------------------------------------


def _record_with(w: dict, path: Path, changes: dict[str, bytes | None]) -> Path:
    """The record's attachments with ``changes`` (None removes one), in a fresh PDF."""
    files = read_embedded_files(w["signed"].read_bytes())
    files.update(changes)
    kept = [EmbeddedFile(k, v) for k, v in files.items() if v is not None]
    path.write_bytes(embed_files(render_pdf("<p>KFP-2041 record</p>"), kept))
    return path


@pytest.mark.parametrize(
    "name, data, words",
    [
        (RESULT_NAME, b"[1, 2]", "a JSON object is expected, not list"),
        (RESULT_NAME, b'"conforming"', "a JSON object is expected, not str"),
        (RESULT_NAME, b"\xff\xfe{", "not valid"),
        (MANIFEST_NAME, b"null", "a JSON object is expected, not NoneType"),
        (MANIFEST_NAME, b'{"kind": "something else"}', "unknown manifest kind"),
    ],
)
def test_attachment_that_is_not_an_object_is_named(world, run_cli, tmp_path, name, data, words):
    bad = _record_with(world, tmp_path / "bad.pdf", {name: data})
    status, _, err = run_cli("verify", bad)
    line = assert_refused(status, err, [bad, f"attachment {name}"])
    assert words in line


def test_pdf_without_attachments_and_truncated_pdfs(world, run_cli, tmp_path):
    plain = tmp_path / "plain.pdf"
    plain.write_bytes(render_pdf("<p>KFP-2041 drawing notes</p>"))
    status, _, err = run_cli("verify", plain)
    assert "not a speccheck conformance record" in assert_refused(status, err, [plain])
    data = world["signed"].read_bytes()
    for cut in (len(data) // 2, len(data) // 10, 9):
        short = tmp_path / f"short{cut}.pdf"
        short.write_bytes(data[:cut])
        status, out, err = run_cli("verify", short)
        assert_refused(status, err, [short])  # one line: pypdf's repair notes stay quiet


def test_unknown_attachment_and_a_second_signature_fail_verification(world, run_cli, tmp_path):
    """Not input errors but records that are not as signed: exit 1 with the reason."""
    extra = _record_with(world, tmp_path / "extra.pdf", {"notes.exe": b"MZ"})
    status, out, err = run_cli("verify", extra)
    assert (status, err) == (1, "") and "NOT VERIFIED" in out

    from pyhanko.pdf_utils.incremental_writer import IncrementalPdfFileWriter
    from pyhanko.sign import signers

    signer = signers.SimpleSigner.load_pkcs12(str(world["key"].p12_path), passphrase=PASS.encode())
    writer = IncrementalPdfFileWriter(io.BytesIO(world["signed"].read_bytes()))
    twice = signers.sign_pdf(writer, signers.PdfSignatureMetadata(field_name="Second"), signer)
    two = tmp_path / "two.pdf"
    two.write_bytes(twice.getvalue())
    status, out, err = run_cli("verify", two)
    assert (status, err) == (1, "") and "NOT VERIFIED" in out


# -- corrupt stores --------------------------------------------------------------------


@pytest.mark.parametrize("command", ["audit", "list", "show", "export"])
def test_garbage_and_truncated_stores_are_named(world, run_cli, tmp_path, command):
    garbage = tmp_path / "garbage.sqlite"
    garbage.write_bytes(bytes(range(256)) * 40)
    truncated = tmp_path / "truncated.sqlite"
    truncated.write_bytes(world["db"].read_bytes()[:1000])
    extra = {"show": ["1"], "export": ["--json", tmp_path / "out.json"]}.get(command, [])
    for store in (garbage, truncated):
        before = fingerprint([store])
        status, _, err = run_cli("records", command, *extra, "--db", store)
        assert "not a speccheck records store" in assert_refused(status, err, [store])
        assert fingerprint([store]) == before
    assert not (tmp_path / "out.json").exists()


def test_row_with_corrupt_json_is_named_by_audit_and_show(world, run_cli, tmp_path):
    store = tmp_path / "c.sqlite"
    shutil.copy(world["db"], store)
    con = sqlite3.connect(store)
    for (name,) in con.execute("SELECT name FROM sqlite_master WHERE type='trigger'").fetchall():
        con.execute(f"DROP TRIGGER {name}")
    con.execute("UPDATE records SET result_json = '{not json' WHERE id = 1")
    con.commit()
    con.close()
    status, out, err = run_cli("records", "audit", "--db", store)
    assert status == 1 and err == "" and "record 1" in out, out
    status, _, err = run_cli("records", "show", "1", "--db", store)
    assert "not valid JSON" in assert_refused(status, err, [f"{store}:record 1"])
