"""Signatures whose time means something: validity at signing, times in verify, integrity
separate from trust, unproven identity, more than one signature.

A signature proves the key holder only within the certificate's validity period, notBefore to
notAfter (RFC 5280 4.1.2.5); the signing time in a PAdES signature is the signer's claim unless
an RFC 3161 token vouches for it (RFC 3161 2.4.2; ETSI EN 319 142-1 baseline T). Certificates
with past or future validity are made with cryptography's X.509 builder; no clock is patched.
"""

from __future__ import annotations

import datetime as dt
import math
import textwrap
from io import BytesIO
from pathlib import Path

import numpy as np
import pytest

from speccheck.cli.main import main
from speccheck.errors import ReportError
from speccheck.evaluation.evaluator import evaluate_files
from speccheck.profile import Profile
from speccheck.readers.delimited import write_csv
from speccheck.report import new_key, sign_pdf, verify_report, write_report
from speccheck.spec.loader import load_spec

PASS = b"kestrel-time-pass"
DX_UM = 0.5


def make_p12(path: Path, *, name: str, not_before: dt.datetime, not_after: dt.datetime) -> Path:
    """A self-signed key whose certificate is valid from ``not_before`` to ``not_after``."""
    from cryptography import x509
    from cryptography.hazmat.primitives import hashes, serialization
    from cryptography.hazmat.primitives.asymmetric import ec
    from cryptography.hazmat.primitives.serialization import pkcs12
    from cryptography.x509.oid import NameOID

    key = ec.generate_private_key(ec.SECP256R1())
    subject = x509.Name([x509.NameAttribute(NameOID.COMMON_NAME, name)])
    cert = (
        x509.CertificateBuilder()
        .subject_name(subject)
        .issuer_name(subject)
        .public_key(key.public_key())
        .serial_number(x509.random_serial_number())
        .not_valid_before(not_before)
        .not_valid_after(not_after)
        .add_extension(
            x509.KeyUsage(True, True, False, False, False, False, False, False, False), True
        )
        .sign(key, hashes.SHA256())
    )
    path.write_bytes(
        pkcs12.serialize_key_and_certificates(
            b"k", key, cert, None, serialization.BestAvailableEncryption(PASS)
        )
    )
    path.with_suffix(".pem").write_bytes(cert.public_bytes(serialization.Encoding.PEM))
    return path


@pytest.fixture(scope="module")
def world(tmp_path_factory):
    d = tmp_path_factory.mktemp("sigtime")
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
    x_um = np.arange(12000) * DX_UM
    profiles = []
    for i, ra in enumerate((0.40, 0.45, 0.50), 1):  # Ra of a sine = 2A/pi ([calc])
        z = ra * math.pi / 2 * np.sin(2 * np.pi * x_um / 50.0)
        write_csv(d / f"m{i}.csv", Profile(z, DX_UM))
        profiles.append(d / f"m{i}.csv")
    result = evaluate_files(spec, profiles)
    loaded = load_spec(spec)
    unsigned = write_report(
        result, out_path=d / "unsigned.pdf", spec=loaded, profile_paths=profiles
    )
    key = new_key(d / "qa.p12", name="Dana Whitfield", passphrase=PASS, days=2000)
    now = dt.datetime.now(dt.UTC)
    expired = make_p12(
        d / "expired.p12",
        name="Expired Inspector",
        not_before=now - dt.timedelta(days=365),
        not_after=now - dt.timedelta(days=1),
    )
    return dict(d=d, spec=spec, profiles=profiles, unsigned=unsigned.path, key=key, expired=expired)


def _check_args(w, out: Path, p12: Path, pw: Path) -> list[str]:
    args = ["check", str(w["spec"]), *map(str, w["profiles"]), "--report", str(out)]
    return args + ["--sign", str(p12), "--passphrase-file", str(pw)]


def test_sign_refuses_certificate_valid_until_yesterday(world, tmp_path, capsys):
    pw = tmp_path / "pw"
    pw.write_bytes(PASS + b"\n")
    out = tmp_path / "r.pdf"
    assert main(_check_args(world, out, world["expired"], pw)) == 2
    err = capsys.readouterr().err
    assert err.startswith(
        f"speccheck: error: {world['expired']}: the certificate has expired at the signing time"
    )
    assert err.count("\n") == 1 and not out.exists()


def test_sign_refuses_certificate_not_yet_valid(world, tmp_path):
    now = dt.datetime.now(dt.UTC)
    early = make_p12(
        tmp_path / "early.p12",
        name="Early Inspector",
        not_before=now + dt.timedelta(days=1),
        not_after=now + dt.timedelta(days=30),
    )
    with pytest.raises(ReportError, match="the certificate is not yet valid at the signing time"):
        sign_pdf(world["unsigned"].read_bytes(), p12_path=early, passphrase=PASS)


def _sign_with_pyhanko(pdf: bytes, p12: Path) -> bytes:
    """Sign with pyHanko's own signer, which does not check the validity period itself."""
    from pyhanko.sign import signers

    signer = signers.SimpleSigner.load_pkcs12(str(p12), passphrase=PASS)
    meta = signers.PdfSignatureMetadata(field_name="Other", md_algorithm="sha256")
    from pyhanko.pdf_utils.incremental_writer import IncrementalPdfFileWriter

    w = IncrementalPdfFileWriter(BytesIO(pdf), strict=False)
    return signers.sign_pdf(w, meta, signer=signer).getvalue()


