"""Load a specification file in one step: safe YAML → pydantic → resolved requirements.

:func:`load_spec` returns a :class:`LoadedSpec` or raises one :class:`SpecError` carrying
``file`` and ``line L, col C``. :func:`check_spec` does the same work but collects every error it
can find (used by ``speccheck lint``).
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from speccheck._atomic import read_bounded
from speccheck.errors import SpeccheckError, SpecError
from speccheck.spec._text import apply_written_text
from speccheck.spec._yaml import (
    MAX_SPEC_BYTES,
    Document,
    KeyPath,
    decode_yaml_bytes,
    load_yaml,
    where,
)
from speccheck.spec.models import SpecFile, model_at
from speccheck.spec.requirement import LoadedSpec, Requirement

__all__ = ["load_spec", "check_spec", "check_spec_bytes", "SpecCheck", "LoadedSpec", "Requirement"]

_TAGS = ("callout", "fields")  # discriminator tags of a requirement in pydantic error locations


@dataclass
class SpecCheck:
    """Everything :func:`check_spec` found: the spec (None if any error), errors, the document."""

    path: str
    spec: LoadedSpec | None
    errors: list[SpeccheckError] = field(default_factory=list)
    document: Document | None = None
    model: SpecFile | None = None


def load_spec(path: str | Path) -> LoadedSpec:
    """Read, validate and resolve a specification file.

    Parameters
    ----------
    path:
        The YAML file.

    Returns
    -------
    LoadedSpec

    Raises
    ------
    SpecError
        The first error in file order, with ``path`` and ``where="line L, col C"``.
    """
    result = check_spec(path)
    if result.errors or result.spec is None:
        raise result.errors[0]
    return result.spec


def _key_text(path: KeyPath) -> str:
    out = ""
    for k in path:
        out += f"[{k}]" if isinstance(k, int) else (f".{k}" if out else str(k))
    return out


def _locate(data: Any, loc: tuple[Any, ...]) -> tuple[KeyPath, KeyPath]:
    """(the part of ``loc`` that exists in ``data``, the whole loc without discriminator tags)."""
    found: list[str | int] = []
    clean: list[str | int] = []
    cur = data
    exists = True
    for i, step in enumerate(loc):
        if step in _TAGS and i >= 2 and loc[i - 2] == "requirements":
            continue
        clean.append(step)
        if exists and isinstance(cur, dict) and step in cur:
            cur = cur[step]
            found.append(step)
        elif exists and isinstance(cur, list) and isinstance(step, int) and 0 <= step < len(cur):
            cur = cur[step]
            found.append(step)
        else:
            exists = False
    return tuple(found), tuple(clean)


def _pydantic_errors(
    exc: Any, doc: Document, path: str, models_at: Any = model_at
) -> list[SpecError]:
    """pydantic errors as SpecErrors at file:line:col; ``models_at(path)`` names allowed keys."""
    errors = []
    for e in exc.errors(include_url=False):
        found, clean = _locate(doc.data, tuple(e["loc"]))
        parent = clean[:-1]
        inside = f" in {_key_text(parent)}" if parent else ""
        kind = e["type"]
        if kind == "extra_forbidden":
            model = models_at(parent)
            allowed = f" (allowed: {', '.join(model.model_fields)})" if model is not None else ""
            message = f"unknown key '{clean[-1]}'{inside}{allowed}"
        elif kind == "missing":
            message = f"missing key '{clean[-1]}'{inside}"
        elif kind == "requirement_form":
            message = f"{_key_text(clean)}: {e['msg']}"
        else:
            msg = e["msg"]
            if kind == "value_error":
                msg = str(e.get("ctx", {}).get("error", msg))
            message = f"{_key_text(clean)}: {msg}" if clean else msg
        line, col = doc.position(found)
        errors.append(SpecError(message, path=path, where=where(line, col)))
    return errors


def _sort_key(err: SpeccheckError) -> tuple[int, int]:
    try:
        line_part, col_part = (err.where or "line 0, col 0").split(",")
        return int(line_part.split()[1]), int(col_part.split()[1])
    except (ValueError, IndexError):
        return 0, 0


def check_spec(path: str | Path) -> SpecCheck:
    """Read, validate and resolve ``path``, collecting every error found (sorted by position).

    A YAML syntax error, a refused tag or a duplicate key stops the reading (one error); pydantic
    errors are all reported; then each requirement is resolved on its own, so one bad callout does
    not hide an error in the next requirement.
    """
    p = str(path)
    try:
        raw = read_bounded(path, limit=MAX_SPEC_BYTES, role="specification", error=SpecError)
    except SpeccheckError as exc:  # I/O errors keep their message; the list holds SpecErrors
        err = exc if isinstance(exc, SpecError) else SpecError(exc.message, path=p, where=exc.where)
        return SpecCheck(path=p, spec=None, errors=[err])
    return check_spec_bytes(raw, p)


def check_spec_bytes(raw: bytes, name: str) -> SpecCheck:
    """:func:`check_spec` of a specification's bytes held in memory; errors name ``name``."""
    p = name
    result = SpecCheck(path=p, spec=None)
    if len(raw) > MAX_SPEC_BYTES:
        result.errors.append(
            SpecError(f"larger than {MAX_SPEC_BYTES} bytes: not a specification", path=p)
        )
        return result
    try:
        doc = load_yaml(decode_yaml_bytes(raw, p), p)
    except SpecError as exc:
        result.errors.append(exc)
        return result
    result.document = doc
    if not isinstance(doc.data, dict):
        result.errors.append(
            SpecError(
                "a specification file is a mapping starting with 'spec_version: 1'",
                path=p,
                where=where(1, 1),
            )
        )
        return result
    from pydantic import ValidationError

    text_errors = apply_written_text(SpecFile, doc, p)
    try:
        model = SpecFile.model_validate(doc.data)
    except ValidationError as exc:
        result.errors = sorted(text_errors + _pydantic_errors(exc, doc, p), key=_sort_key)
        return result
    if text_errors:
        result.errors = sorted(text_errors, key=_sort_key)
        return result
    result.model = model
    from speccheck.spec.resolve import resolve_requirements

    requirements, errors = resolve_requirements(model, doc, p)
    from speccheck.spec.record import resolve_record

    record, record_errors = resolve_record(model, doc, p)
    errors = errors + record_errors
    if errors:
        result.errors = sorted(errors, key=_sort_key)
        return result
    part = {k: v for k, v in model.part.model_dump().items() if v is not None}
    result.spec = LoadedSpec(
        path=p,
        sha256=hashlib.sha256(raw).hexdigest(),
        raw=raw,
        part=part,
        convention=model.convention,
        decision_rule=model.decision_rule,
        value_per=model.measurement.value_per,
        isolated_features=model.diagnostics.isolated_features,
        notes=model.notes,
        requirements=tuple(requirements),
        sampling=model.sampling,
        uncertainty_estimate=model.uncertainty == "estimate",
        **record,
    )
    return result
