"""Signing keys, passphrases and PDF signatures (PAdES baseline B with pyHanko).

An organisation without a PKI makes a self-signed key with :func:`new_key`; it keeps the
passphrase-protected PKCS#12 file and hands the PEM certificate to whoever verifies its records.
"""

from __future__ import annotations

import datetime as _dt
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from speccheck._atomic import atomic_write_bytes, read_bounded, written_together
from speccheck.errors import ReportError

__all__ = [
    "PASSPHRASE_ENV",
    "SIGNATURE_FIELD",
    "KeyInfo",
    "SignerIdentity",
    "read_passphrase",
    "new_key",
    "signer_identity",
    "SigningKey",
    "open_key",
    "sign_pdf",
]

PASSPHRASE_ENV = "SPECCHECK_PASSPHRASE"
SIGNATURE_FIELD = "SpeccheckRecordSignature"
MIN_PASSPHRASE_BYTES = 8
# Largest key, certificate or passphrase file read (1 MiB; a PKCS#12 file with a long chain is a
# few kB).
MAX_KEY_BYTES = 1 << 20


@dataclass(frozen=True)
class KeyInfo:
    """A key made by :func:`new_key`."""

    p12_path: Path
    pem_path: Path
    subject: str
    sha256_fingerprint: str  # of the DER certificate, hex, upper case, colon-separated
    not_after: str  # ISO 8601 UTC


@dataclass(frozen=True)
class SignerIdentity:
    """Who a PKCS#12 key says it belongs to (read before signing, for the face of the record)."""

    name: str
    organisation: str | None
    sha256_fingerprint: str
    not_after: str
    self_signed: bool
    not_before: str = ""


def read_passphrase(passphrase_file: Path | None) -> bytes | None:
    """Passphrase from ``passphrase_file`` (first line) or the ``SPECCHECK_PASSPHRASE`` variable.

    Parameters
    ----------
    passphrase_file:
        A file whose first line is the passphrase; the line end is not part of it.

    Returns
    -------
    bytes or None
        The passphrase as UTF-8 bytes; None when neither source gives one.

    Notes
    -----
    A passphrase never comes from a command-line argument: those are visible to other users in
    the process list and end up in shell history.
    """
    if passphrase_file is not None:
        path = Path(passphrase_file)
        data = read_bounded(path, limit=MAX_KEY_BYTES, role="passphrase file", error=ReportError)
        line = data.splitlines()[0] if data.splitlines() else b""
        if not line:
            raise ReportError("the passphrase file is empty", path=str(path), where="line 1")
        return line
    env = os.environ.get(PASSPHRASE_ENV)
    if env:
        return env.encode("utf-8")
    return None


def _fingerprint(cert) -> str:
    from cryptography.hazmat.primitives import hashes

    return cert.fingerprint(hashes.SHA256()).hex(":").upper()