def test_verify_flags_signature_made_after_the_certificate_expired(world, tmp_path, capsys):
    bad = tmp_path / "expired.pdf"
    bad.write_bytes(_sign_with_pyhanko(world["unsigned"].read_bytes(), world["expired"]))
    r = verify_report(bad)
    s = r.signature
    assert s.intact and s.whole_file and s.time_in_validity is False and not r.ok
    assert "the signing time lies outside the certificate's validity period" in r.problems
    assert main(["verify", str(bad)]) == 1
    out = capsys.readouterr().out
    assert "the signing time lies OUTSIDE the certificate's validity" in out
    assert f"valid:         {s.valid_from} to {s.valid_until}" in out


def test_verify_flags_signing_time_in_the_future(world, tmp_path, capsys):
    """2.5 years ahead, inside a 2000-day certificate: the window holds, the clock does not."""
    later = dt.datetime.now(dt.UTC).replace(microsecond=0) + dt.timedelta(days=913)
    pdf = sign_pdf(
        world["unsigned"].read_bytes(),
        p12_path=world["key"].p12_path,
        passphrase=PASS,
        signing_time=later,
    )
    bad = tmp_path / "future.pdf"
    bad.write_bytes(pdf)
    r = verify_report(bad, trust=[world["key"].pem_path])
    s = r.signature
    assert s.intact and s.time_in_validity is True and s.time_in_future is True and not r.ok
    assert s.signing_time == later.strftime("%Y-%m-%d %H:%M:%S UTC")
    assert s.time_source == "signer's clock"
    assert main(["verify", str(bad)]) == 1
    out = capsys.readouterr().out
    assert "it is LATER than now" in out and "NOT VERIFIED" in out


def test_trust_is_judged_at_the_signing_time(world, tmp_path):
    """A certificate that has expired since: a record signed while it was valid still verifies
    (RFC 5280 4.1.2.5: validity is a property of the time of use)."""
    now = dt.datetime.now(dt.UTC).replace(microsecond=0)
    old = make_p12(
        tmp_path / "old.p12",
        name="Former Inspector",
        not_before=now - dt.timedelta(days=400),
        not_after=now - dt.timedelta(days=30),
    )
    pdf = sign_pdf(
        world["unsigned"].read_bytes(),
        p12_path=old,
        passphrase=PASS,
        signing_time=now - dt.timedelta(days=200),
    )
    rec = tmp_path / "old.pdf"
    rec.write_bytes(pdf)
    r = verify_report(rec, trust=[old.with_suffix(".pem")])
    assert r.signature.time_in_validity is True and r.signature.trusted is True and r.ok


def _signed(world, tmp_path) -> Path:
    p = tmp_path / "signed.pdf"
    p.write_bytes(
        sign_pdf(world["unsigned"].read_bytes(), p12_path=world["key"].p12_path, passphrase=PASS)
    )
    return p


def test_changed_bytes_are_not_reported_as_untrusted(world, tmp_path, capsys):
    """One bit of the binary comment on the file's second line: inside /ByteRange, the PDF still
    parses, the signer is the trusted key."""
    data = _signed(world, tmp_path).read_bytes()
    at = data.index(b"\n%") + 2
    b = bytearray(data)
    b[at] ^= 0x01
    bad = tmp_path / "flipped.pdf"
    bad.write_bytes(bytes(b))
    r = verify_report(bad, trust=[world["key"].pem_path])
    assert not r.ok and not r.signature.intact and r.signature.trusted is None
    assert r.problems[0].startswith("the signed bytes were changed after signing")
    assert not any("not trusted" in p for p in r.problems)
    assert main(["verify", str(bad), "--trust", str(world["key"].pem_path)]) == 1
    assert "NOT trusted" not in capsys.readouterr().out


def test_without_trust_identity_unproven_and_fingerprint_shown(world, tmp_path, capsys):
    rec = _signed(world, tmp_path)
    assert main(["verify", str(rec)]) == 0
    out = capsys.readouterr().out
    assert f"certificate:   SHA-256 {world['key'].sha256_fingerprint}" in out
    assert "identity UNPROVEN (no --trust given)" in out
    assert "any self-made key can carry any name" in out


def test_second_signature_is_reported_not_a_traceback(world, tmp_path, capsys):
    rec = _signed(world, tmp_path)
    twice = tmp_path / "twice.pdf"
    twice.write_bytes(
        sign_pdf(
            rec.read_bytes(), p12_path=world["key"].p12_path, passphrase=PASS, field_name="Second"
        )
    )
    r = verify_report(twice)
    assert r.signature.signatures == 2 and not r.ok
    assert any("carries 2 signatures" in p for p in r.problems)
    assert main(["verify", str(twice)]) == 1
    out = capsys.readouterr().out
    assert "signatures:    2 in the file" in out and "NOT VERIFIED" in out
