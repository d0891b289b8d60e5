"""Keys, passphrases and PDF signatures (PAdES baseline B, validated with pyHanko)."""

from __future__ import annotations

import logging
from io import BytesIO

import pytest

from speccheck.errors import ReportError
from speccheck.report.pdf import render_pdf
from speccheck.report.signing import (
    PASSPHRASE_ENV,
    new_key,
    read_passphrase,
    sign_pdf,
    signer_identity,
)

PASS = b"holloway-bore-pass"


@pytest.fixture(scope="module")
def key(tmp_path_factory):
    d = tmp_path_factory.mktemp("keys")
    return new_key(
        d / "qa.p12",
        name="Morgan Ashby",
        organisation="Kestrel Fluid Power",
        passphrase=PASS,
        days=30,
    )


def _validate(pdf: bytes, roots=()):
    from pyhanko.pdf_utils.reader import PdfFileReader
    from pyhanko.sign.validation import validate_pdf_signature
    from pyhanko_certvalidator import ValidationContext

    logging.getLogger("pyhanko").setLevel(logging.CRITICAL)
    logging.getLogger("pyhanko_certvalidator").setLevel(logging.CRITICAL)
    sig = PdfFileReader(BytesIO(pdf)).embedded_signatures[0]
    return sig, validate_pdf_signature(
        sig, ValidationContext(trust_roots=list(roots), allow_fetching=False)
    )


def test_new_key_certificate(key):
    from cryptography import x509
    from cryptography.x509.oid import ExtensionOID

    cert = x509.load_pem_x509_certificate(key.pem_path.read_bytes())
    assert cert.subject.rfc4514_string() == "O=Kestrel Fluid Power,CN=Morgan Ashby"
    assert cert.issuer == cert.subject  # self-signed
    ku = cert.extensions.get_extension_for_oid(ExtensionOID.KEY_USAGE).value
    assert ku.digital_signature and ku.content_commitment  # RFC 5280 4.2.1.3
    span = cert.not_valid_after_utc - cert.not_valid_before_utc
    assert 30 * 86400 <= span.total_seconds() <= 30 * 86400 + 600  # 30 days (+5 min backdate)
    assert key.p12_path.stat().st_mode & 0o077 == 0  # private to its owner


def test_p12_needs_the_passphrase(key):
    from cryptography.hazmat.primitives.serialization import pkcs12

    with pytest.raises(ValueError):
        pkcs12.load_key_and_certificates(key.p12_path.read_bytes(), None)
    ident = signer_identity(key.p12_path, PASS)
    assert ident.name == "Morgan Ashby" and ident.self_signed
    assert ident.sha256_fingerprint == key.sha256_fingerprint


def test_sign_pdf_is_pades_and_validates(key):
    from pyhanko.keys import load_cert_from_pemder
    from pyhanko.sign.validation.status import SignatureCoverageLevel

    pdf = render_pdf("<p>KFP-3310 cylinder block, plateau-honed bore</p>")
    signed = sign_pdf(pdf, p12_path=key.p12_path, passphrase=PASS, reason="test")
    assert signed.startswith(pdf)  # an incremental update: the original bytes are kept
    sig, status = _validate(signed, [load_cert_from_pemder(str(key.pem_path))])
    assert status.intact and status.valid and status.trusted
    assert status.coverage == SignatureCoverageLevel.ENTIRE_FILE
    # PAdES: /SubFilter /ETSI.CAdES.detached (ETSI EN 319 142-1 5.3)
    assert sig.sig_object["/SubFilter"] == "/ETSI.CAdES.detached"
    assert status.md_algorithm == "sha256"
    _, untrusted = _validate(signed)
    assert untrusted.intact and not untrusted.trusted


def test_wrong_or_missing_passphrase_is_one_line(key):
    pdf = render_pdf("<p>x</p>")
    with pytest.raises(ReportError, match=r"cannot open the key: wrong passphrase") as e:
        sign_pdf(pdf, p12_path=key.p12_path, passphrase=b"not-the-passphrase")
    assert e.value.one_line() == (
        f"{key.p12_path}: cannot open the key: wrong passphrase or not a PKCS#12 file"
    )
    with pytest.raises(ReportError, match="no passphrase for the key"):
        signer_identity(key.p12_path, None)


def test_read_passphrase_file_env_none(tmp_path, monkeypatch):
    monkeypatch.delenv(PASSPHRASE_ENV, raising=False)
    assert read_passphrase(None) is None
    f = tmp_path / "pw"
    f.write_bytes(b"s3cret phrase\r\nsecond line ignored\n")
    assert read_passphrase(f) == b"s3cret phrase"
    monkeypatch.setenv(PASSPHRASE_ENV, "from-env")
    assert read_passphrase(None) == b"from-env"
    assert read_passphrase(f) == b"s3cret phrase"  # the file wins over the environment
    empty = tmp_path / "empty"
    empty.write_bytes(b"\n")
    with pytest.raises(ReportError, match="the passphrase file is empty"):
        read_passphrase(empty)
    with pytest.raises(ReportError, match="file not found"):
        read_passphrase(tmp_path / "missing")


def test_new_key_refuses_short_passphrase_and_overwrite(key, tmp_path):
    with pytest.raises(ReportError, match=r"passphrase is too short \(5 bytes; at least 8\)"):
        new_key(tmp_path / "k.p12", name="A", passphrase=b"short")
    with pytest.raises(ReportError, match="already exists; a signing key is never overwritten"):
        new_key(key.p12_path, name="A", passphrase=PASS)
    assert not (tmp_path / "k.p12").exists() and not (tmp_path / "k.pem").exists()
