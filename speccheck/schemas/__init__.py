"""The JSON interface's version and the JSON Schemas of the documents speccheck writes.

Every JSON document speccheck writes (a check or lot result, parameters, records listings and
exports, verification results, errors) carries ``schema_version``: ``MAJOR.MINOR``.

- Within one major version, documents only *gain* fields (a new key, a new value of an open
  text field such as ``reason``), and the minor number rises. A consumer that ignores keys it
  does not know keeps working.
- Removing or renaming a field, changing its type, its unit or its meaning, or changing how
  things are numbered needs a new major version.

Version 2.0 differs from the earlier unversioned format (``format_version: 1``) in one way that
breaks: measurements are numbered from 1 (``measurements[].number``, ``values[].measurement``,
``diagnostics[].measurement``), as in every human-readable output. Readers of stored records
accept both.

The schemas (draft 2020-12) of the documents that are not generated from a pydantic model live
beside this file as ``<name>.schema.json``; :func:`schema` loads one.
"""

from __future__ import annotations

import json
from importlib import resources
from typing import Any

__all__ = ["SCHEMA_VERSION", "DOCUMENTS", "schema"]

SCHEMA_VERSION = "2.0"

#: Documents with a hand-written schema in this package.
DOCUMENTS = (
    "result",
    "lot",
    "params",
    "error",
    "records",
    "record",
    "audit",
    "trend",
    "verification",
    "info",
    "replay",
    "migration",
)


def schema(name: str) -> dict[str, Any]:
    """The JSON Schema of document ``name`` (one of :data:`DOCUMENTS`)."""
    if name not in DOCUMENTS:
        raise ValueError(f"no schema named {name!r}; choose one of {', '.join(DOCUMENTS)}")
    text = resources.files(__name__).joinpath(f"{name}.schema.json").read_text("utf-8")
    doc: dict[str, Any] = json.loads(text)
    return doc
