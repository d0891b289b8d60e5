"""``speccheck key new``: exit statuses, exact messages, and the key read back."""

from __future__ import annotations

import pytest

from speccheck.report.signing import PASSPHRASE_ENV, signer_identity


@pytest.fixture(autouse=True)
def no_env_passphrase(monkeypatch):
    monkeypatch.delenv(PASSPHRASE_ENV, raising=False)


def test_key_new_with_passphrase_file(tmp_path, run_cli):
    pw = tmp_path / "pw.txt"
    pw.write_text("ardent-grinding-key\n", encoding="utf-8")
    out = tmp_path / "ardent.p12"
    status, stdout, stderr = run_cli(
        "key",
        "new",
        "--name",
        "Quality Desk",
        "--org",
        "Ardent Precision Grinding",
        "--out",
        out,
        "--passphrase-file",
        pw,
        "--days",
        "365",
    )
    assert (status, stderr) == (0, "")
    assert f"certificate: {tmp_path / 'ardent.pem'}" in stdout
    ident = signer_identity(out, b"ardent-grinding-key")
    assert (ident.name, ident.organisation) == ("Quality Desk", "Ardent Precision Grinding")
    assert f"SHA-256:     {ident.sha256_fingerprint}" in stdout


def test_key_new_with_env_passphrase(tmp_path, run_cli, monkeypatch):
    monkeypatch.setenv(PASSPHRASE_ENV, "holloway-env-pass")
    out = tmp_path / "h.p12"
    status, _, _ = run_cli("key", "new", "--name", "Bore Lab", "--out", out)
    assert status == 0
    assert signer_identity(out, b"holloway-env-pass").name == "Bore Lab"


def test_key_new_without_passphrase_is_error(tmp_path, run_cli):
    status, stdout, stderr = run_cli("key", "new", "--name", "X", "--out", tmp_path / "x.p12")
    assert status == 2 and stdout == ""
    assert stderr == (
        "speccheck: error: --passphrase-file: no passphrase: give --passphrase-file FILE or set "
        "SPECCHECK_PASSPHRASE\n"
    )
    assert list(tmp_path.iterdir()) == []


def test_no_passphrase_option_on_the_command_line(tmp_path, run_cli):
    status, _, stderr = run_cli(
        "key", "new", "--name", "X", "--out", tmp_path / "x.p12", "--passphrase", "visible-in-ps"
    )
    assert status == 2 and "No such option '--passphrase'" in stderr and stderr.count("\n") == 1
    assert list(tmp_path.iterdir()) == []


def test_key_new_refuses_to_overwrite(tmp_path, run_cli, monkeypatch):
    monkeypatch.setenv(PASSPHRASE_ENV, "kestrel-pass-123")
    out = tmp_path / "k.p12"
    assert run_cli("key", "new", "--name", "A", "--out", out)[0] == 0
    before = out.read_bytes()
    status, _, stderr = run_cli("key", "new", "--name", "B", "--out", out)
    assert status == 2
    assert (
        stderr == f"speccheck: error: {out}: already exists; a signing key is never overwritten\n"
    )
    assert out.read_bytes() == before


def test_key_help_lists_options(run_cli):
    status, stdout, _ = run_cli("key", "new", "--help")
    assert status == 0 and "--passphrase-file" in stdout and "--days" in stdout
