"""``speccheck serve``: the bench page on this computer (calls speccheck.web.server.serve)."""

from __future__ import annotations

from pathlib import Path

import click

from speccheck.cli.options import InputPath, db_option, passphrase_file_option, sign_option

__all__ = ["command"]


@click.command(name="serve")
@click.option(
    "--data-dir",
    default="speccheck-bench",
    show_default=True,
    metavar="DIR",
    help="Folder for uploaded traces and written records (created if missing).",
)
@click.option(
    "--specs",
    "specs_dir",
    default=None,
    metavar="DIR",
    help="Folder of specification files a part number is looked up in [default: DIR/specs].",
)
@db_option
@click.option("--host", default="127.0.0.1", show_default=True, help="Address to listen on.")
@click.option("--port", default=8765, show_default=True, type=click.IntRange(1, 65535))
@click.option(
    "--token-file",
    default=None,
    type=InputPath("access token file"),
    help="File whose first line is the access token (else $SPECCHECK_SERVE_TOKEN); required "
    "for any --host other than this computer's own address.",
)
@sign_option
@passphrase_file_option
def command(
    data_dir: str,
    specs_dir: str | None,
    db: str | None,
    host: str,
    port: int,
    token_file: str | None,
    sign_p12: str | None,
    passphrase_file: str | None,
) -> int:
    """Serve the bench page: choose a part, drop traces, see the running verdict, sign and
    record. Binds to 127.0.0.1 unless told otherwise; the signing key is unlocked here, at
    start, and its passphrase never reaches the browser. Calls speccheck.web.server.serve."""
    from speccheck.errors import SpeccheckError
    from speccheck.records.store import default_db_path
    from speccheck.report.signing import read_passphrase
    from speccheck.web.config import BenchConfig, access_token
    from speccheck.web.server import check_exposure, serve, unlock_key

    if passphrase_file and not sign_p12:
        raise SpeccheckError("--passphrase-file needs --sign KEY.p12")
    token = access_token(token_file)
    check_exposure(host, token)
    passphrase = signer = None
    if sign_p12:
        passphrase = read_passphrase(Path(passphrase_file) if passphrase_file else None)
        signer = unlock_key(Path(sign_p12), passphrase)
    root = Path(data_dir)
    config = BenchConfig(
        data_dir=root,
        specs_dir=Path(specs_dir) if specs_dir else root / "specs",
        db=default_db_path(db),
        host=host,
        port=port,
        token=token,
        sign_p12=Path(sign_p12) if sign_p12 else None,
        passphrase=passphrase,
        signer=signer,
    )
    serve(config, echo=click.echo)
    return 0
