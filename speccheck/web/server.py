"""Start the bench page under uvicorn, after every setting is checked."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

from speccheck.errors import SpeccheckError
from speccheck.web.config import TOKEN_ENV, BenchConfig, is_loopback

__all__ = ["unlock_key", "check_exposure", "serve", "start_lines"]


def unlock_key(p12: Path, passphrase: bytes | None) -> str:
    """Open the signing key now, at start (a wrong passphrase or an expired certificate stops
    the server here, not at the first record); returns the signer's name."""
    import datetime as _dt

    from speccheck.report.signing import check_valid_at, open_key

    key = open_key(Path(p12), passphrase)
    check_valid_at(key.certificate, _dt.datetime.now(_dt.UTC), path=key.path)
    return key.identity.name


def check_exposure(host: str, token: str | None) -> None:
    """Anything but this computer's own address needs an access token."""
    if not is_loopback(host) and not token:
        raise SpeccheckError(
            f"--host {host} makes the bench page reachable from other computers: give an "
            f"access token (--token-file FILE or ${TOKEN_ENV}), or keep the default 127.0.0.1"
        )


def start_lines(config: BenchConfig) -> list[str]:
    """What the server says at start: where it listens, who may reach it, what it writes."""
    shown = f"[{config.host}]" if ":" in config.host else config.host
    url = f"http://{shown}:{config.port}/"
    lines = [f"speccheck bench page: {url}"]
    if is_loopback(config.host):
        lines.append("Reachable from this computer only (bound to a loopback address).")
    else:
        lines.append(
            f"Reachable from other computers on {config.host}: every request must carry the "
            f"access token (open {url}?token=... once per browser). Traffic is not encrypted: "
            "use this only on a trusted network, or behind a TLS proxy."
        )
    if config.token and is_loopback(config.host):
        lines.append("An access token is required (open the page with ?token=... once).")
    lines.append(f"Specifications: {config.specs_dir}")
    lines.append(f"Records store: {config.db}")
    lines.append(f"Traces and records written under: {config.data_dir}")
    lines.append(
        f"Records are signed by {config.signer}."
        if config.signer
        else "No signing key (--sign): records are written NOT SIGNED."
    )
    lines.append("Stop with Ctrl+C.")
    return lines


def serve(config: BenchConfig, *, echo: Callable[[str], None] = print) -> None:
    """Run the bench page until interrupted."""
    import uvicorn

    from speccheck._atomic import direct_writes
    from speccheck.web.app import create_app

    check_exposure(config.host, config.token)
    app = create_app(config)
    for line in start_lines(config):
        echo(line)
    # a long-running server: each record lands when written, not when the command ends
    with direct_writes():
        uvicorn.run(app, host=config.host, port=config.port, log_level="warning", access_log=False)
