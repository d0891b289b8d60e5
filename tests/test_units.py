"""Unit factors and length parsing (speccheck.units)."""

from __future__ import annotations

import pint
import pytest

from speccheck.errors import SpeccheckError
from speccheck.units import UM_PER_UNIT, Length, canonical_unit, parse_length, um_per_unit

_UREG = pint.UnitRegistry()


def test_inch_is_exactly_25_4_mm():
    # 1 in = 25.4 mm exactly, 1 µin = 0.0254 µm (NIST SP 811:2008, B.8, "inch").
    assert UM_PER_UNIT["in"] == 25400.0
    assert UM_PER_UNIT["uin"] == 0.0254
    assert Length.of(1, "in").mm == 25.4
    assert Length.of(1000, "uin").um == 25.4


@pytest.mark.parametrize(
    "unit, pint_unit",
    [
        ("m", "meter"),
        ("mm", "millimeter"),
        ("um", "micrometer"),
        ("nm", "nanometer"),
        ("in", "inch"),
        ("uin", "microinch"),
    ],
)
def test_factors_agree_with_pint(unit, pint_unit):
    # Reference library: pint's definitions (SI prefixes; international inch).
    expected = _UREG.Quantity(1.0, pint_unit).to("micrometer").magnitude
    assert UM_PER_UNIT[unit] == pytest.approx(expected, rel=1e-15)


@pytest.mark.parametrize("spelling", ["µm", "μm", "um", "micron", "micrometre", " um "])
def test_micrometre_spellings(spelling):
    # U+00B5 micro sign and U+03BC Greek mu both occur in instrument exports (common practice).
    assert canonical_unit(spelling) == "um"


@pytest.mark.parametrize(
    "text, um",
    [
        ("0.8mm", 800.0),  # λc 0.8 mm (ISO 4288 Table 1 value)
        ("2.5 µm", 2.5),  # λs 2.5 µm (ISO 3274 Table 1 value)
        ("100nm", 0.1),
        ("32 uin", 32 * 0.0254),  # NIST SP 811 B.8
        ("1e-3 m", 1000.0),
        (".5um", 0.5),
    ],
)
def test_parse_length(text, um):
    assert parse_length(text).um == pytest.approx(um, rel=1e-15)


def test_free_form_units_go_through_pint():
    # 1 ft = 0.3048 m exactly (NIST SP 811 B.8); not in the exact table, so pint converts it.
    assert parse_length("1 foot").um == pytest.approx(304800.0, rel=1e-15)


def test_bare_number_needs_a_unit():
    with pytest.raises(SpeccheckError, match=r"length '0.8' has no unit"):
        parse_length("0.8")
    assert parse_length(0.8, default_unit="mm").um == 800.0


def test_unknown_unit_names_the_place():
    with pytest.raises(SpeccheckError, match=r"^spec.yaml:3: unknown length unit 'furlongs'"):
        um_per_unit("furlongs", path="spec.yaml", where="line 3")
    with pytest.raises(SpeccheckError, match=r"unknown length unit 'kg'"):
        parse_length("3 kg")
