"""Parser of drawing-style surface-texture callouts (ISO 1302:2002 requirement text).

Grammar accepted (spaces between tokens are optional where nothing is ambiguous)::

    callout  := limit [ ";" limit ]                  two limits: one U and one L, same parameter
    limit    := [side] [filter] [band "/"] [side] parameter [rule] number ["%"]
    side     := "U" | "L"                            upper / lower limit (none: upper limit)
    filter   := '"' name '"'                         "Gaussian" (ISO 16610-21);
                                                     "robust" or "robust Gaussian" (ISO 16610-31)
                                                     any letter case
    band     := [λs] "-" [λc]                        in mm: "0.0025-0.8", "0.008-", "-0.8"
    parameter:= profile letter + name [sections] [ "(" argument ")" ]
                                                     Ra Rz Rz3 Rq Rsk Rku Rp Rv Rt Rc RSm Rdq
                                                     Rmr(0.5) Rdc(20-80) Rz1max Rk Rpk Rvk Mr1
                                                     Mr2 A1 A2 Rpq Rvq Rmq Rpm Rvm Rmax Rpc Wa ...
    rule     := "max" | "16%"                        written after the parameter (also "Rz3max")
    number   := digits ["." digits] | "." digits     in the parameter's unit (µm, %, mm, none);
                                                     a minus sign only for Rsk (Psk, Wsk)

Examples: ``Ra 0.8``, ``Rz max 6.3``, ``U Rz 4; L Rz 1.6``, ``L Ra 0.2``, ``0.0025-0.8/Rz 6.3``,
``-0.8/Rz3 6.3``, ``"robust" -0.8/Rpk 0.3``, ``Rmr(0.5) 70``. Anything else is refused with the
column of the offending character (1-based, within the callout text).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from speccheck.errors import SpecError
from speccheck.parameters.names import ParsedName, parse_parameter_name

__all__ = ["Callout", "CalloutError", "FILTER_SPELLINGS", "parse_callout"]

#: Filter names accepted between double quotes (compared in lower case).
FILTER_SPELLINGS: dict[str, Literal["gaussian", "robust"]] = {
    "gaussian": "gaussian",
    "robust": "robust",
    "robust gaussian": "robust",
}


class CalloutError(SpecError):
    """A callout that does not follow the grammar; ``column`` is 1-based within the callout."""

    def __init__(self, message: str, column: int):
        super().__init__(message)
        self.column = column


@dataclass(frozen=True)
class Callout:
    """A parsed callout. Lengths in the names' units; limits in the parameter's unit."""

    text: str
    parameter: ParsedName
    parameter_text: str  # as written, e.g. "Rz3"
    upper: float | None
    lower: float | None
    rule: Literal["max", "16%"] | None  # None: not stated in the callout
    filter: Literal["gaussian", "robust"] | None
    lambda_s_mm: float | None  # from the transmission band, None if not given there
    lambda_c_mm: float | None


@dataclass(frozen=True)
class _Limit:
    side: Literal["U", "L"] | None
    side_col: int
    parameter: ParsedName
    parameter_text: str
    parameter_col: int
    rule: Literal["max", "16%"] | None
    value: float
    filter: Literal["gaussian", "robust"] | None
    lambda_s_mm: float | None
    lambda_c_mm: float | None
    column: int


class _Scanner:
    def __init__(self, text: str, start: int, end: int):
        self.text = text
        self.pos = start
        self.end = end

    def fail(self, message: str, pos: int | None = None) -> CalloutError:
        return CalloutError(message, (self.pos if pos is None else pos) + 1)

    def skip_space(self) -> None:
        while self.pos < self.end and self.text[self.pos].isspace():
            self.pos += 1

    def peek(self) -> str:
        return self.text[self.pos] if self.pos < self.end else ""

    def at_end(self) -> bool:
        self.skip_space()
        return self.pos >= self.end

    def found(self) -> str:
        """The text at the current position, for messages."""
        if self.pos >= self.end:
            return "the end"
        chunk = (
            self.text[self.pos : self.end].split()[0]
            if self.text[self.pos : self.end].strip()
            else ""
        )
        return f"'{chunk[:12]}'"

    def word(self) -> str:
        """Letters and digits, then an optional '(...)' argument."""
        start = self.pos
        while self.pos < self.end and (
            self.text[self.pos].isascii() and self.text[self.pos].isalnum()
        ):
            self.pos += 1
        if self.peek() == "(":
            close = self.text.find(")", self.pos, self.end)
            if close < 0:
                raise self.fail("missing ')' after the parameter's argument")
            self.pos = close + 1
        return self.text[start : self.pos]

    def number(self, what: str) -> float | None:
        """A decimal number at the position, or None if there is none."""
        start = self.pos
        while self.peek().isdigit():
            self.pos += 1
        if self.peek() == ".":
            self.pos += 1
            while self.peek().isdigit():
                self.pos += 1
        text = self.text[start : self.pos]
        if text in ("", "."):
            self.pos = start
            return None
        if self.peek() == ",":
            after = self.text[self.pos + 1 : self.end]
            digits = after[: len(after) - len(after.lstrip("0123456789"))]
            hint = f" (did you mean '{text}.{digits}'?)" if digits else ""
            raise self.fail(f"use '.' as the decimal separator in {what}{hint}")
        return float(text)


def _parse_limit(s: _Scanner) -> _Limit:
    s.skip_space()
    column = s.pos + 1
    side: Literal["U", "L"] | None = None
    side_col = column
    filter_: Literal["gaussian", "robust"] | None = None
    lambda_s_mm = lambda_c_mm = None

    def read_side() -> None:
        nonlocal side, side_col
        s.skip_space()
        c = s.peek()
        nxt = s.text[s.pos + 1] if s.pos + 1 < s.end else ""
        if c in ("U", "L") and (nxt == "" or nxt.isspace() or nxt == '"'):
            if side is not None:
                raise s.fail("the limit is marked U or L twice")
            side, side_col = c, s.pos + 1  # type: ignore[assignment]
            s.pos += 1

    read_side()
    s.skip_space()
    if s.peek() == '"':
        open_pos = s.pos
        close = s.text.find('"', s.pos + 1, s.end)
        if close < 0:
            raise s.fail("unterminated filter name (missing closing '\"')")
        name = s.text[s.pos + 1 : close]
        key = " ".join(name.lower().split())
        if key not in FILTER_SPELLINGS:
            raise s.fail(f'unknown filter type "{name}" (use "Gaussian" or "robust")', open_pos)
        filter_ = FILTER_SPELLINGS[key]
        s.pos = close + 1
    s.skip_space()
    slash = s.text.find("/", s.pos, s.end)
    if slash >= 0:
        band_start = s.pos
        lambda_s_mm = s.number("the transmission band")
        s.skip_space()
        if s.peek() != "-":
            raise s.fail(
                "a transmission band is written λs-λc/ in mm, e.g. '0.0025-0.8/' or '-0.8/'"
                if s.pos < slash
                else "missing '-' in the transmission band (write λs-λc/ in mm, e.g. '-0.8/')"
            )
        s.pos += 1
        s.skip_space()
        c_pos = s.pos
        lambda_c_mm = s.number("the transmission band")
        s.skip_space()
        if s.pos != slash:
            raise s.fail(f"unexpected {s.found()} in the transmission band")
        if lambda_s_mm is None and lambda_c_mm is None:
            raise s.fail("the transmission band gives neither λs nor λc", band_start)
        if lambda_s_mm is not None and lambda_s_mm <= 0:
            raise s.fail("λs must be greater than 0", band_start)
        if lambda_c_mm is not None and lambda_c_mm <= 0:
            raise s.fail("λc must be greater than 0", c_pos)
        if lambda_s_mm is not None and lambda_c_mm is not None and lambda_s_mm >= lambda_c_mm:
            raise s.fail("λs must be shorter than λc in the transmission band", band_start)
        s.pos = slash + 1
    read_side()
    s.skip_space()
    p_col = s.pos + 1
    if not s.peek().isalpha():
        raise s.fail(f"expected a parameter such as 'Ra' or 'Rz', found {s.found()}")
    word = s.word()
    rule: Literal["max", "16%"] | None = None
    parsed = parse_parameter_name(word)
    if parsed is None and word.endswith("max") and parse_parameter_name(word[:-3]) is not None:
        parsed, rule, word = parse_parameter_name(word[:-3]), "max", word[:-3]
    _near_miss_name(s, word, p_col)
    if parsed is None:
        head = word.rstrip("0123456789")
        if head != word and word[len(head) :].strip("0") == "" and parse_parameter_name(head):
            raise s.fail(f"the section count of '{word}' must be at least 1", p_col - 1 + len(head))
        raise s.fail(f"unknown parameter '{word}'{_did_you_mean_name(word)}", p_col - 1)
    s.skip_space()
    if rule is None:
        if s.text.startswith("max", s.pos) and not s.text[s.pos + 3 : s.pos + 4].isalpha():
            if s.text[s.pos + 3 : s.pos + 4].isdigit():
                rest = s.text[s.pos + 3 : s.end].split()[0]
                raise s.fail(
                    f"did you mean '{word} max {rest}'? a space separates 'max' from the limit",
                    s.pos + 3,
                )
            rule = "max"
            s.pos += 3
        elif s.text.startswith("16%", s.pos):
            rule = "16%"
            s.pos += 3
    s.skip_space()
    sign = 1.0
    if s.peek() == "-":
        if parsed.base != "sk":
            raise s.fail(f"the limit of {word} must not be negative")
        sign = -1.0
        s.pos += 1
    value = s.number(f"the limit of {word}")
    if value is None:
        raise s.fail(f"expected the limit of {word} (a number), found {s.found()}")
    value *= sign
    if parsed.info.unit == "%" and s.peek() == "%":
        s.pos += 1
    if not s.at_end():
        if s.peek() == ";":
            pass
        else:
            unit = parsed.info.unit
            hint = (
                f" (the limit is in {unit}; write the number only)" if unit in ("µm", "mm") else ""
            )
            raise s.fail(f"unexpected {s.found()} after the limit{hint}")
    return _Limit(
        side, side_col, parsed, word, p_col, rule, value, filter_, lambda_s_mm, lambda_c_mm, column
    )


def _near_miss_name(s: _Scanner, word: str, p_col: int) -> None:
    """Refuse 'Ra0.8' and 'Rz3.2' (limit run into the name) with the reading meant."""
    if s.peek() != ".":
        return
    head = word.rstrip("0123456789")
    digits = word[len(head) :]
    if not digits or parse_parameter_name(head) is None:
        return
    rest = s.text[s.pos : s.end].split()[0] if s.text[s.pos : s.end].strip() else ""
    raise s.fail(
        f"did you mean '{head} {digits}{rest}'? a space separates the parameter from its "
        f"limit ('{head}3 ...' would mean 3 sections)",
        p_col - 1 + len(head),
    )


def _did_you_mean_name(word: str) -> str:
    """' (did you mean 'Ra'?)' for a name that differs only in letter case, else ''."""
    for candidate in (word[:1].upper() + word[1:], word[:1].upper() + word[1:].lower()):
        if candidate != word and parse_parameter_name(candidate) is not None:
            return f" (did you mean '{candidate}'?)"
    return ""


def parse_callout(text: str) -> Callout:
    """Parse one callout (ISO 1302:2002 requirement text, grammar in the module docstring).

    Parameters
    ----------
    text:
        The callout, e.g. ``"U Rz 4; L Rz 1.6"``.

    Returns
    -------
    Callout

    Raises
    ------
    CalloutError
        With the 1-based ``column`` of the offending character in ``text``.

    References
    ----------
    ISO 1302:2002 clause 6 (indication of surface texture requirements) [from memory].
    """
    if not text.strip():
        raise CalloutError("empty callout", 1)
    semis = [i for i, c in enumerate(text) if c == ";"]
    if len(semis) > 1:
        raise CalloutError("at most two limits (one U, one L) in one callout", semis[1] + 1)
    bounds = [(0, len(text))] if not semis else [(0, semis[0]), (semis[0] + 1, len(text))]
    limits = []
    for start, end in bounds:
        s = _Scanner(text, start, end)
        if s.at_end():
            raise CalloutError("empty limit: expected a parameter and a value", s.pos + 1)
        limits.append(_parse_limit(s))
    if len(limits) == 1:
        lim = limits[0]
        upper, lower = (None, lim.value) if lim.side == "L" else (lim.value, None)
        return Callout(
            text,
            lim.parameter,
            lim.parameter_text,
            upper,
            lower,
            lim.rule,
            lim.filter,
            lim.lambda_s_mm,
            lim.lambda_c_mm,
        )
    a, b = limits
    for lim in (a, b):
        if lim.side is None:
            raise CalloutError(
                "in a callout with two limits, mark one U and the other L", lim.column
            )
    if a.side == b.side:
        word = "upper" if a.side == "U" else "lower"
        raise CalloutError(f"both limits are {word} limits; mark one U and the other L", b.side_col)
    if a.parameter != b.parameter:
        raise CalloutError(
            f"the two limits name different parameters ('{a.parameter_text}', "
            f"'{b.parameter_text}');"
            " write them as two requirements",
            b.parameter_col,
        )
    if a.rule != b.rule:
        raise CalloutError(
            "both limits must state the same rule ('max' on both or on neither)", b.parameter_col
        )

    def merged(x, y, what: str):
        if x is not None and y is not None and x != y:
            raise CalloutError(f"the two limits give different {what}", b.column)
        return x if x is not None else y

    up, lo = (a, b) if a.side == "U" else (b, a)
    return Callout(
        text,
        a.parameter,
        a.parameter_text,
        up.value,
        lo.value,
        a.rule,
        merged(a.filter, b.filter, "filter types"),
        merged(a.lambda_s_mm, b.lambda_s_mm, "λs"),
        merged(a.lambda_c_mm, b.lambda_c_mm, "λc"),
    )
