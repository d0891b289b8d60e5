"""Safe YAML with the position of every key: the only way specification files are read.

The text is *composed* into a node tree (no Python object is constructed from it), then turned
into plain dicts, lists, strings, numbers, booleans and None by :func:`load_yaml`. Any tag
other than the plain YAML ones (``!!python/object``, ``!!binary``, ``!custom``, ...) is refused
before anything is built, and a key written twice in one mapping is an error. Every mapping key
and sequence item keeps its line and column so that later errors can point at it.

Text means what it says: a key is always the text written, and a plain scalar that YAML would
turn into a number, boolean or date keeps its source text beside the value
(:attr:`Document.scalar_text`), so that a field the models declare as text can take the text
written (:mod:`speccheck.spec._text`). Control characters, lone surrogates and bidirectional
controls are refused at ``line:col`` wherever they occur, raw or escaped.

Budget: :data:`MAX_SPEC_BYTES` of text, :data:`MAX_DEPTH` levels of nesting and
:data:`MAX_NODES` values after alias expansion.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Any

import yaml
from yaml.constructor import SafeConstructor
from yaml.nodes import MappingNode, Node, ScalarNode, SequenceNode

from speccheck.errors import SpecError

__all__ = [
    "MAX_SPEC_BYTES",
    "MAX_DEPTH",
    "MAX_NODES",
    "Document",
    "KeyPath",
    "decode_yaml_bytes",
    "load_yaml",
    "where",
]

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
# Values after alias expansion (aliases can make a small file expand enormously) and levels of
# nesting (a specification needs four; an alias inside its own anchor nests without end).
MAX_NODES = 100_000
MAX_DEPTH = 32
# C0 and C1 control characters except tab, line feed and carriage return; lone surrogates;
# bidirectional embeddings, overrides and isolates (they make text display other than it is).
_FORBIDDEN = re.compile(
    "[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f\ud800-\udfff\u202a-\u202e\u2066-\u2069]"
)

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
    # The source text of each plain scalar value that YAML resolved to a number or boolean
    # (``0123``, ``1:30``, ``1.10``, ``yes``), keyed by its path; positions of those values.
    scalar_text: dict[KeyPath, str] = field(default_factory=dict)
    value_positions: dict[KeyPath, tuple[int, int]] = field(default_factory=dict)
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

    def __init__(self, stream: str, path: str):
        super().__init__(stream)
        self._path = path
        self._depth = 0

    def compose_node(self, parent: Node | None, index: Any) -> Node | None:
        self._depth += 1
        try:
            if self._depth > MAX_DEPTH:
                m = self.peek_event().start_mark
                raise SpecError(
                    f"nested deeper than {MAX_DEPTH} levels",
                    path=self._path,
                    where=where(m.line + 1, m.column + 1),
                )
            return super().compose_node(parent, index)
        finally:
            self._depth -= 1


def _char_name(ch: str) -> str:
    code = ord(ch)
    if 0xD800 <= code <= 0xDFFF:
        return f"lone surrogate U+{code:04X}"
    if code in range(0x202A, 0x202F) or code in range(0x2066, 0x206A):
        return f"bidirectional control character U+{code:04X}"
    return f"control character U+{code:04X}"


def _line_col(text: str, index: int) -> tuple[int, int]:
    """1-based line and column of character ``index`` of ``text``."""
    line = text.count("\n", 0, index) + 1
    return line, index - (text.rfind("\n", 0, index) + 1) + 1


def decode_yaml_bytes(raw: bytes, path: str) -> str:
    """``raw`` as UTF-8 text (a BOM dropped); SpecError at ``line:col`` if it is not UTF-8.

    A UTF-8 encoded surrogate (bytes ED A0..BF ..) is not UTF-8 and is named as a lone surrogate.
    """
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        start = exc.start
    head = raw[:start]
    line = head.count(b"\n") + 1
    col = len(head[head.rfind(b"\n") + 1 :].decode("utf-8-sig", errors="replace")) + 1
    bad = raw[start : start + 3]
    what = (
        "a lone surrogate (U+D800..U+DFFF) encoded as UTF-8"
        if len(bad) >= 2 and bad[0] == 0xED and bad[1] >= 0xA0
        else f"byte 0x{raw[start]:02X} is not UTF-8 text"
    )
    raise SpecError(f"{what}; save the file as UTF-8", path=path, where=where(line, col))


def _check_text(text: str, path: str) -> None:
    """Refuse a forbidden character written raw in ``text``, at its line and column."""
    m = _FORBIDDEN.search(text)
    if m is not None:
        line, col = _line_col(text, m.start())
        raise SpecError(
            f"{_char_name(m.group())} is not allowed", path=path, where=where(line, col)
        )


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
    _check_text(text, path)
    loader = _Composer(text, path)
    try:
        node = loader.get_single_node()
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        problem = exc.problem or exc.context or "not valid YAML"
        place = where(mark.line + 1, mark.column + 1) if mark else None
        raise SpecError(f"YAML syntax: {problem}", path=path, where=place) from None
    except yaml.YAMLError as exc:  # reader errors carry no mark; the text was checked above
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
    doc.data = builder.build(node, (), 0)
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

    def build(self, node: Node, key_path: KeyPath, depth: int) -> Any:
        self.count += 1
        if self.count > MAX_NODES:
            raise self.error(node, f"more than {MAX_NODES} values (aliases expanding?)")
        if depth > MAX_DEPTH:
            raise self.error(
                node, f"nested deeper than {MAX_DEPTH} levels (an alias inside itself?)"
            )
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
                items.append(self.build(item, (*key_path, i), depth + 1))
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
                self.check_chars(key_node)
                key = key_node.value  # a key is the text written, never a number or boolean
                if key in out:
                    raise self.error(key_node, f"duplicate key '{key}'")
                pos = (key_node.start_mark.line + 1, key_node.start_mark.column + 1)
                self.doc.positions[(*key_path, key)] = pos
                out[key] = self.build(value_node, (*key_path, key), depth + 1)
            return out
        raise self.error(node, "unexpected YAML node")  # pragma: no cover

    def scalar(self, node: ScalarNode, key_path: KeyPath | None) -> Any:
        if node.tag not in _PLAIN_SCALARS:
            raise self.error(
                node, f"tag '{_short_tag(node.tag)}' is not allowed in a specification file"
            )
        self.check_chars(node)
        if node.tag == _STR or node.tag == "tag:yaml.org,2002:timestamp":
            if key_path is not None:
                self._record_string(node, key_path)
            return node.value
        if key_path is not None:
            self.doc.value_positions[key_path] = (
                node.start_mark.line + 1,
                node.start_mark.column + 1,
            )
            if node.tag != "tag:yaml.org,2002:null":
                self.doc.scalar_text[key_path] = node.value
        if node.tag == "tag:yaml.org,2002:int":
            return self.scalars.construct_yaml_int(node)
        if node.tag == "tag:yaml.org,2002:float":
            return self.scalars.construct_yaml_float(node)
        if node.tag == "tag:yaml.org,2002:bool":
            return self.scalars.construct_yaml_bool(node)
        return None

    def check_chars(self, node: ScalarNode) -> None:
        """Refuse a forbidden character in a value written with an escape (``"\\x00"``)."""
        m = _FORBIDDEN.search(node.value)
        if m is None:
            return
        start = node.start_mark
        line, col = start.line + 1, start.column + 1
        if start.line < len(self.lines):  # point at the escape when the text before it is literal
            offset = 1 if node.style in ("'", '"') else 0
            written = self.lines[start.line][start.column + offset :]
            if written[: m.start()] == node.value[: m.start()]:
                col += offset + m.start()
        raise SpecError(
            f"{_char_name(m.group())} is not allowed (written as an escape)",
            path=self.path,
            where=where(line, col),
        )

    def _record_string(self, node: ScalarNode, key_path: KeyPath) -> None:
        start, end = node.start_mark, node.end_mark
        if start.line != end.line or start.line >= len(self.lines):
            return
        offset = 1 if node.style in ("'", '"') else 0
        col0 = start.column + offset
        line = self.lines[start.line]
        if line[col0 : col0 + len(node.value)] == node.value:
            self.doc.string_starts[key_path] = (start.line + 1, col0 + 1)
