"""Which columns of a delimited export hold x and z: by the header's names, or by ``--columns``.

Header cells are ``name [unit]`` (or ``name (unit)``). Position columns are named ``x``,
``position`` or ``distance``; height columns ``z``, ``height`` or ``profile`` (case ignored).
Every other column (an index, a time, an intensity, a flag) is kept out of the computation and
listed in :attr:`Layout.ignored`. A header with two or more height columns (``z1 [um]``,
``z2 [um]``) holds several profiles: one is read only when ``--columns`` names it.

``--columns`` text: ``z=SEL`` and optionally ``x=SEL``, comma-separated, where ``SEL`` is a
header name (``z=Height``) or a column number from 1 (``z=3``), optionally with a unit
(``z=3[um]``) that replaces or supplies the header's. A file without a header line is read when
``--columns`` gives every column it uses by number with a unit (``x=1[mm],z=2[um]``).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from speccheck.errors import InputError
from speccheck.units import UM_PER_UNIT, canonical_unit

__all__ = ["Layout", "Selector", "parse_columns_option", "layout_from_header", "headerless_layout"]

_CELL = re.compile(r"^\s*([A-Za-z][\w .-]*?)\s*(?:[\[(]\s*([^\])]*?)\s*[\])])?\s*$")
_SELECTOR = re.compile(r"^\s*(x|z)\s*=\s*([^\[\]]+?)\s*(?:\[\s*([^\]]*?)\s*\])?\s*$", re.I)
X_NAMES = frozenset({"x", "position", "distance"})
Z_NAMES = frozenset({"z", "height", "profile"})
_Z_NUMBERED = re.compile(r"^(z|height|profile)[ _-]?\d+$")
_DEFAULT_UNIT = {"x": "mm", "z": "um"}
OPTION = "option --columns"


@dataclass(frozen=True)
class Selector:
    """One role of ``--columns``: a header name or a column number (from 1), unit optional."""

    role: str  # "x" or "z"
    name: str | None
    number: int | None
    unit: str | None


@dataclass(frozen=True)
class Layout:
    """The columns a delimited file is read from (indices from 0, scales in µm per unit)."""

    ncol: int
    z: tuple[int, float]
    x: tuple[int, float] | None
    ignored: tuple[str, ...] = ()  # header text of the columns kept out


def parse_columns_option(text: str, *, path: str) -> dict[str, Selector]:
    """``{"x": Selector, "z": Selector}`` from ``--columns`` text; InputError naming the option."""
    chosen: dict[str, Selector] = {}
    for part in text.split(","):
        m = _SELECTOR.match(part)
        if m is None:
            raise InputError(
                f"{OPTION}: cannot read {part.strip()!r}; write e.g. 'x=1,z=3' or 'z=Height[um]'",
                path=path,
            )
        role, sel, unit = m.group(1).lower(), m.group(2), m.group(3)
        if role in chosen:
            raise InputError(f"{OPTION}: {role} is given twice", path=path)
        number = int(sel) if sel.isdigit() else None
        if number is not None and number < 1:
            raise InputError(f"{OPTION}: column numbers start at 1, got {sel}", path=path)
        chosen[role] = Selector(role, None if number else sel.strip(), number, unit or None)
    if "z" not in chosen:
        raise InputError(f"{OPTION}: name the height column, e.g. 'z=2'", path=path)
    return chosen


def _scale(role: str, unit: str | None, label: str, *, path: str, where: str) -> float:
    if not unit:
        raise InputError(
            f"{label} has no unit; write e.g. '{role} [{_DEFAULT_UNIT[role]}]' in the header "
            f"or '{role}=N[{_DEFAULT_UNIT[role]}]' with --columns",
            path=path,
            where=where,
        )
    c = canonical_unit(unit)
    if c is None:
        known = ", ".join(["µm", *UM_PER_UNIT])
        raise InputError(f"unknown length unit {unit!r} (known: {known})", path=path, where=where)
    return UM_PER_UNIT[c]


def _cells(cells: list[str]) -> list[tuple[str, str | None]]:
    """(lower-case name, unit) per header cell; a cell that is not ``name [unit]`` keeps its
    whole text as the name."""
    out: list[tuple[str, str | None]] = []
    for cell in cells:
        m = _CELL.match(cell)
        if m is None:
            out.append((cell.strip().lower(), None))
        else:
            out.append((" ".join(m.group(1).lower().split()), m.group(2) or None))
    return out


def _pick(
    sel: Selector, named: list[tuple[str, str | None]], cells: list[str], *, path: str, line: int
) -> int:
    if sel.number is not None:
        if sel.number > len(named):
            raise InputError(
                f"{OPTION}: {sel.role}={sel.number}, but the file has {len(named)} columns",
                path=path,
                where=f"line {line}",
            )
        return sel.number - 1
    want = " ".join(str(sel.name).lower().split())
    hits = [k for k, (n, _) in enumerate(named) if want in (n, cells[k].strip().lower())]
    if len(hits) != 1:
        listed = ", ".join(repr(c.strip()) for c in cells)
        what = "no column" if not hits else "more than one column"
        raise InputError(
            f"{OPTION}: {what} named {sel.name!r} (columns: {listed})",
            path=path,
            where=f"line {line}",
        )
    return hits[0]


def _auto(role: str, named: list[tuple[str, str | None]], cells: list[str], path: str, line: int):
    if role == "x":
        found = [k for k, (n, _) in enumerate(named) if n in X_NAMES]
    else:
        found = [k for k, (n, _) in enumerate(named) if n in Z_NAMES or _Z_NUMBERED.match(n)]
    if len(found) > 1:
        listed = ", ".join(repr(cells[k].strip()) for k in found)
        more = (
            "this file holds several profiles; pick one with --columns z=NAME"
            if role == "z"
            else "pick one with --columns x=NAME"
        )
        raise InputError(
            f"{len(found)} {'height' if role == 'z' else 'position'} columns ({listed}): {more}",
            path=path,
            where=f"line {line}",
        )
    return found[0] if found else None


def layout_from_header(
    cells: list[str], chosen: dict[str, Selector] | None, *, path: str, line: int
) -> Layout:
    """The layout of a file whose header line (split into ``cells``) is at ``line``."""
    named = _cells(cells)
    picked: dict[str, tuple[int, float]] = {}
    for role in ("z", "x"):
        sel = (chosen or {}).get(role)
        k = (
            _pick(sel, named, cells, path=path, line=line)
            if sel
            else _auto(role, named, cells, path, line)
        )
        if k is None:
            if role == "z":
                raise InputError(
                    "no height column in the header; name it 'z [um]' or pick it with "
                    "--columns z=NAME",
                    path=path,
                    where=f"line {line}",
                )
            continue
        unit = sel.unit if sel and sel.unit else named[k][1]
        where = f"line {line}, column {k + 1}"
        picked[role] = (
            k,
            _scale(role, unit, f"column {cells[k].strip()!r}", path=path, where=where),
        )
    if "x" in picked and picked["x"][0] == picked["z"][0]:
        raise InputError(
            "x and z are the same column",
            path=path,
            where=f"line {line}, column {picked['z'][0] + 1}",
        )
    used = {v[0] for v in picked.values()}
    ignored = tuple(c.strip() for k, c in enumerate(cells) if k not in used)
    return Layout(len(cells), picked["z"], picked.get("x"), ignored)


def headerless_layout(
    ncol: int, chosen: dict[str, Selector] | None, *, path: str, line: int
) -> Layout:
    """The layout of a file whose first line is data: every used column by number with a unit."""
    if not chosen or any(s.number is None or not s.unit for s in chosen.values()):
        raise InputError(
            "no header line; name the columns and their units first, e.g. 'x [mm],z [um]', "
            "or give them with --columns x=1[mm],z=2[um]",
            path=path,
            where=f"line {line}",
        )
    picked = {}
    for role, sel in chosen.items():
        assert sel.number is not None
        if sel.number > ncol:
            raise InputError(
                f"{OPTION}: {role}={sel.number}, but line {line} has {ncol} fields",
                path=path,
                where=f"line {line}",
            )
        where = f"line {line}, column {sel.number}"
        picked[role] = (sel.number - 1, _scale(role, sel.unit, role, path=path, where=where))
    if "x" in picked and picked["x"][0] == picked["z"][0]:
        raise InputError("x and z are the same column", path=path, where=f"line {line}")
    return Layout(ncol, picked["z"], picked.get("x"))
