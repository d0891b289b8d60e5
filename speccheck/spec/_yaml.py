"""Safe YAML with the position of every key: the only way specification files are read.

The text is *composed* into a node tree (no Python object is constructed from it), then turned
into plain dicts, lists, strings, numbers, booleans and None by :func:`load_yaml`. Any tag
other than the plain YAML ones (``!!python/object``, ``!!binary``, ``!custom``, ...) is refused
before anything is built, and a key written twice in one mapping is an error. Every mapping key
and sequence item keeps its line and column so that later errors can point at it.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import yaml
from yaml.constructor import SafeConstructor
from yaml.nodes import MappingNode, Node, ScalarNode, SequenceNode

from speccheck.errors import SpecError

__all__ = ["MAX_SPEC_BYTES", "Document", "KeyPath", "load_yaml", "where"]

KeyPath = tuple[str | int, ...]

_STR = "tag:yaml.org,2002:str"
_PLAIN_SCALARS = {
    _STR,
    "tag:yaml.org,2002:int",
    "tag:yaml.org,2002:float",
    "tag:yaml.org,2002:bool",
    "tag:yaml.org,2002:null",
    "tag:yaml.org,2002:timestamp",  # kept as the text written
}
_MAP = "tag:yaml.org,2002:map"
_SEQ = "tag:yaml.org,2002:seq"
_MAX_NODES = 100_000  # aliases can make a small file expand enormously

# Largest specification, plan or instrument file read (1 MiB: a spec with a hundred
# requirements and long notes is under 20 kB).
MAX_SPEC_BYTES = 1 << 20


def where(line: int, col: int) -> str:
    """The ``where`` text of an error at 1-based ``line`` and ``col``."""
    return f"line {line}, col {col}"


@dataclass
class Document:
    """A YAML document as plain data, with positions (1-based line, col) of keys and items."""

    data: Any
    positions: dict[KeyPath, tuple[int, int]] = field(default_factory=dict)
    # Where a string value's first character sits, when the string is on one line and every
    # character of the value is written literally (so a column inside the value maps to the file).
    string_starts: dict[KeyPath, tuple[int, int]] = field(default_factory=dict)

    def position(self, path: KeyPath) -> tuple[int, int]:
        """Position of ``path``, or of its nearest recorded ancestor."""
        p = tuple(path)
        while p not in self.positions and p:
            p = p[:-1]
        return self.positions.get(p, (1, 1))


class _Composer(yaml.SafeLoader):
    """Reader, scanner, parser and composer of PyYAML; its constructor is never called."""


def _short_tag(tag: str) -> str:
    prefix = "tag:yaml.org,2002:"
    return "!!" + tag[len(prefix) :] if tag.startswith(prefix) else tag


def load_yaml(text: str, path: str) -> Document:
    """Compose ``text`` and build plain data from it, refusing tags and duplicate keys.

    Parameters
    ----------
    text:
        The file's text.
    path:
        Shown in errors.

    Returns
    -------
    Document
        ``data`` is the top-level value; ``positions`` maps key paths to (line, col).

    Raises
    ------
    SpecError
        With ``where="line L, col C"``: YAML syntax, a tag, a duplicate key, more than one
        document, an empty file, a key that is not a plain scalar.
    """
    loader = _Composer(text)
    try:
        node = loader.get_single_node()
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        problem = exc.problem or exc.context or "not valid YAML"
        place = where(mark.line + 1, mark.column + 1) if mark else None
        raise SpecError(f"YAML syntax: {problem}", path=path, where=place) from None
    except yaml.YAMLError as exc:  # pragma: no cover - reader errors without a mark
        raise SpecError(f"YAML syntax: {exc}", path=path) from None
    finally:
        loader.dispose()
    if node is None:
        raise SpecError(
            "the file is empty (expected a mapping starting with 'spec_version: 1')", path=path
        )
    doc = Document(data=None)
    builder = _Builder(path, doc, text.splitlines())
    doc.positions[()] = (node.start_mark.line + 1, node.start_mark.column + 1)
    doc.data = builder.build(node, ())
    return doc


class _Builder:
    def __init__(self, path: str, doc: Document, lines: list[str]):
        self.path = path
        self.doc = doc
        self.lines = lines
        self.count = 0
        self.scalars = SafeConstructor()

    def error(self, node: Node, message: str) -> SpecError:
        m = node.start_mark
        return SpecError(message, path=self.path, where=where(m.line + 1, m.column + 1))

    def build(self, node: Node, key_path: KeyPath) -> Any:
        self.count += 1
        if self.count > _MAX_NODES:
            raise self.error(node, f"more than {_MAX_NODES} values (aliases expanding?)")
        if isinstance(node, ScalarNode):
            return self.scalar(node, key_path)
        if isinstance(node, SequenceNode):
            if node.tag != _SEQ:
                raise self.error(
                    node, f"tag '{_short_tag(node.tag)}' is not allowed in a specification file"
                )
            items = []
            for i, item in enumerate(node.value):
                self.doc.positions[(*key_path, i)] = (
                    item.start_mark.line + 1,
                    item.start_mark.column + 1,
                )
                items.append(self.build(item, (*key_path, i)))
            return items
        if isinstance(node, MappingNode):
            if node.tag != _MAP:
                raise self.error(
                    node, f"tag '{_short_tag(node.tag)}' is not allowed in a specification file"
                )
            out: dict[Any, Any] = {}
            for key_node, value_node in node.value:
                if not isinstance(key_node, ScalarNode) or key_node.tag not in _PLAIN_SCALARS:
                    tag = _short_tag(key_node.tag)
                    if key_node.tag == "tag:yaml.org,2002:merge":
                        raise self.error(
                            key_node, "merge keys '<<' are not allowed in a specification file"
                        )
                    if isinstance(key_node, ScalarNode):
                        raise self.error(
                            key_node, f"tag '{tag}' is not allowed in a specification file"
                        )
                    raise self.error(key_node, "a key must be plain text")
                key = self.scalar(key_node, None)
                if key in out:
                    raise self.error(key_node, f"duplicate key '{key}'")
                pos = (key_node.start_mark.line + 1, key_node.start_mark.column + 1)
                self.doc.positions[(*key_path, key)] = pos
                out[key] = self.build(value_node, (*key_path, key))
            return out
        raise self.error(node, "unexpected YAML node")  # pragma: no cover

    def scalar(self, node: ScalarNode, key_path: KeyPath | None) -> Any:
        if node.tag not in _PLAIN_SCALARS:
            raise self.error(
                node, f"tag '{_short_tag(node.tag)}' is not allowed in a specification file"
            )
        if node.tag == _STR or node.tag == "tag:yaml.org,2002:timestamp":
            if key_path is not None:
                self._record_string(node, key_path)
            return node.value
        if node.tag == "tag:yaml.org,2002:int":
            return self.scalars.construct_yaml_int(node)
        if node.tag == "tag:yaml.org,2002:float":
            return self.scalars.construct_yaml_float(node)
        if node.tag == "tag:yaml.org,2002:bool":
            return self.scalars.construct_yaml_bool(node)
        return None

    def _record_string(self, node: ScalarNode, key_path: KeyPath) -> None:
        start, end = node.start_mark, node.end_mark
        if start.line != end.line or start.line >= len(self.lines):
            return
        offset = 1 if node.style in ("'", '"') else 0
        col0 = start.column + offset
        line = self.lines[start.line]
        if line[col0 : col0 + len(node.value)] == node.value:
            self.doc.string_starts[key_path] = (start.line + 1, col0 + 1)
