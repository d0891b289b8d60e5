"""Values that mean what their author wrote, checked against the field types of a model.

YAML turns some unquoted text into other things: ``number: 0123`` into 83 (octal), ``revision:
1.10`` into 1.1, ``time: 1:30`` into 90 (sexagesimal), ``surface: no`` into false. Where a model
declares a field as text only (``str`` or ``str | None``), :func:`apply_written_text` puts back
the text as written, so a part number or a note is never rewritten. Where a field is a number,
a boolean is refused (``sections: true`` is not a count), and where it is a boolean, a number is
refused: YAML's coercions never decide what a count or a switch means.
"""

from __future__ import annotations

import types
from typing import Annotated, Any, Literal, Union, get_args, get_origin

from speccheck.errors import SpecError
from speccheck.spec._yaml import Document, KeyPath, where

__all__ = ["apply_written_text"]


def _options(annotation: Any) -> list[Any]:
    """The alternatives of a field's type, with Annotated and Optional unwrapped."""
    origin = get_origin(annotation)
    if origin is Annotated:
        return _options(get_args(annotation)[0])
    if origin is Union or origin is types.UnionType:
        return [o for a in get_args(annotation) for o in _options(a)]
    return [annotation]


def _scalar_kinds(options: list[Any]) -> set[type]:
    kinds: set[type] = set()
    for o in options:
        if get_origin(o) is Literal:
            kinds.update(type(v) for v in get_args(o))
        elif o in (str, int, float, bool):
            kinds.add(o)
    return kinds


def _key_text(path: KeyPath) -> str:
    out = ""
    for k in path:
        out += f"[{k}]" if isinstance(k, int) else (f".{k}" if out else str(k))
    return out


def apply_written_text(model: Any, doc: Document, path: str) -> list[SpecError]:
    """Put back the written text in ``doc.data`` where ``model`` wants text; type errors found.

    Parameters
    ----------
    model:
        The pydantic model class the data is validated against next.
    doc:
        The document from :func:`speccheck.spec._yaml.load_yaml`; ``doc.data`` is changed in place.
    path:
        The file, for errors.

    Returns
    -------
    list of SpecError
        A boolean where a number belongs, or a number where a boolean belongs, at ``line:col``.
    """
    errors: list[SpecError] = []
    if isinstance(doc.data, dict):
        _walk_model(model, doc.data, (), doc, path, errors)
    return errors


def _walk_model(
    model: Any, data: dict[Any, Any], at: KeyPath, doc: Document, path: str, out: list[SpecError]
) -> None:
    fields = getattr(model, "model_fields", {})
    for key in list(data):
        info = fields.get(key)
        if info is not None:
            data[key] = _walk(_options(info.annotation), data[key], (*at, key), doc, path, out)


def _walk(
    options: list[Any], value: Any, at: KeyPath, doc: Document, path: str, out: list[SpecError]
) -> Any:
    if isinstance(value, dict):
        for o in options:
            if hasattr(o, "model_fields"):
                _walk_model(o, value, at, doc, path, out)
                return value
            if get_origin(o) is dict:
                inner = _options(get_args(o)[1])
                for k in list(value):
                    value[k] = _walk(inner, value[k], (*at, k), doc, path, out)
                return value
        return value
    if isinstance(value, list):
        for o in options:
            if get_origin(o) is list:
                inner = _options(get_args(o)[0])
                return [_walk(inner, v, (*at, i), doc, path, out) for i, v in enumerate(value)]
        return value
    text_only = [o for o in options if o is not type(None)] == [str]
    words = [
        v for o in options if get_origin(o) is Literal for v in get_args(o) if isinstance(v, str)
    ]
    return _scalar(_scalar_kinds(options), text_only, words, value, at, doc, path, out)


def _scalar(
    kinds: set[type],
    text_only: bool,
    words_allowed: list[str],
    value: Any,
    at: KeyPath,
    doc: Document,
    path: str,
    out: list[SpecError],
) -> Any:
    written = doc.scalar_text.get(at)
    if written is None or not kinds:
        return value
    if text_only:
        return written  # text field: the text as written, never YAML's reading of it
    line, col = doc.value_positions.get(at, doc.position(at))
    if isinstance(value, bool) and bool not in kinds and kinds & {int, float}:
        message = f"{_key_text(at)}: {written} is a yes/no value, not a number; write a number"
        out.append(SpecError(message, path=path, where=where(line, col)))
    elif not isinstance(value, bool) and bool in kinds and not kinds & {int, float}:
        words = ["true", "false", *words_allowed]
        allowed = ", ".join(words[:-1]) + " or " + words[-1]
        message = f"{_key_text(at)}: {written} is not true or false; write {allowed}"
        out.append(SpecError(message, path=path, where=where(line, col)))
    return value
