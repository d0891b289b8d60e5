"""The spec folder as a catalogue: a typed or scanned part number picks its specification."""

from __future__ import annotations

import threading
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from speccheck.errors import SpeccheckError

__all__ = ["SpecEntry", "SpecCatalogue", "normalise_part"]


def normalise_part(number: str) -> str:
    """A part number as compared: case and surrounding or inner blanks do not count
    (a scanner or a hurried hand may add them)."""
    return "".join(str(number).split()).casefold()


@dataclass(frozen=True)
class SpecEntry:
    """One specification file of the folder, as loaded."""

    name: str  # file name inside the spec folder
    part: str
    revision: str
    surface: str
    convention: str
    requirements: tuple[str, ...]
    loaded: Any  # the LoadedSpec


class SpecCatalogue:
    """The ``*.yaml``/``*.yml`` files of one folder (not its subfolders), each loaded once and
    again only when it changes on disk. A file that does not load is listed as a problem, one
    line naming it; it never stops the others."""

    def __init__(self, folder: Path):
        self.folder = Path(folder)
        self._lock = threading.Lock()
        self._cache: dict[str, tuple[tuple[int, int], SpecEntry | str]] = {}

    def _load(self, path: Path) -> SpecEntry | str:
        from speccheck.spec.loader import load_spec

        try:
            spec = load_spec(path)
        except SpeccheckError as exc:
            return exc.one_line()
        part = spec.part
        return SpecEntry(
            name=path.name,
            part=str(part.get("number", "")),
            revision=str(part.get("revision", "") or ""),
            surface=str(part.get("surface", "") or ""),
            convention=spec.convention,
            requirements=tuple(r.text for r in spec.requirements),
            loaded=spec,
        )

    def scan(self) -> tuple[list[SpecEntry], list[str]]:
        """Every spec of the folder (sorted by part and file name) and the problems found."""
        entries: list[SpecEntry] = []
        problems: list[str] = []
        with self._lock:
            seen = set()
            for path in sorted(self.folder.iterdir()):
                if path.suffix.lower() not in (".yaml", ".yml") or not path.is_file():
                    continue
                st = path.stat()
                key = (st.st_mtime_ns, st.st_size)
                seen.add(path.name)
                cached = self._cache.get(path.name)
                if cached is None or cached[0] != key:
                    cached = (key, self._load(path))
                    self._cache[path.name] = cached
                item = cached[1]
                (entries if isinstance(item, SpecEntry) else problems).append(item)  # type: ignore[arg-type]
            for gone in set(self._cache) - seen:
                del self._cache[gone]
        entries.sort(key=lambda e: (normalise_part(e.part), e.name))
        return entries, problems

    def find(self, number: str) -> list[SpecEntry]:
        """The specs whose part number is ``number`` (see :func:`normalise_part`)."""
        want = normalise_part(number)
        return [e for e in self.scan()[0] if want and normalise_part(e.part) == want]

    def get(self, name: str) -> SpecEntry | None:
        """The spec file ``name`` of the folder, or None."""
        return next((e for e in self.scan()[0] if e.name == name), None)
