"""A throwaway PostgreSQL server for the tests, from the system packages.

``initdb`` into a temporary folder, ``pg_ctl start`` on a free 127.0.0.1 port, ``pg_ctl stop`` at
the end. As root (CI), the server runs as the ``postgres`` user through ``runuser``, since
PostgreSQL refuses to run as root. A missing PostgreSQL installation is a test *failure*, never a
skip: the plant store must be tested wherever the suite runs (scripts/system-packages.sh installs
it).
"""

from __future__ import annotations

import glob
import os
import shutil
import socket
import subprocess
import tempfile
import uuid
from dataclasses import dataclass
from pathlib import Path


def _bin_dir() -> Path:
    found = sorted(
        glob.glob("/usr/lib/postgresql/*/bin/initdb"),
        key=lambda p: int(Path(p).parts[-3]) if Path(p).parts[-3].isdigit() else 0,
    )
    if found:
        return Path(found[-1]).parent
    which = shutil.which("initdb")
    if which:
        return Path(which).resolve().parent
    raise RuntimeError(
        "PostgreSQL server binaries (initdb, pg_ctl) not found: run scripts/system-packages.sh"
    )


def _free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind(("127.0.0.1", 0))
        return int(s.getsockname()[1])


@dataclass
class PostgresServer:
    """A running server; ``url(db)`` gives a connection URL for one of its databases."""

    root: Path
    port: int
    bin_dir: Path
    as_user: list[str]

    def url(self, database: str = "postgres", user: str = "postgres") -> str:
        return f"postgresql://{user}@127.0.0.1:{self.port}/{database}"

    def new_database(self) -> str:
        """A fresh empty database; its URL."""
        import psycopg

        name = "t_" + uuid.uuid4().hex[:12]
        with psycopg.connect(self.url(), autocommit=True) as conn:
            conn.execute(f'CREATE DATABASE "{name}"')
        return self.url(name)

    def _run(self, *args: str) -> None:
        subprocess.run(
            [*self.as_user, str(self.bin_dir / args[0]), *args[1:]],
            check=True,
            capture_output=True,
            timeout=120,
        )

    def stop(self) -> None:
        try:
            self._run("pg_ctl", "-D", str(self.root / "data"), "-m", "fast", "-w", "stop")
        finally:
            shutil.rmtree(self.root, ignore_errors=True)


def start_server() -> PostgresServer:
    """initdb + pg_ctl start on a free localhost port (as ``postgres`` when we are root)."""
    bin_dir = _bin_dir()
    root = Path(tempfile.mkdtemp(prefix="speccheck-pg-"))
    as_user: list[str] = []
    if os.geteuid() == 0:
        import pwd

        pw = pwd.getpwnam("postgres")
        os.chown(root, pw.pw_uid, pw.pw_gid)
        as_user = ["runuser", "-u", "postgres", "--"]
    server = PostgresServer(root, _free_port(), bin_dir, as_user)
    server._run(
        "initdb",
        "-D",
        str(root / "data"),
        "-U",
        "postgres",
        "--auth=trust",
        "-E",
        "UTF8",
        "--locale=C",
    )
    options = (
        f"-c listen_addresses=127.0.0.1 -p {server.port} -c unix_socket_directories={root} "
        "-c fsync=off -c synchronous_commit=off -c full_page_writes=off -c max_connections=60"
    )
    server._run(
        "pg_ctl",
        "-D",
        str(root / "data"),
        "-o",
        options,
        "-l",
        str(root / "server.log"),
        "-w",
        "-t",
        "60",
        "start",
    )
    return server