def new_key(
    out_p12: Path,
    *,
    name: str,
    passphrase: bytes,
    organisation: str | None = None,
    days: int = 730,
) -> KeyInfo:
    """Make an RSA-3072 key with a self-signed certificate; write ``out_p12`` and ``<stem>.pem``.

    Parameters
    ----------
    out_p12:
        The PKCS#12 file to write (passphrase-protected); the certificate goes next to it with
        the suffix ``.pem``. Neither may exist already: a signing key is never overwritten.
    name:
        The signer's name (certificate common name).
    passphrase:
        Protects the private key; at least 8 bytes.
    organisation:
        Optional organisation name (certificate O attribute).
    days:
        Validity of the certificate from now.

    Returns
    -------
    KeyInfo

    Notes
    -----
    The certificate allows digital signatures and non-repudiation (RFC 5280 4.2.1.3) and is its
    own issuer; verifiers trust it by being given the PEM file (``speccheck verify --trust``).
    """
    from cryptography import x509
    from cryptography.hazmat.primitives import hashes, serialization
    from cryptography.hazmat.primitives.asymmetric import rsa
    from cryptography.hazmat.primitives.serialization import pkcs12
    from cryptography.x509.oid import NameOID

    out_p12 = Path(out_p12)
    pem_path = out_p12.with_suffix(".pem")
    if not name.strip():
        raise ReportError("the signer's name is empty", where="--name")
    if days < 1:
        raise ReportError(f"validity must be at least 1 day, got {days}", where="--days")
    if len(passphrase) < MIN_PASSPHRASE_BYTES:
        raise ReportError(
            f"the passphrase is too short ({len(passphrase)} bytes; at least "
            f"{MIN_PASSPHRASE_BYTES})",
            where="passphrase",
        )
    for p in (out_p12, pem_path):
        if p.exists():
            raise ReportError("already exists; a signing key is never overwritten", path=str(p))

    key = rsa.generate_private_key(public_exponent=65537, key_size=3072)
    attrs = [x509.NameAttribute(NameOID.COMMON_NAME, name.strip())]
    if organisation and organisation.strip():
        attrs.append(x509.NameAttribute(NameOID.ORGANIZATION_NAME, organisation.strip()))
    subject = x509.Name(attrs)
    now = _dt.datetime.now(_dt.UTC).replace(microsecond=0)
    not_after = now + _dt.timedelta(days=days)
    cert = (
        x509.CertificateBuilder()
        .subject_name(subject)
        .issuer_name(subject)
        .public_key(key.public_key())
        .serial_number(x509.random_serial_number())
        .not_valid_before(now - _dt.timedelta(minutes=5))
        .not_valid_after(not_after)
        .add_extension(x509.BasicConstraints(ca=False, path_length=None), critical=True)
        .add_extension(
            x509.KeyUsage(
                digital_signature=True,
                content_commitment=True,
                key_encipherment=False,
                data_encipherment=False,
                key_agreement=False,
                key_cert_sign=False,
                crl_sign=False,
                encipher_only=False,
                decipher_only=False,
            ),
            critical=True,
        )
        .add_extension(x509.SubjectKeyIdentifier.from_public_key(key.public_key()), critical=False)
        .sign(key, hashes.SHA256())
    )
    p12 = pkcs12.serialize_key_and_certificates(
        name.strip().encode("utf-8"),
        key,
        cert,
        None,
        serialization.BestAvailableEncryption(passphrase),
    )
    pem = cert.public_bytes(serialization.Encoding.PEM)
    with written_together():  # both files or neither; the key readable by its owner only
        atomic_write_bytes(out_p12, p12, role="signing key", private=True)
        atomic_write_bytes(pem_path, pem, role="certificate")
    return KeyInfo(
        p12_path=out_p12,
        pem_path=pem_path,
        subject=subject.rfc4514_string(),
        sha256_fingerprint=_fingerprint(cert),
        not_after=not_after.isoformat().replace("+00:00", "Z"),
    )


def _load_p12(p12_path: Path, passphrase: bytes | None):
    from cryptography.hazmat.primitives.serialization import pkcs12

    p12_path = Path(p12_path)
    data = read_bounded(p12_path, limit=MAX_KEY_BYTES, role="signing key", error=ReportError)
    if passphrase is None:
        raise ReportError(
            f"no passphrase for the key: give --passphrase-file FILE or set {PASSPHRASE_ENV}",
            path=str(p12_path),
        )
    try:
        key, cert, extra = pkcs12.load_key_and_certificates(data, passphrase)
    except (ValueError, TypeError) as exc:
        raise ReportError(
            "cannot open the key: wrong passphrase or not a PKCS#12 file", path=str(p12_path)
        ) from exc
    if key is None or cert is None:
        raise ReportError("the PKCS#12 file holds no key and certificate", path=str(p12_path))
    return key, cert, list(extra or [])


def signer_identity(p12_path: Path, passphrase: bytes | None) -> SignerIdentity:
    """Read the name, organisation and fingerprint of the key's certificate."""
    _, cert, _ = _load_p12(p12_path, passphrase)
    return _identity(cert)


