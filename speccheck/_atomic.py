"""Write files so that a failure never leaves a half-written file or destroys the old one."""

from __future__ import annotations

import os
import tempfile
from collections.abc import Callable
from pathlib import Path

from speccheck.errors import SpeccheckError

__all__ = ["atomic_write_bytes", "atomic_write_text", "atomic_write_with"]


def atomic_write_with(path: Path, write: Callable[[Path], None]) -> None:
    """Call ``write(tmp)`` to produce the file at a temporary path, then rename it to ``path``.

    If ``write`` raises, the temporary file is removed and ``path`` is left as it was.
    """
    path = Path(path)
    directory = path.parent if str(path.parent) else Path(".")
    if not directory.is_dir():
        raise SpeccheckError(f"folder {str(directory)!r} does not exist", path=str(path))
    fd, tmp_name = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=directory)
    os.close(fd)
    tmp = Path(tmp_name)
    try:
        write(tmp)
        os.replace(tmp, path)
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise


def atomic_write_bytes(path: Path, data: bytes) -> None:
    def write(p: Path) -> None:
        p.write_bytes(data)

    atomic_write_with(Path(path), write)


def atomic_write_text(path: Path, text: str) -> None:
    atomic_write_bytes(Path(path), text.encode("utf-8"))
