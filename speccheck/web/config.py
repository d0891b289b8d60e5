"""What the bench server is started with: folders, records store, signing key, access token."""

from __future__ import annotations

import ipaddress
import os
from dataclasses import dataclass
from pathlib import Path

from speccheck.errors import SpeccheckError

__all__ = ["BenchConfig", "TOKEN_ENV", "is_loopback", "MAX_UPLOAD_BYTES", "MAX_TRACES"]

TOKEN_ENV = "SPECCHECK_SERVE_TOKEN"
#: One uploaded trace at most (a 2·10^7-point CSV, the readers' point budget, is far larger;
#: a bench trace is a few MB): larger files are refused before they are read.
MAX_UPLOAD_BYTES = 64 * 1024 * 1024
#: Traces one part may carry on the page (the 16 % rule's step procedure stops at 12 values per
#: requirement, ISO 4288 5.2; common practice, no source, for the margin).
MAX_TRACES = 24


def is_loopback(host: str) -> bool:
    """True for 127.0.0.0/8, ::1 and ``localhost``: reachable only from this computer."""
    if host == "localhost":
        return True
    try:
        return ipaddress.ip_address(host.strip("[]")).is_loopback
    except ValueError:
        return False


@dataclass(frozen=True)
class BenchConfig:
    """The server's settings, checked once at start.

    ``data_dir`` holds the uploaded traces (``traces/``) and the written records (``reports/``);
    ``specs_dir`` the specification files a part number is looked up in; ``db`` the records
    store (the same default as every other command). ``sign_p12`` and ``passphrase`` are the
    signing key, unlocked at start; the passphrase never leaves the server.
    """

    data_dir: Path
    specs_dir: Path
    db: str | Path
    host: str = "127.0.0.1"
    port: int = 8765
    token: str | None = None
    sign_p12: Path | None = None
    passphrase: bytes | None = None
    signer: str | None = None
    max_upload_bytes: int = MAX_UPLOAD_BYTES
    max_traces: int = MAX_TRACES

    @property
    def traces_dir(self) -> Path:
        return self.data_dir / "traces"

    @property
    def reports_dir(self) -> Path:
        return self.data_dir / "reports"

    def prepare(self) -> None:
        """Create the working folders; refuse a spec folder that is not there."""
        if not self.specs_dir.is_dir():
            raise SpeccheckError("the spec folder does not exist", path=str(self.specs_dir))
        for d in (self.data_dir, self.traces_dir, self.reports_dir):
            if d.exists() and not d.is_dir():
                raise SpeccheckError("exists and is not a folder", path=str(d))
            d.mkdir(parents=True, exist_ok=True)


def access_token(token_file: str | None) -> str | None:
    """The access token from a file (first line) or ``$SPECCHECK_SERVE_TOKEN``; never from an
    argument, which other users see in the process list."""
    if token_file:
        try:
            lines = Path(token_file).read_text(encoding="utf-8").splitlines()
        except (OSError, UnicodeDecodeError) as exc:
            raise SpeccheckError(f"cannot read the token file ({exc})", path=token_file) from exc
        token = lines[0].strip() if lines else ""
        if not token:
            raise SpeccheckError("the token file is empty", path=token_file, where="line 1")
    else:
        token = os.environ.get(TOKEN_ENV, "").strip()
    if token and len(token) < 16:
        raise SpeccheckError("the access token must be at least 16 characters long")
    return token or None