def _identity(cert) -> SignerIdentity:
    from cryptography.x509.oid import NameOID

    def attr(oid) -> str | None:
        vals = cert.subject.get_attributes_for_oid(oid)
        return str(vals[0].value) if vals else None

    return SignerIdentity(
        name=attr(NameOID.COMMON_NAME) or cert.subject.rfc4514_string(),
        organisation=attr(NameOID.ORGANIZATION_NAME),
        sha256_fingerprint=_fingerprint(cert),
        not_after=_iso(cert.not_valid_after_utc),
        self_signed=cert.issuer == cert.subject,
        not_before=_iso(cert.not_valid_before_utc),
    )


def _iso(t: _dt.datetime) -> str:
    return t.astimezone(_dt.UTC).isoformat().replace("+00:00", "Z")


def check_valid_at(cert: Any, when: _dt.datetime, *, path: str | None = None) -> None:
    """Refuse a certificate that is not valid at ``when`` (RFC 5280 4.1.2.5: notBefore..notAfter).

    A signature made outside its certificate's validity period proves nothing about the key
    holder, so the record is not signed at all.
    """
    start, end = cert.not_valid_before_utc, cert.not_valid_after_utc
    stamp = when.astimezone(_dt.UTC).strftime("%Y-%m-%d %H:%M:%S UTC")
    window = f"valid {start:%Y-%m-%d %H:%M:%S} UTC to {end:%Y-%m-%d %H:%M:%S} UTC"
    if when < start:
        raise ReportError(
            f"the certificate is not yet valid at the signing time {stamp} ({window})", path=path
        )
    if when > end:
        raise ReportError(
            f"the certificate has expired at the signing time {stamp} ({window})", path=path
        )


@dataclass(frozen=True)
class SigningKey:
    """A key opened once: its identity for the face of the record and the signer for pyHanko."""

    identity: SignerIdentity
    signer: Any  # pyhanko.sign.signers.SimpleSigner
    certificate: Any = None  # cryptography.x509.Certificate
    path: str | None = None


def open_key(p12_path: Path, passphrase: bytes | None) -> SigningKey:
    """Open a PKCS#12 key for signing (decrypting it once; a wrong passphrase fails here)."""
    from asn1crypto import keys as asn1_keys
    from asn1crypto import x509 as asn1_x509
    from cryptography.hazmat.primitives import serialization
    from pyhanko.sign import signers
    from pyhanko_certvalidator.registry import SimpleCertificateStore

    key, cert, extra = _load_p12(p12_path, passphrase)
    signing_key = asn1_keys.PrivateKeyInfo.load(
        key.private_bytes(
            serialization.Encoding.DER,
            serialization.PrivateFormat.PKCS8,
            serialization.NoEncryption(),
        )
    )
    signing_cert = asn1_x509.Certificate.load(cert.public_bytes(serialization.Encoding.DER))
    others = [asn1_x509.Certificate.load(c.public_bytes(serialization.Encoding.DER)) for c in extra]
    signer = signers.SimpleSigner(
        signing_cert=signing_cert,
        signing_key=signing_key,
        cert_registry=SimpleCertificateStore.from_certs([signing_cert, *others]),
    )
    return SigningKey(identity=_identity(cert), signer=signer, certificate=cert, path=str(p12_path))


