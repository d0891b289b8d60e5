"""The drawing-callout parser: every accepted form, and malformed callouts with the column.

Callout forms and their meaning: ISO 1302:2002 clause 6 (requirement text, transmission band
λs-λc in mm, U/L limits, section count suffix, 'max'); domain notes section 5 [from memory for
the exact grammar]. The quoted filter names and '16%' are speccheck's documented spellings.
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from speccheck.spec.callout import CalloutError, parse_callout
from speccheck.spec.resolve import render_callout

# (callout, parameter name, sections from the name, upper, lower, rule, filter, λs mm, λc mm)
FORMS = [
    ("Ra 0.8", "Ra", None, 0.8, None, None, None, None, None),
    ("Rz max 6.3", "Rz", None, 6.3, None, "max", None, None, None),
    ("Rzmax 6.3", "Rz", None, 6.3, None, "max", None, None, None),
    ("Rz3max 6.3", "Rz", 3, 6.3, None, "max", None, None, None),
    ("U Rz 4; L Rz 1.6", "Rz", None, 4.0, 1.6, None, None, None, None),
    ("L Rz 1.6; U Rz 4", "Rz", None, 4.0, 1.6, None, None, None, None),
    ("L Ra 0.2", "Ra", None, None, 0.2, None, None, None, None),
    ("U Ra 0.8", "Ra", None, 0.8, None, None, None, None, None),
    ("0.0025-0.8/Rz 6.3", "Rz", None, 6.3, None, None, None, 0.0025, 0.8),
    ("-0.8/Rz3 6.3", "Rz", 3, 6.3, None, None, None, None, 0.8),
    ("0.008-/Ra 1.6", "Ra", None, 1.6, None, None, None, 0.008, None),
    ("Rpk 0.3", "Rpk", None, 0.3, None, None, None, None, None),
    ("Rmr(0.5) 70", "Rmr(0.5)", None, 70.0, None, None, None, None, None),
    ("Rmr(0.5) 70%", "Rmr(0.5)", None, 70.0, None, None, None, None, None),
    ("L Mr1 5", "Mr1", None, None, 5.0, None, None, None, None),
    ("Wa 1.2", "Wa", None, 1.2, None, None, None, None, None),
    ('"Gaussian" 0.0025-0.8/Ra 0.8', "Ra", None, 0.8, None, None, "gaussian", 0.0025, 0.8),
    ('"robust" -0.8/Rpk 0.3', "Rpk", None, 0.3, None, None, "robust", None, 0.8),
    ('"Robust Gaussian" Rvk 2', "Rvk", None, 2.0, None, None, "robust", None, None),
    ('U "Gaussian" -2.5/Rz 40', "Rz", None, 40.0, None, None, "gaussian", None, 2.5),
    ("Ra 16% 0.4", "Ra", None, 0.4, None, "16%", None, None, None),
    ("Rz1max 8", "Rz1max", None, 8.0, None, None, None, None, None),
    ("Rmax 3.2", "Rmax", None, 3.2, None, None, None, None, None),
    ("L Rsk -0.5", "Rsk", None, None, -0.5, None, None, None, None),
    ("RSm 0.12", "RSm", None, 0.12, None, None, None, None, None),
    ("  Ra   .8  ", "Ra", None, 0.8, None, None, None, None, None),
]


@pytest.mark.parametrize("text,name,sections,upper,lower,rule,filt,ls_mm,lc_mm", FORMS)
def test_accepted_forms(text, name, sections, upper, lower, rule, filt, ls_mm, lc_mm):
    c = parse_callout(text)
    assert (c.parameter.name, c.parameter.sections) == (name, sections)
    assert (c.upper, c.lower, c.rule, c.filter) == (upper, lower, rule, filt)
    assert (c.lambda_s_mm, c.lambda_c_mm) == (ls_mm, lc_mm)
    assert c.text == text


@pytest.mark.parametrize("text", [f[0] for f in FORMS])
def test_rendered_callout_parses_back_to_the_same_requirement(text):
    c = parse_callout(text)
    ls_um = c.lambda_s_mm * 1000.0 if c.lambda_s_mm is not None else None
    again = parse_callout(
        render_callout(c.parameter_text, c.upper, c.lower, c.rule, c.filter, ls_um, c.lambda_c_mm)
    )
    assert (again.parameter, again.upper, again.lower, again.rule, again.filter) == (
        c.parameter,
        c.upper,
        c.lower,
        c.rule,
        c.filter,
    )
    assert again.lambda_c_mm == c.lambda_c_mm
    assert (
        again.lambda_s_mm == pytest.approx(c.lambda_s_mm)
        if c.lambda_s_mm
        else again.lambda_s_mm is None
    )


# (callout, exact message, 1-based column of the offending character)
MALFORMED = [
    ("", "empty callout", 1),
    ("Rx 0.8", "unknown parameter 'Rx'", 1),
    ("Ra", "expected the limit of Ra (a number), found the end", 3),
    ("Ra 0,8", "use '.' as the decimal separator in the limit of Ra (did you mean '0.8'?)", 5),
    (
        "Ra0.8",
        "did you mean 'Ra 0.8'? a space separates the parameter from its limit "
        "('Ra3 ...' would mean 3 sections)",
        3,
    ),
    (
        "Rz3.2",
        "did you mean 'Rz 3.2'? a space separates the parameter from its limit "
        "('Rz3 ...' would mean 3 sections)",
        3,
    ),
    ("Rz max6.3", "did you mean 'Rz max 6.3'? a space separates 'max' from the limit", 7),
    ("ra 0.8", "unknown parameter 'ra' (did you mean 'Ra'?)", 1),
    ("Rz maxx 6.3", "expected the limit of Rz (a number), found 'maxx'", 4),
    ("Ra 0.8 um", "unexpected 'um' after the limit (the limit is in µm; write the number only)", 8),
    ("Ra -0.8", "the limit of Ra must not be negative", 4),
    ("Rz0 6.3", "the section count of 'Rz0' must be at least 1", 3),
    ('"Gauss" Ra 0.8', 'unknown filter type "Gauss" (use "Gaussian" or "robust")', 1),
    ('"Gaussian Ra 0.8', "unterminated filter name (missing closing '\"')", 1),
    ("0.8/Ra 0.8", "missing '-' in the transmission band (write λs-λc/ in mm, e.g. '-0.8/')", 4),
    ("-/Ra 0.8", "the transmission band gives neither λs nor λc", 1),
    ("0.8-0.0025/Ra 0.8", "λs must be shorter than λc in the transmission band", 1),
    ("0.0025-0.8x/Ra 0.8", "unexpected 'x/Ra' in the transmission band", 11),
    ("-0/Ra 0.8", "λc must be greater than 0", 2),
    ("U Rz 4; U Rz 1.6", "both limits are upper limits; mark one U and the other L", 9),
    (
        "U Rz 4; L Ra 1.6",
        "the two limits name different parameters ('Rz', 'Ra'); write them as two requirements",
        11,
    ),
    ("Ra 0.8; Ra 0.4", "in a callout with two limits, mark one U and the other L", 1),
    (
        "U Rz max 4; L Rz 1.6",
        "both limits must state the same rule ('max' on both or on neither)",
        15,
    ),
    ("U Ra 0.8; L Ra 0.2; U", "at most two limits (one U, one L) in one callout", 19),
    ("U Ra 0.8;", "empty limit: expected a parameter and a value", 10),
    ("U 0.8", "expected a parameter such as 'Ra' or 'Rz', found '0.8'", 3),
    ("U U Ra 0.8", "the limit is marked U or L twice", 3),
    ("Rmr(0.5 70", "missing ')' after the parameter's argument", 4),
    (
        "Ra 0.8 max",
        "unexpected 'max' after the limit (the limit is in µm; write the number only)",
        8,
    ),
]


@pytest.mark.parametrize("text,message,column", MALFORMED)
def test_malformed_callouts_point_at_the_character(text, message, column):
    with pytest.raises(CalloutError) as info:
        parse_callout(text)
    assert info.value.message == message
    assert info.value.column == column


# --- property: any text either parses or fails with a column inside (or just after) the text ----


@settings(max_examples=400, deadline=None)
@given(st.text(alphabet='RWPazqktpvSmMr1235086.-/ ;"%()ULxGausinob', max_size=30))
def test_any_text_parses_or_fails_with_a_column(text):
    try:
        c = parse_callout(text)
    except CalloutError as exc:
        assert 1 <= exc.column <= len(text) + 1
        assert exc.message and "\n" not in exc.message
    else:
        assert c.upper is not None or c.lower is not None
