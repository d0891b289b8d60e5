"""Outputs never overwrite inputs, are written atomically, and a failed run leaves none behind.

The rules are the error contract of DEVELOPERS.md (no output ever overwrites an input; nothing
already written is lost or half-written). File modes follow POSIX: a new file's mode is
0o666 minus the umask (POSIX open(2)/umask(2), from memory); private keys are 0600, as ssh
keeps its private keys (common practice, no source).
"""

from __future__ import annotations

import os
import stat

import numpy as np
import pytest
from _contract import assert_refused, fingerprint

from speccheck.profile import Profile
from speccheck.readers import write_csv
from speccheck.report.signing import PASSPHRASE_ENV

SPEC = """\
spec_version: 1
part: {number: KFP-2041, revision: C, surface: seal seat}
measurement: {ls: none}
requirements:
  - "Ra 0.8"
"""


@pytest.fixture
def inputs(tmp_path):
    """A spec and one sine profile (Ra = 2A/π for a sine of amplitude A, closed form)."""
    spec = tmp_path / "spec.yaml"
    spec.write_text(SPEC, encoding="utf-8")
    x_um = np.arange(11201) * 0.5
    prof = tmp_path / "p.csv"
    write_csv(prof, Profile(0.5 * np.sin(2 * np.pi * x_um / 50.0), 0.5))
    return spec, prof


@pytest.mark.parametrize("option", ["--json", "--report"])
@pytest.mark.parametrize("target", ["profile", "spec"])
def test_output_onto_an_input_is_refused(inputs, run_cli, option, target):
    spec, prof = inputs
    victim = prof if target == "profile" else spec
    before = fingerprint([spec, prof])
    status, _, err = run_cli("check", spec, prof, option, victim)
    line = assert_refused(status, err, [victim])
    assert option in line and "would overwrite the input" in line
    assert fingerprint([spec, prof]) == before


@pytest.mark.parametrize("link", ["symlink", "hardlink"])
def test_output_through_a_link_to_an_input_is_refused(inputs, run_cli, tmp_path, link):
    spec, prof = inputs
    alias = tmp_path / "result.json"
    (os.symlink if link == "symlink" else os.link)(prof, alias)
    before = fingerprint([spec, prof])
    status, _, err = run_cli("check", spec, prof, "--json", alias)
    assert_refused(status, err, [alias, prof])
    assert fingerprint([spec, prof]) == before


def test_two_outputs_on_one_file_are_refused(inputs, run_cli, tmp_path):
    spec, prof = inputs
    out = tmp_path / "out.pdf"
    status, _, err = run_cli("check", spec, prof, "--json", out, "--report", out)
    assert "would overwrite the output --json" in assert_refused(status, err, [out])
    assert not out.exists()


def test_records_store_onto_an_input_is_refused(inputs, run_cli):
    spec, prof = inputs
    before = fingerprint([spec, prof])
    status, _, err = run_cli("check", spec, prof, "--record", "--db", prof)
    assert "records store would overwrite the input" in assert_refused(status, err, [prof])
    assert fingerprint([spec, prof]) == before


def test_export_targets_clash_with_each_other_and_the_store(inputs, run_cli, tmp_path):
    spec, prof = inputs
    db = tmp_path / "r.sqlite"
    assert run_cli("check", spec, prof, "--record", "--db", db)[0] == 0
    before = fingerprint([db])
    out = tmp_path / "export.txt"
    status, _, err = run_cli("records", "export", "--db", db, "--csv", out, "--json", out)
    assert_refused(status, err, [out])
    status, _, err = run_cli("records", "export", "--db", db, "--csv", db)
    assert_refused(status, err, [db])
    assert fingerprint([db]) == before


def test_failed_run_leaves_no_output_and_keeps_the_old_one(inputs, run_cli, tmp_path):
    spec, prof = inputs
    out = tmp_path / "result.json"
    out.write_text("previous result\n", encoding="utf-8")
    not_a_store = tmp_path / "notes.sqlite"
    not_a_store.write_bytes(b"these are not records\n" * 10)
    fresh = tmp_path / "fresh.json"
    for target in (out, fresh):
        status, _, err = run_cli(
            "check", spec, prof, "--json", target, "--record", "--db", not_a_store
        )
        assert_refused(status, err, [not_a_store])
    assert out.read_text(encoding="utf-8") == "previous result\n"
    assert not fresh.exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted(
        ["spec.yaml", "p.csv", "result.json", "notes.sqlite"]
    )


def test_successful_run_commits_every_output(inputs, run_cli, tmp_path):
    spec, prof = inputs
    out = tmp_path / "result.json"
    out.write_text("previous result\n", encoding="utf-8")
    assert run_cli("check", spec, prof, "--json", out)[0] == 0
    assert out.read_text(encoding="utf-8").startswith("{")
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".part")]


def test_folder_and_special_file_as_output_are_refused(inputs, run_cli, tmp_path):
    spec, prof = inputs
    folder = tmp_path / "results"
    folder.mkdir()
    status, _, err = run_cli("check", spec, prof, "--json", folder)
    assert "is a folder" in assert_refused(status, err, [folder])
    fifo = tmp_path / "pipe.json"
    os.mkfifo(fifo)
    status, _, err = run_cli("check", spec, prof, "--json", fifo)
    assert "special file" in assert_refused(status, err, [fifo])
    assert stat.S_ISFIFO(os.stat(fifo).st_mode)
    missing = tmp_path / "no" / "such" / "folder" / "r.json"
    status, _, err = run_cli("check", spec, prof, "--json", missing)
    assert "does not exist" in assert_refused(status, err, [missing])


def test_modes_follow_the_umask_and_keys_are_private(inputs, run_cli, tmp_path, monkeypatch):
    spec, prof = inputs
    monkeypatch.delenv(PASSPHRASE_ENV, raising=False)
    pw = tmp_path / "pw.txt"
    pw.write_text("holloway-bore-key\n", encoding="utf-8")
    old = os.umask(0o027)
    try:
        out = tmp_path / "result.json"
        assert run_cli("check", spec, prof, "--json", out)[0] == 0
        key = tmp_path / "qa.p12"
        assert (
            run_cli("key", "new", "--name", "Q. Desk", "--out", key, "--passphrase-file", pw)[0]
            == 0
        )
    finally:
        os.umask(old)
    assert stat.S_IMODE(os.stat(out).st_mode) == 0o640
    assert stat.S_IMODE(os.stat(tmp_path / "qa.pem").st_mode) == 0o640
    assert stat.S_IMODE(os.stat(key).st_mode) == 0o600


def test_key_certificate_onto_the_passphrase_file_is_refused(tmp_path, run_cli, monkeypatch):
    monkeypatch.delenv(PASSPHRASE_ENV, raising=False)
    pw = tmp_path / "qa.pem"
    pw.write_text("holloway-bore-key\n", encoding="utf-8")
    status, _, err = run_cli(
        "key", "new", "--name", "Q. Desk", "--out", tmp_path / "qa.p12", "--passphrase-file", pw
    )
    assert_refused(status, err, [pw])
    assert pw.read_text(encoding="utf-8") == "holloway-bore-key\n"
    assert not (tmp_path / "qa.p12").exists()