def _signature_space(signer: Any) -> int:
    """Room for the CMS signature in the /Contents hex string, counted in hex digits.

    Reserving it up front spares pyHanko a trial signature to measure it (the private key
    would be loaded and used twice). The CMS holds the certificates, the signed attributes
    and one signature value (at most 1024 bytes: RSA-8192); 4096 bytes cover the fixed part
    many times over, and the total gets pyHanko's own 50 % margin.
    """
    certs = [signer.signing_cert, *(signer.cert_registry or ())]
    der_bytes = 4096 + sum(len(c.dump()) for c in certs if c is not None)
    hex_digits = 2 * der_bytes
    return hex_digits + 2 * (hex_digits // 4)


def sign_pdf(
    pdf_bytes: bytes,
    *,
    p12_path: Path | None = None,
    passphrase: bytes | None = None,
    field_name: str = SIGNATURE_FIELD,
    reason: str | None = None,
    location: str | None = None,
    key: SigningKey | None = None,
    signing_time: _dt.datetime | None = None,
    tsa_url: str | None = None,
) -> bytes:
    """Sign a PDF with the key in a PKCS#12 file: PAdES baseline B (ETSI EN 319 142-1), SHA-256.

    Parameters
    ----------
    pdf_bytes:
        The finished document; the signature is added as an incremental update covering it all.
    p12_path, passphrase:
        The key; a wrong or missing passphrase is a :class:`ReportError`.
    field_name:
        Name of the (invisible) signature field.
    reason, location:
        Written into the signature dictionary.
    key:
        A key already opened with :func:`open_key` (then ``p12_path`` is not read).
    signing_time:
        The time the signature states (aware datetime); default now. The record's face prints
        the same time, so the writer passes the one it printed.
    tsa_url:
        A time-stamping authority (RFC 3161, over HTTP): its token on the signature value
        vouches for the time (PAdES baseline T).

    Returns
    -------
    bytes
        The signed PDF.

    Raises
    ------
    ReportError
        The certificate is not valid at the signing time (expired or not yet valid), the key
        cannot be opened, or the time-stamping authority does not answer properly.
    """
    from pyhanko.sign import fields, signers

    if key is None:
        if p12_path is None:
            raise ReportError("no key to sign with")
        key = open_key(Path(p12_path), passphrase)
    when = signing_time or _dt.datetime.now(_dt.UTC).replace(microsecond=0)
    if key.certificate is not None:
        check_valid_at(key.certificate, when, path=key.path)
    meta = signers.PdfSignatureMetadata(
        field_name=field_name,
        md_algorithm="sha256",
        subfilter=fields.SigSeedSubFilter.PADES,
        reason=reason,
        location=location,
    )
    timestamper = None
    if tsa_url is not None:
        from pyhanko.sign.timestamps import HTTPTimeStamper

        timestamper = HTTPTimeStamper(tsa_url, timeout=30)
    try:
        return _run_signing(pdf_bytes, meta, key, when, timestamper)
    except ReportError:
        raise
    except Exception as exc:  # pyHanko raises several types for unreadable input or a TSA
        where = f" (time-stamping authority {tsa_url})" if tsa_url else ""
        msg = " ".join(str(exc).split()) or type(exc).__name__
        raise ReportError(f"cannot sign the document{where}: {msg}") from exc


def _run_signing(pdf_bytes: bytes, meta: Any, key: SigningKey, when: _dt.datetime, tsa: Any):
    """pyHanko's signing steps, with the signing session's time set to ``when``."""
    import asyncio
    from io import BytesIO

    from pyhanko.pdf_utils.incremental_writer import IncrementalPdfFileWriter
    from pyhanko.sign import signers
    from pyhanko.sign.signers.pdf_cms import PdfCMSSignedAttributes

    async def run() -> bytes:
        writer = IncrementalPdfFileWriter(BytesIO(pdf_bytes), strict=False)
        session = signers.PdfSigner(meta, signer=key.signer, timestamper=tsa).init_signing_session(
            writer
        )
        session.system_time = when
        info = await session.perform_presign_validation(writer)
        if tsa is None:
            reserved = _signature_space(key.signer)
        else:  # the token's size depends on the authority's certificates: let pyHanko measure
            reserved = await session.estimate_signature_container_size(info)
        tbs = session.prepare_tbs_document(validation_info=info, bytes_reserved=reserved)
        digest, output = tbs.digest_tbs_document()
        post = await tbs.perform_signature(
            document_digest=digest.document_digest,
            pdf_cms_signed_attrs=PdfCMSSignedAttributes(signing_time=when),
        )
        await post.post_signature_processing(output)
        output.seek(0)
        return output.read()

    return asyncio.run(run())
