"""Names, units and families of the profile parameters speccheck knows.

A plain table, so that a reader finds any parameter here and its formula in the module named in
``function``. Names follow ISO 4287 / ISO 21920-2 spelling with the profile letter first
(``R`` roughness, ``W`` waviness, ``P`` primary): ``Ra``, ``Wa``, ``Pa``. ASCII stands for Greek:
``Rdq`` = RΔq, ``Rdc`` = Rδc. Parametrised names: ``Rmr(c)`` with the level c in µm below the
highest peak of the evaluation length (``Rmr(0.5)``), ``Rdc(a-b)`` with material ratios in %
(``Rdc(20-80)``). A trailing section count changes the number of sections (``Rz3``).
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Literal

__all__ = [
    "ParameterInfo",
    "PARAMETERS",
    "ParsedName",
    "parse_parameter_name",
    "DEFINITIONS",
    "FIELD_UNDER_ISO21920",
    "basis",
    "basis_words",
    "STRATIFIED",
    "reference_line",
]

Scope = Literal["section", "evaluation"]  # averaged over sections, or over the evaluation length


@dataclass(frozen=True)
class ParameterInfo:
    unit: str  # "µm", "mm", "%", "", "1/cm", "µm·%"
    scope: Scope
    standard: str  # where the definition is, one line
    profiles: str  # which profile letters it exists for: "RWP" or "R"
    single_point_sensitive: bool = False  # rests on a few points (see diagnostics)
    takes_argument: bool = False


# Base names without the profile letter; the letter is added by parse_parameter_name.
PARAMETERS: dict[str, ParameterInfo] = {
    # ISO 4287:1997 4.1 / 4.2 amplitude parameters (ISO 21920-2:2021 sections 4.3, 4.4)
    "a": ParameterInfo("µm", "section", "ISO 4287:1997 4.2.1; ISO 21920-2:2021", "RWP"),
    "q": ParameterInfo("µm", "section", "ISO 4287:1997 4.2.2; ISO 21920-2:2021", "RWP"),
    "sk": ParameterInfo("", "section", "ISO 4287:1997 4.2.3; ISO 21920-2:2021", "RWP", True),
    "ku": ParameterInfo("", "section", "ISO 4287:1997 4.2.4; ISO 21920-2:2021", "RWP", True),
    "p": ParameterInfo("µm", "section", "ISO 4287:1997 4.1.1; ISO 21920-2:2021", "RWP"),
    "v": ParameterInfo("µm", "section", "ISO 4287:1997 4.1.2; ISO 21920-2:2021", "RWP"),
    "z": ParameterInfo("µm", "section", "ISO 4287:1997 4.1.3; ISO 21920-2:2021", "RWP"),
    "t": ParameterInfo("µm", "evaluation", "ISO 4287:1997 4.1.6", "RWP", True),
    "c": ParameterInfo("µm", "section", "ISO 4287:1997 4.1.4 (profile elements, 3.2.9)", "RWP"),
    "Sm": ParameterInfo("mm", "section", "ISO 4287:1997 4.3.1 (profile elements, 3.2.9)", "RWP"),
    "dq": ParameterInfo("", "section", "ISO 4287:1997 4.4.1 (RΔq)", "RWP"),
    "mr": ParameterInfo("%", "evaluation", "ISO 4287:1997 4.5.1 (Rmr(c))", "RWP", False, True),
    "dc": ParameterInfo("µm", "evaluation", "ISO 4287:1997 4.5.3 (Rδc)", "RWP", False, True),
    "z1max": ParameterInfo(
        "µm", "evaluation", "ISO 4288:1996 / ISO 21920-2 (largest section Rz)", "RWP", True
    ),
    # ISO 13565-2:1996 (R profile after the ISO 13565-1 reference line)
    "k": ParameterInfo("µm", "evaluation", "ISO 13565-2:1996 4.1 (core roughness depth)", "R"),
    "pk": ParameterInfo("µm", "evaluation", "ISO 13565-2:1996 4.2 (reduced peak height)", "R"),
    "vk": ParameterInfo("µm", "evaluation", "ISO 13565-2:1996 4.3 (reduced valley depth)", "R"),
    "mr1": ParameterInfo("%", "evaluation", "ISO 13565-2:1996 4.4 (Mr1)", "R"),
    "mr2": ParameterInfo("%", "evaluation", "ISO 13565-2:1996 4.5 (Mr2)", "R"),
    "A1": ParameterInfo("µm·%", "evaluation", "ISO 13565-2:1996 4.6 (peak area)", "R"),
    "A2": ParameterInfo("µm·%", "evaluation", "ISO 13565-2:1996 4.7 (valley area)", "R"),
    # ISO 13565-3:1998 (normal probability material ratio curve)
    "pq": ParameterInfo("µm", "evaluation", "ISO 13565-3:1998 (plateau Rq)", "R"),
    "vq": ParameterInfo("µm", "evaluation", "ISO 13565-3:1998 (valley Rq)", "R"),
    "mq": ParameterInfo(
        "%", "evaluation", "ISO 13565-3:1998 (material ratio at the transition)", "R"
    ),
    # ASME B46.1-2019 section 1
    "pm": ParameterInfo("µm", "section", "ASME B46.1 1-4.1 (mean of section Rp)", "RWP"),
    "vm": ParameterInfo("µm", "section", "ASME B46.1 1-4.1 (mean of section Rv)", "RWP"),
    "max": ParameterInfo(
        "µm", "evaluation", "ASME B46.1 1-4.1 (largest section peak-to-valley)", "R", True
    ),
    "pc": ParameterInfo("1/cm", "evaluation", "ASME B46.1 1-5 (peak count per unit length)", "R"),
}

#: Which edition's definitions a value is computed under: ISO 4287:1997 (with ISO 4288:1996,
#: ISO 13565, ASME B46.1 as listed above) or ISO 21920-2:2021.
DEFINITIONS = ("iso4287", "iso21920-2")

#: Base names that ISO 4287 defines on a sampling length (a mean of section values) and
#: ISO 21920-2:2021 defines over the whole evaluation length (from memory: that edition's field
#: parameters Ra, Rq, Rsk, Rku, RΔq; the profile-element parameters Rc and RSm are evaluated on
#: the elements of the whole evaluation length). Rz, Rp, Rv stay means of section values in
#: both editions; Rt, the material-ratio family and ISO 13565 are over the evaluation length in
#: both.
FIELD_UNDER_ISO21920 = frozenset({"a", "q", "sk", "ku", "dq", "c", "Sm"})


def basis(base: str, definitions: str = "iso4287") -> Literal["field", "section"]:
    """``"field"`` (over the evaluation length) or ``"section"`` (mean of section values)."""
    if definitions not in DEFINITIONS:
        raise ValueError(f"unknown definitions {definitions!r} (known: {', '.join(DEFINITIONS)})")
    if PARAMETERS[base].scope == "evaluation":
        return "field"
    if definitions == "iso21920-2" and base in FIELD_UNDER_ISO21920:
        return "field"
    return "section"


def basis_words(base: str, definitions: str, sections: int) -> str:
    """The basis in words, e.g. "mean of 5 section values (ISO 4287:1997)"."""
    edition = "ISO 21920-2:2021" if definitions == "iso21920-2" else "ISO 4287:1997"
    if basis(base, definitions) == "field":
        return f"field value over the whole evaluation length ({edition})"
    return f"mean of {sections} section value{'s' if sections != 1 else ''} ({edition})"


#: Bases computed on the ISO 13565-1 (or ISO 16610-31) roughness profile, not the plain R.
STRATIFIED = frozenset({"k", "pk", "vk", "mr1", "mr2", "A1", "A2", "pq", "vq", "mq"})


def reference_line(base: str, filter: str) -> str:
    """The mean line a parameter is actually measured from, in words (as compute applies it)."""
    if filter in ("robust", "robust-order0"):
        order = 0 if filter == "robust-order0" else 2
        return f"robust Gaussian regression filter, order {order} (ISO 16610-31)"
    if base in STRATIFIED or filter == "iso13565-1":
        return (
            "ISO 13565-1 valley-suppressed reference line (Gaussian mean line, valleys below "
            "it cut off, filtered again)"
        )
    return "Gaussian filter (ISO 16610-21)"


# Spelling on drawings and in output for the ISO 13565-2 material ratios (no profile letter).
DISPLAY_ALIASES = {"Rmr1": "Mr1", "Rmr2": "Mr2", "RA1": "A1", "RA2": "A2"}

_NAME = re.compile(
    r"^(?P<letter>[RWP])(?P<base>z1max|max|mr1|mr2|mr|dc|dq|Sm|sk|ku|pk|vk|pq|vq|mq|pm|vm|pc|A1|A2|"
    r"a|q|p|v|z|t|c|k)(?P<sections>[1-9][0-9]?)?(?:\((?P<arg>[^()]*)\))?$"
)


@dataclass(frozen=True)
class ParsedName:
    letter: str  # R, W or P
    base: str  # key of PARAMETERS
    sections: int | None  # from a numeric suffix (Rz3 -> 3), else None
    argument: str | None  # "0.5" for Rmr(0.5), "20-80" for Rdc(20-80)

    @property
    def info(self) -> ParameterInfo:
        return PARAMETERS[self.base]

    @property
    def name(self) -> str:
        """Canonical name as computed (without the section suffix)."""
        n = self.letter + self.base
        n = {"Rmr1": "Mr1", "Rmr2": "Mr2", "RA1": "A1", "RA2": "A2"}.get(n, n)
        return f"{n}({self.argument})" if self.argument is not None else n


def parse_parameter_name(text: str) -> ParsedName | None:
    """Split ``"Rz3"``, ``"Rmr(0.5)"``, ``"Mr1"``, ``"Wa"`` into its parts; None if unknown."""
    t = text.strip()
    t = {"Mr1": "Rmr1", "Mr2": "Rmr2", "A1": "RA1", "A2": "RA2", "RSm": "RSm"}.get(t, t)
    m = _NAME.match(t)
    if not m:
        return None
    letter, base = m["letter"], m["base"]
    info = PARAMETERS[base]
    if letter not in info.profiles:
        return None
    if info.takes_argument != (m["arg"] is not None):
        return None
    if m["sections"] is not None and info.scope != "section" and base != "z1max":
        return None
    sections = int(m["sections"]) if m["sections"] else None
    return ParsedName(letter, base, sections, m["arg"])
