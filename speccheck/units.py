"""Unit conversion, in one place.

Inside speccheck every length carries its unit in its name (``dx_um``, ``lambda_c_mm``) or is
a :class:`Length`. Heights are micrometres, positions and cut-offs millimetres, short-wave
cut-offs micrometres. Text from users and files ("0.8mm", "2.5 µm", "uin") is turned into
those units here and nowhere else. Factors are exact decimal definitions (1 in = 25.4 mm
exactly, NIST SP 811 B.8); :mod:`pint` parses free-form quantities.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from functools import lru_cache

from speccheck.errors import SpeccheckError

__all__ = [
    "Length",
    "UM_PER_UNIT",
    "um_per_unit",
    "parse_length",
    "canonical_unit",
    "DRAWING_UNITS",
    "UM_PER_UIN",
    "to_drawing_unit",
]

#: 1 µin = 0.0254 µm exactly (1 in = 25.4 mm, NIST SP 811 appendix B).
UM_PER_UIN = 0.0254
#: Units a drawing states its height limits in: spec spelling -> display symbol.
DRAWING_UNITS = {"um": "µm", "uin": "µin"}


def to_drawing_unit(value_um: float, drawing_unit: str) -> float:
    """A height in µm expressed in the drawing's unit (``"µm"`` or ``"µin"``)."""
    return value_um / UM_PER_UIN if drawing_unit == "µin" else value_um


# Micrometres per one of the unit. Exact by definition (SI prefixes; inch: NIST SP 811).
UM_PER_UNIT: dict[str, float] = {
    "m": 1e6,
    "mm": 1e3,
    "um": 1.0,
    "nm": 1e-3,
    "in": 25400.0,
    "uin": 0.0254,
}

_ALIASES = {
    "µm": "um",  # U+00B5 micro sign
    "μm": "um",  # U+03BC Greek mu
    "micron": "um",
    "microns": "um",
    "micrometre": "um",
    "micrometer": "um",
    "millimetre": "mm",
    "millimeter": "mm",
    "nanometre": "nm",
    "nanometer": "nm",
    "metre": "m",
    "meter": "m",
    "inch": "in",
    "µin": "uin",
    "μin": "uin",
    "microinch": "uin",
}


def canonical_unit(unit: str) -> str | None:
    """The canonical spelling of a length unit (``"µm"`` -> ``"um"``), or None if unknown."""
    u = unit.strip()
    u = _ALIASES.get(u, _ALIASES.get(u.lower(), u))
    return u if u in UM_PER_UNIT else None


def um_per_unit(unit: str, *, path: str | None = None, where: str | None = None) -> float:
    """Micrometres per ``unit``; raises :class:`SpeccheckError` naming the place if unknown."""
    c = canonical_unit(unit)
    if c is None:
        known = ", ".join(["µm", *UM_PER_UNIT])
        raise SpeccheckError(
            f"unknown length unit {unit!r} (known: {known})", path=path, where=where
        )
    return UM_PER_UNIT[c]


@dataclass(frozen=True, order=True)
class Length:
    """A length; stored in micrometres, built and read in any known unit."""

    um: float

    @classmethod
    def of(cls, value: float, unit: str) -> Length:
        return cls(float(value) * um_per_unit(unit))

    @property
    def mm(self) -> float:
        return self.um / 1e3

    @property
    def nm(self) -> float:
        return self.um * 1e3

    def to(self, unit: str) -> float:
        return self.um / um_per_unit(unit)

    def __str__(self) -> str:
        if self.um >= 100.0:
            return f"{self.mm:g} mm"
        return f"{self.um:g} µm"


_NUMBER_UNIT = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*([^\d\s].*?)?\s*$")


@lru_cache(maxsize=1)
def _ureg():  # pragma: no cover - trivial
    import pint

    return pint.UnitRegistry()


def parse_length(
    text: str | float | int,
    *,
    default_unit: str | None = None,
    path: str | None = None,
    where: str | None = None,
) -> Length:
    """Parse ``"0.8mm"``, ``"2.5 µm"``, ``"100nm"``, ``"32 uin"`` into a :class:`Length`.

    A bare number takes ``default_unit``; without one it is an error, because a number without
    a unit must not cross into the program.
    """
    if isinstance(text, bool):
        raise SpeccheckError(f"expected a length, got {text!r}", path=path, where=where)
    if isinstance(text, (int, float)):
        if default_unit is None:
            raise SpeccheckError(
                f"length {text!r} has no unit (write e.g. '{text}um' or '{text}mm')",
                path=path,
                where=where,
            )
        value, unit = float(text), default_unit
    else:
        m = _NUMBER_UNIT.match(str(text))
        if not m:
            raise SpeccheckError(
                f"cannot read {text!r} as a length such as '0.8mm'", path=path, where=where
            )
        value = float(m.group(1))
        found: str | None = m.group(2) or default_unit
        if found is None:
            raise SpeccheckError(
                f"length {text!r} has no unit (write e.g. '{text}um' or '{text}mm')",
                path=path,
                where=where,
            )
        unit = found
    if not math.isfinite(value):
        raise SpeccheckError(f"length {text!r} is not a finite number", path=path, where=where)
    c = canonical_unit(unit)
    if c is not None:
        return Length(value * UM_PER_UNIT[c])
    # Anything else: let pint decide whether it is a length at all.
    try:
        q = _ureg().Quantity(value, unit.strip())
        return Length(float(q.to("micrometer").magnitude))
    except Exception as exc:  # pint raises several unrelated types
        raise SpeccheckError(
            f"unknown length unit {unit.strip()!r} in {text!r}", path=path, where=where
        ) from exc
