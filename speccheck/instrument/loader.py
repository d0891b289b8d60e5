"""Load an instrument file in one step: safe YAML → pydantic, errors at ``file:line:col``.

The same YAML reader as specification files (:mod:`speccheck.spec._yaml`: no tags, no duplicate
keys, positions kept), so an instrument file is refused exactly where a spec would be.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass
from pathlib import Path

from pydantic import BaseModel

from speccheck.errors import SpeccheckError, SpecError
from speccheck.instrument.models import (
    Amplification,
    Calibration,
    HorizontalScale,
    InstrumentFile,
    Noise,
    Repeatability,
)
from speccheck.spec._text import apply_written_text
from speccheck.spec._yaml import KeyPath, decode_yaml_bytes, load_yaml, where

__all__ = ["LoadedInstrument", "load_instrument", "check_instrument"]

_SECTIONS: dict[str, type[BaseModel]] = {
    "calibration": Calibration,
    "amplification": Amplification,
    "horizontal_scale": HorizontalScale,
    "noise": Noise,
    "repeatability": Repeatability,
}


@dataclass(frozen=True)
class LoadedInstrument:
    """An instrument file as read: its path, the bytes' SHA-256, the bytes and the model."""

    path: str
    sha256: str
    raw: bytes
    model: InstrumentFile


def _model_at(path: KeyPath) -> type[BaseModel] | None:
    if path == ():
        return InstrumentFile
    if len(path) == 1:
        return _SECTIONS.get(str(path[0]))
    return None


def check_instrument(
    path: str | Path,
) -> tuple[LoadedInstrument | None, list[SpeccheckError]]:
    """Read and validate ``path``; every error found, sorted by position (for lint)."""
    from pydantic import ValidationError

    from speccheck.spec.loader import _pydantic_errors, _sort_key

    p = str(path)
    from speccheck._atomic import read_bounded
    from speccheck.spec._yaml import MAX_SPEC_BYTES

    try:
        raw = read_bounded(path, limit=MAX_SPEC_BYTES, role="instrument file", error=SpecError)
    except SpeccheckError as exc:  # I/O errors keep their message; the list holds SpecErrors
        if isinstance(exc, SpecError):
            return None, [exc]
        return None, [SpecError(exc.message, path=p, where=exc.where)]
    try:
        doc = load_yaml(decode_yaml_bytes(raw, p), p)
    except SpecError as exc:
        return None, [exc]
    if not isinstance(doc.data, dict):
        message = "an instrument file is a mapping starting with 'instrument_version: 1'"
        return None, [SpecError(message, path=p, where=where(1, 1))]
    text_errors = apply_written_text(InstrumentFile, doc, p)
    try:
        model = InstrumentFile.model_validate(doc.data)
    except ValidationError as exc:
        errors = text_errors + _pydantic_errors(exc, doc, p, _model_at)
        return None, sorted(errors, key=_sort_key)
    if text_errors:
        return None, sorted(text_errors, key=_sort_key)
    return LoadedInstrument(p, hashlib.sha256(raw).hexdigest(), raw, model), []


def load_instrument(path: str | Path) -> LoadedInstrument:
    """Read and validate an instrument file; raise the first :class:`SpecError` in file order."""
    loaded, errors = check_instrument(path)
    if errors or loaded is None:
        raise errors[0]
    return loaded
