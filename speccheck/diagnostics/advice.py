"""Advice for specification authors: a function controlled only by single-point parameters.

Two functions of a surface are commonly put on a drawing through parameters that one scratch,
pore or dust particle can swing (common practice, no source):

* **peak/valley balance** (bearing surface, oil retention) through Rsk or Rku, third and
  fourth powers of the heights;
* **extreme height** (sealing, leak paths) through Rt, Rmax or Rz1max, single extremes.

When a specification controls one of these functions *only* through such parameters,
:func:`sensitive_parameter_advice` names the stable ways to express it: section-averaged Rp/Rv,
ASME Rpm/Rvm and the Rk family (ISO 13565-2) for the balance; section-averaged Rz, Rpm + Rvm
and the Rk family for the height. Which parameters count as single-point sensitive is
``speccheck.parameters.names.PARAMETERS[base].single_point_sensitive``.
"""

from __future__ import annotations

from collections.abc import Sequence

__all__ = ["BALANCE_BASES", "EXTREME_BASES", "sensitive_parameter_advice"]

#: Single-point-sensitive bases that express peak/valley balance, and their stable counterparts.
BALANCE_BASES = ("sk", "ku")
_BALANCE_STABLE = (
    "p",
    "v",
    "pm",
    "vm",
    "k",
    "pk",
    "vk",
    "mr1",
    "mr2",
    "A1",
    "A2",
    "pq",
    "vq",
    "mq",
)
#: Single-point-sensitive bases that express an extreme height, and their stable counterparts.
EXTREME_BASES = ("t", "max", "z1max")
# Averages (Ra, Rq) do not control the extremes; section means and the Rk family do.
_EXTREME_STABLE = ("z", "p", "v", "pm", "vm", "k", "pk", "vk", "c")


def _rk(letter: str, members: str) -> str:
    """The Rk family exists for the roughness profile only (ISO 13565-2)."""
    return f" or the Rk family ({members}; ISO 13565-2)" if letter == "R" else ""


def sensitive_parameter_advice(parameters: Sequence[str]) -> list[str]:
    """Advice lines for a specification's parameters (empty when nothing to say).

    Parameters
    ----------
    parameters : sequence of str
        Parameter names as the specification gives them (``"Rsk"``, ``"Rz3"``, ``"Rmax"``);
        unknown names are ignored (the specification check reports them).

    Returns
    -------
    list of str
        One line per function controlled only through single-point-sensitive parameters,
        naming them and the stable alternatives. Never a verdict.
    """
    from speccheck.parameters.names import parse_parameter_name

    parsed = [p for p in (parse_parameter_name(n) for n in parameters) if p is not None]
    out: list[str] = []
    for letter in dict.fromkeys(p.letter for p in parsed):
        mine = [p for p in parsed if p.letter == letter]
        bases = {p.base for p in mine}
        balance = [p.name for p in mine if p.base in BALANCE_BASES]
        if balance and not bases & set(_BALANCE_STABLE):
            names = ", ".join(dict.fromkeys(balance))
            out.append(
                f"peak/valley balance is controlled only through {names}, which a single "
                f"scratch, pore or dust particle can swing (heights cubed or raised to the "
                f"fourth power); consider section-averaged {letter}p/{letter}v, ASME "
                f"{letter}pm/{letter}vm{_rk(letter, 'Rk, Rpk, Rvk, Mr1, Mr2')}"
            )
        extreme = [p.name for p in mine if p.base in EXTREME_BASES]
        if extreme and not bases & set(_EXTREME_STABLE):
            names = ", ".join(dict.fromkeys(extreme))
            out.append(
                f"height is controlled only through {names}, a single extreme that one "
                f"scratch or dust particle sets; consider section-averaged {letter}z, ASME "
                f"{letter}pm + {letter}vm{_rk(letter, 'Rk, Rpk, Rvk')}"
            )
    return out
