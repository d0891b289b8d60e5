"""Write calibration results into a copy of an instrument file, keeping everything else.

A top-level section (``noise:``, ``repeatability:``) is replaced as text, so comments and
every other line stay as the owner wrote them; the new text is validated as an instrument
file before it is written.
"""

from __future__ import annotations

import re
from typing import Any

from speccheck.errors import SpecError
from speccheck.instrument.loader import LoadedInstrument

__all__ = ["replace_section", "updated_instrument_text"]

_TOP = re.compile(r"^[^\s#-][^:]*:")


def replace_section(text: str, name: str, block: str) -> str:
    """``text`` with the top-level section ``name`` replaced by ``block`` (appended if absent)."""
    lines = text.splitlines(keepends=True)
    start = next(
        (i for i, ln in enumerate(lines) if re.match(rf"^{re.escape(name)}\s*:", ln)), None
    )
    if not block.endswith("\n"):
        block += "\n"
    if start is None:
        tail = "" if not text or text.endswith("\n") else "\n"
        return text + tail + block
    end = start + 1
    while end < len(lines) and not _TOP.match(lines[end]):
        end += 1
    while end > start + 1 and lines[end - 1].lstrip().startswith("#"):
        end -= 1  # a comment just above the next section belongs to it
    return "".join(lines[:start]) + block + "".join(lines[end:])


def updated_instrument_text(loaded: LoadedInstrument, name: str, data: dict[str, Any]) -> str:
    """The instrument file's text with section ``name`` set to ``data``; SpecError if invalid."""
    import yaml

    from speccheck.instrument.models import InstrumentFile
    from speccheck.spec._yaml import load_yaml

    block = yaml.safe_dump({name: data}, sort_keys=False, allow_unicode=True, width=100)
    text = replace_section(loaded.raw.decode("utf-8-sig"), name, block)
    try:
        InstrumentFile.model_validate(load_yaml(text, loaded.path).data)
    except Exception as exc:  # a bug in the writer, never the user's input
        raise SpecError(
            f"the updated {name} section does not validate: {exc}", path=loaded.path
        ) from exc
    return text
