"""Archived profiles addressed by hash: a folder today, an object store tomorrow.

A file whose name starts with its own SHA-256 (``<64 hex>.x3p``, the layout ``check --record``
users are advised to archive with) is found by its name and its bytes are verified when read.
Any other file is hashed once to be found. The interface is two calls (``has``, ``path``), so
another storage can stand behind it.
"""

from __future__ import annotations

import hashlib
import re
from pathlib import Path

from speccheck.errors import InputError

__all__ = ["Archive", "sha256_file"]

_HEX = re.compile(r"[0-9a-f]{64}")


def sha256_file(path: Path) -> str:
    """SHA-256 (hex) of a file's bytes, read in 1 MiB blocks."""
    h = hashlib.sha256()
    with path.open("rb") as f:
        for block in iter(lambda: f.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


class Archive:
    """Profiles and specs of past checks, found by the SHA-256 of their bytes."""

    def __init__(self, root: str | Path):
        self.root = Path(root)
        if not self.root.is_dir():
            raise InputError("archive folder does not exist", path=str(self.root))
        self._named: dict[str, Path] = {}
        self._hashed: dict[str, Path] = {}
        for p in sorted(self.root.rglob("*")):
            if not p.is_file() or p.is_symlink():
                continue
            stem = p.name.split(".", 1)[0].lower()
            if _HEX.fullmatch(stem):
                self._named.setdefault(stem, p)
            else:
                self._hashed.setdefault(sha256_file(p), p)

    def __len__(self) -> int:
        return len(set(self._named) | set(self._hashed))

    def has(self, sha256: str) -> bool:
        """Whether the archive holds a file with these bytes (by name or by content)."""
        return sha256 in self._named or sha256 in self._hashed

    def path(self, sha256: str) -> Path:
        """Where the file with these bytes is; :class:`InputError` if the archive lacks it."""
        found = self._named.get(sha256) or self._hashed.get(sha256)
        if found is None:
            raise InputError(f"no archived file has SHA-256 {sha256}", path=str(self.root))
        return found

    def is_named_by_hash(self, sha256: str) -> bool:
        """True when the file was found by its name, so its bytes must still be verified."""
        return sha256 in self._named and sha256 not in self._hashed
