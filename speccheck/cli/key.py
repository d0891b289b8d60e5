"""``speccheck key new``: make a signing key and a self-signed certificate (PKCS#12 + PEM).

Calls :func:`speccheck.report.signing.new_key`.
"""

from __future__ import annotations

from pathlib import Path

import click

from speccheck.cli.options import InputPath, OutputPath
from speccheck.errors import ReportError

PASSPHRASE_HELP = "File whose first line is the passphrase (else env SPECCHECK_PASSPHRASE)."


@click.group("key")
def command() -> None:
    """Make signing keys for conformance records (for organisations without a PKI).

    Calls speccheck.report.signing.new_key.
    """


@command.command("new")
@click.option("--name", required=True, help="Signer's name, as it will appear in signatures.")
@click.option("--org", default=None, help="Organisation name.")
@click.option(
    "--out",
    "out",
    required=True,
    metavar="FILE.p12",
    type=OutputPath("--out", allow_dash=False),
    help="Key file to write; the certificate goes to FILE.pem.",
)
@click.option(
    "--days",
    default=730,
    show_default=True,
    type=click.IntRange(min=1),
    help="Validity of the certificate.",
)
@click.option(
    "--passphrase-file",
    type=InputPath("passphrase file", path_type=Path),
    default=None,
    help=PASSPHRASE_HELP,
)
def new(name: str, org: str | None, out: str, days: int, passphrase_file: Path | None) -> None:
    """Write a passphrase-protected key FILE.p12 and the certificate FILE.pem for verifiers."""
    from speccheck.report.signing import PASSPHRASE_ENV, new_key, read_passphrase

    passphrase = read_passphrase(passphrase_file)
    if passphrase is None:
        raise ReportError(
            f"no passphrase: give --passphrase-file FILE or set {PASSPHRASE_ENV}",
            where="--passphrase-file",
        )
    info = new_key(Path(out), name=name, organisation=org, passphrase=passphrase, days=days)
    click.echo(f"key:         {info.p12_path} (keep it private; passphrase-protected)")
    click.echo(f"certificate: {info.pem_path} (give it to whoever verifies your records)")
    click.echo(f"subject:     {info.subject}")
    click.echo(f"SHA-256:     {info.sha256_fingerprint}")
    click.echo(f"valid until: {info.not_after}")
