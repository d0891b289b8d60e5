"""Measurement conditions and default cut-offs.

:class:`Conditions` holds what a drawing or a specification fixes about *how* a profile is
evaluated: the transmission band (λs, λc, λf), the number of sections, the filter, the form
removed first and the profile kind. It also places the evaluation length in a trace.

Where the evaluation length sits in a trace
-------------------------------------------
Section length = λc (λf for a waviness profile), evaluation length = sections × section length,
centred in the trace. One full cut-off is left at each end as run-in and run-out (the longest
cut-off of the band: λc, or λf for W). Reason, with the numbers of the ISO 16610-21 weighting
function s(x) = exp(-π (x/(αλc))²)/(αλc), α = √(ln 2/π): the kernel mass beyond ±λc/2 is
erfc(√π/(2α)) = 0.76 %, beyond ±λc it is erfc(√π/α) = 9.5e-8. With a run-in of λc the mean line
over the whole evaluation length is computed from full (to 1e-7) kernels, so no end effect
reaches the evaluated part; with λc/2 the first and last points would miss 0.38 % of their kernel
on one side. The trace needed is therefore ``sections × λc + 2 λc`` (7 λc = 5.6 mm at λc 0.8 mm
and 5 sections, the common 7-cut-off traverse; common practice, no source).

Lengths are counted in samples (``round(length / dx)``), with a slack of a few samples for that
rounding (:meth:`Conditions.evaluation_slice`).

With ``ends="moment"`` no run-in is left: the filters run to the trace ends by the moment
criterion of ISO 16610-28 (from memory) - the Gaussian filter's weights renormalised to sum 1
over the heights that exist under the kernel (zeroth-order moment), the ISO 16610-31 regression
fitted over the heights that exist - and the whole trace, which then needs to be only the
evaluation length, is evaluated. On a sine of wavelength λc/10 this changes Ra and Rq by at
most 0.1 % against a trace with run-in; at λc/3.2 by at most 1.1 %, at λc/2 by at most 2.4 %
(measured, tests/test_ends.py).

Default cut-offs
----------------
:func:`default_lambda_c_mm` reads ISO 4288:1996 Tables 1-3 (default) or the ISO 21920-3:2021
table; which parameter reads which column is in :data:`COLUMN_OF`. :func:`select_lambda_c`
runs the ISO 4288:1996 procedure for a sampling length that is not specified (estimate,
measure, move rows until the value measured lies in the row used; clause 7, from memory).
:func:`instrument_settings` gives the ISO 3274:1996 Table 1 row for λc.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from numbers import Integral, Real
from typing import Literal

from speccheck.errors import SpeccheckError
from speccheck.parameters.names import DEFINITIONS

__all__ = [
    "Conditions",
    "STANDARD_CUTOFFS_MM",
    "FILTERS",
    "FORMS",
    "PROFILE_KINDS",
    "TABLES",
    "COLUMN_OF",
    "CutoffRow",
    "InstrumentSettings",
    "default_lambda_c_mm",
    "cutoff_row",
    "instrument_settings",
    "default_lambda_s_um",
    "SelectionStep",
    "CutoffSelection",
    "select_lambda_c",
    "ENDS",
]

#: Mean-line filters: ISO 16610-21 Gaussian; ISO 16610-31 robust Gaussian regression of order 2
#: ("robust") or order 0 ("robust-order0"); ISO 13565-1 valley-suppressed reference line.
FILTERS = ("gaussian", "robust", "robust-order0", "iso13565-1")
#: Form removed from the primary profile before filtering (see speccheck.filters.form).
FORMS = ("line", "arc", "poly2", "poly3", "poly4", "poly5", "poly6", "none")
#: Profile kinds of ISO 4287: roughness, waviness, primary.
PROFILE_KINDS = ("R", "W", "P")
#: How the filters meet the trace ends: "run-in" (one longest cut-off left unevaluated at each
#: end) or "moment" (ISO 16610-28 moment criterion: the filters run to the ends, from memory).
ENDS = ("run-in", "moment")
#: Default cut-off tables.
TABLES = ("iso4288", "iso21920-3")

FilterName = Literal["gaussian", "robust", "robust-order0", "iso13565-1"]
Column = Literal["Ra", "Rz", "RSm"]

# Which ISO 4288:1996 column gives the default λc for a parameter of a non-periodic profile
# (from memory: Table 1 lists Ra, Rq, Rsk, Rku, RΔq and the material-ratio curve parameters;
# Table 2 lists Rz, Rv, Rp, Rc, Rt; Table 3 RSm, and every R-parameter of a periodic profile).
# Rz1max is read in the Rz column (domain notes, ISO 4288 column header "Rz, Rz1max").
COLUMN_OF: dict[str, Column] = {
    "Ra": "Ra",
    "Rq": "Ra",
    "Rsk": "Ra",
    "Rku": "Ra",
    "Rdq": "Ra",
    "Rmr": "Ra",
    "Rdc": "Ra",
    "Rz": "Rz",
    "Rz1max": "Rz",
    "Rp": "Rz",
    "Rv": "Rz",
    "Rc": "Rz",
    "Rt": "Rz",
    "RSm": "RSm",
}

_EPS = 1e-9  # relative slack when comparing a value with a row bound (decimal input vs binary)


@dataclass(frozen=True)
class CutoffRow:
    """One row of a default cut-off table: ``lower_um < value <= upper_um`` gives ``lambda_c_mm``.

    ``lower_um`` None means the row has no lower bound (the first row); ``upper_um`` None no
    upper bound (ISO 21920-3 last row).
    """

    table: str
    column: str
    lower_um: float | None
    upper_um: float | None
    lambda_c_mm: float

    @property
    def evaluation_length_mm(self) -> float:
        """Default evaluation length ln = 5 × lr (ISO 4288:1996 Tables 1-3)."""
        return 5.0 * self.lambda_c_mm

    def contains(self, value_um: float) -> bool:
        lo_ok = self.lower_um is None or value_um > self.lower_um * (1.0 + _EPS)
        hi_ok = self.upper_um is None or value_um <= self.upper_um * (1.0 + _EPS)
        return lo_ok and hi_ok

    def bounds_text(self) -> str:
        lo = "" if self.lower_um is None else f"> {self.lower_um:g}"
        hi = "" if self.upper_um is None else f"{self.upper_um:g}"
        if lo and hi:
            return f"{lo} – {hi} µm"
        return f"{lo} µm" if lo else f"≤ {hi} µm"


def _rows(table: str, column: str, bounds_um: list[float | None], lambdas_mm: list[float]):
    return tuple(
        CutoffRow(table, column, lo, hi, lc)
        for lo, hi, lc in zip(bounds_um[:-1], bounds_um[1:], lambdas_mm, strict=True)
    )


_LC = [0.08, 0.25, 0.8, 2.5, 8.0]
# The standard series of cut-offs λc in mm (ISO 4288:1996 Tables 1-3; ISO 3274:1996 Table 1).
STANDARD_CUTOFFS_MM: tuple[float, ...] = tuple(_LC)
# ISO 4288:1996 Table 1 (Ra), Table 2 (Rz, Rz1max), Table 3 (RSm, converted mm -> µm).
# Domain notes: the first two rows and the Ra / RSm columns [pub], the rest [mem].
# The first row's lower bound is printed in parentheses in the standard; values at or below it
# are placed in the first row (our choice: the smallest cut-off is the only one that fits).
_TABLES: dict[tuple[str, str], tuple[CutoffRow, ...]] = {
    ("iso4288", "Ra"): _rows("iso4288", "Ra", [None, 0.02, 0.1, 2.0, 10.0, 80.0], _LC),
    ("iso4288", "Rz"): _rows("iso4288", "Rz", [None, 0.1, 0.5, 10.0, 50.0, 200.0], _LC),
    ("iso4288", "RSm"): _rows("iso4288", "RSm", [None, 40.0, 130.0, 400.0, 1300.0, 4000.0], _LC),
    # ISO 21920-3:2021 (domain notes [pub, one source]): Rz bounds differ from ISO 4288, the Ra
    # column is ISO 4288's with the last row unbounded.
    ("iso21920-3", "Rz"): _rows("iso21920-3", "Rz", [None, 0.16, 0.8, 16.0, 80.0, None], _LC),
    ("iso21920-3", "Ra"): _rows("iso21920-3", "Ra", [None, 0.02, 0.1, 2.0, 10.0, None], _LC),
}


def _column_for(parameter: str, periodic: bool, table: str) -> Column:
    if table not in TABLES:
        raise SpeccheckError(f"unknown cut-off table {table!r} (known: {', '.join(TABLES)})")
    base = parameter.strip()
    if base.startswith("Rmr(") or base.startswith("Rdc("):
        base = base[:3]
    if base not in COLUMN_OF:
        raise SpeccheckError(
            f"no default cut-off for {parameter!r} in {table}; state lambda_c explicitly"
        )
    column = COLUMN_OF[base]
    if periodic and column != "RSm":
        raise SpeccheckError(
            f"for a periodic profile the default cut-off follows RSm (ISO 4288:1996 Table 3), "
            f"not {parameter}; give an RSm estimate"
        )
    if (table, column) not in _TABLES:
        raise SpeccheckError(
            f"the {table} table has no {column} column in speccheck; state lambda_c explicitly "
            f"or use table 'iso4288'"
        )
    return column


def cutoff_row(
    parameter: str, value_um: float, *, table: str = "iso4288", periodic: bool = False
) -> CutoffRow:
    """The default cut-off row for ``parameter`` of value ``value_um`` (ISO 4288:1996 Tables 1-3).

    Parameters
    ----------
    parameter:
        ``"Ra"``, ``"Rz"``, ``"RSm"``, ... (see :data:`COLUMN_OF`).
    value_um:
        The parameter's value in µm (RSm too: 0.13 mm is 130 µm).
    table:
        ``"iso4288"`` (ISO 4288:1996) or ``"iso21920-3"`` (ISO 21920-3:2021).
    periodic:
        True for a periodic profile: only RSm selects the cut-off.

    Returns
    -------
    CutoffRow
        A value exactly on a bound belongs to the row whose upper bound it is ("> 0.1 – 2":
        Ra 2 µm is in the 0.8 mm row, Ra 0.1 µm in the 0.25 mm row).

    References
    ----------
    ISO 4288:1996 Tables 1-3 (numbering from memory); ISO 21920-3:2021 (nesting index table).
    """
    column = _column_for(parameter, periodic, table)
    v = float(value_um)
    if not v > 0.0 or v != v or v == float("inf"):
        raise SpeccheckError(f"{parameter} value {value_um!r} µm must be a positive finite number")
    rows = _TABLES[(table, column)]
    for row in rows:
        if row.contains(v):
            return row
    top = rows[-1].upper_um
    raise SpeccheckError(
        f"{parameter} {v:g} µm is above the {table} table (largest {top:g} µm); "
        f"state lambda_c explicitly"
    )


def default_lambda_c_mm(
    parameter: str, value_um: float, *, table: str = "iso4288", periodic: bool = False
) -> float:
    """Default cut-off λc in mm for a parameter value (ISO 4288:1996 Tables 1-3; ISO 21920-3).

    See :func:`cutoff_row` for the arguments and the rule on row bounds.
    """
    return cutoff_row(parameter, value_um, table=table, periodic=periodic).lambda_c_mm


@dataclass(frozen=True)
class InstrumentSettings:
    """ISO 3274:1996 Table 1 row for one λc."""

    lambda_c_mm: float
    lambda_s_um: float
    max_tip_radius_um: float
    max_spacing_um: float  # from memory (domain notes [mem])

    @property
    def ratio(self) -> float:
        """λc/λs (30, 100 or 300)."""
        return self.lambda_c_mm * 1000.0 / self.lambda_s_um


# ISO 3274:1996 Table 1: λc, λs, maximum stylus tip radius [pub]; maximum sampling spacing [mem].
# For λc 0.8 mm the table allows a 5 µm tip when Rz > 3 µm; the stricter 2 µm is listed here.
_ISO3274 = (
    InstrumentSettings(0.08, 2.5, 2.0, 0.5),
    InstrumentSettings(0.25, 2.5, 2.0, 0.5),
    InstrumentSettings(0.8, 2.5, 2.0, 0.5),
    InstrumentSettings(2.5, 8.0, 5.0, 1.5),
    InstrumentSettings(8.0, 25.0, 10.0, 5.0),
)


def instrument_settings(lambda_c_mm: float) -> InstrumentSettings:
    """λs, tip radius and sampling spacing for a standard λc (ISO 3274:1996 Table 1)."""
    for row in _ISO3274:
        if abs(row.lambda_c_mm - float(lambda_c_mm)) <= 1e-9 * row.lambda_c_mm:
            return row
    known = ", ".join(f"{r.lambda_c_mm:g}" for r in _ISO3274)
    raise SpeccheckError(
        f"lambda_c {lambda_c_mm!r} mm is not in ISO 3274 Table 1 ({known} mm); "
        f"state lambda_s explicitly"
    )


def default_lambda_s_um(lambda_c_mm: float) -> float:
    """Default short-wave cut-off λs in µm for λc (ISO 3274:1996 Table 1)."""
    return instrument_settings(lambda_c_mm).lambda_s_um


@dataclass(frozen=True)
class Conditions:
    """How a profile is evaluated: transmission band, sections, filter, form, profile kind.

    Parameters
    ----------
    lambda_c_mm:
        Cut-off λc in mm (section length of R and P profiles).
    lambda_s_um:
        Short-wave cut-off λs in µm; None applies no λs filter (the data are taken as already
        λs-filtered by the instrument).
    lambda_f_mm:
        Long-wave cut-off λf in mm (waviness profile only; section length of W).
    sections:
        Number of sections in the evaluation length (ISO 4288 default 5).
    filter:
        One of :data:`FILTERS`.
    form:
        One of :data:`FORMS`.
    profile:
        ``"R"``, ``"W"`` or ``"P"``.
    definitions:
        ``"iso4287"`` (section means, ISO 4287:1997) or ``"iso21920-2"`` (field parameters over
        the evaluation length, ISO 21920-2:2021); see :func:`speccheck.parameters.names.basis`.
    ends:
        One of :data:`ENDS`.

    Notes
    -----
    Run-in and run-out are one longest cut-off each (module docstring gives the kernel masses),
    or none with ``ends="moment"``.
    """

    lambda_c_mm: float
    lambda_s_um: float | None
    lambda_f_mm: float | None = None
    sections: int = 5
    filter: str = "gaussian"
    form: str = "line"
    profile: str = "R"
    definitions: str = "iso4287"
    ends: str = "run-in"

    def __post_init__(self) -> None:
        def positive(name: str, v: float | None, optional: bool) -> None:
            if v is None and optional:
                return
            if isinstance(v, bool) or not isinstance(v, Real) or not (0 < v < float("inf")):
                raise SpeccheckError(
                    f"{name} must be a positive number, got {v!r}", where=f"key {name}"
                )
            object.__setattr__(self, name, float(v))  # numpy scalars become plain floats

        positive("lambda_c_mm", self.lambda_c_mm, False)
        positive("lambda_s_um", self.lambda_s_um, True)
        positive("lambda_f_mm", self.lambda_f_mm, True)
        if self.lambda_s_um is not None and self.lambda_s_um >= self.lambda_c_mm * 1000.0:
            raise SpeccheckError(
                f"lambda_s {self.lambda_s_um:g} µm must be shorter than lambda_c "
                f"{self.lambda_c_mm:g} mm",
                where="key lambda_s_um",
            )
        if self.lambda_f_mm is not None and self.lambda_f_mm <= self.lambda_c_mm:
            raise SpeccheckError(
                f"lambda_f {self.lambda_f_mm:g} mm must be longer than "
                f"lambda_c {self.lambda_c_mm:g} mm",
                where="key lambda_f_mm",
            )
        if (
            isinstance(self.sections, bool)
            or not isinstance(self.sections, Integral)
            or self.sections < 1
        ):
            raise SpeccheckError(
                f"sections must be a whole number ≥ 1, got {self.sections!r}", where="key sections"
            )
        object.__setattr__(self, "sections", int(self.sections))
        for name, value, known in (
            ("filter", self.filter, FILTERS),
            ("form", self.form, FORMS),
            ("profile", self.profile, PROFILE_KINDS),
            ("definitions", self.definitions, DEFINITIONS),
            ("ends", self.ends, ENDS),
        ):
            if value not in known:
                raise SpeccheckError(
                    f"unknown {name} {value!r} (known: {', '.join(known)})", where=f"key {name}"
                )
        if self.profile == "W" and self.lambda_f_mm is None:
            raise SpeccheckError("a waviness profile (W) needs lambda_f", where="key lambda_f_mm")

    @classmethod
    def standard(cls, lambda_c_mm: float, **kwargs) -> Conditions:
        """Conditions with λs from ISO 3274:1996 Table 1 for ``lambda_c_mm``."""
        return cls(lambda_c_mm, default_lambda_s_um(lambda_c_mm), **kwargs)

    @property
    def lambda_c_um(self) -> float:
        return self.lambda_c_mm * 1000.0

    @property
    def section_length_mm(self) -> float:
        """λc for R and P profiles, λf for W (ISO 4287:1997 3.1.9 sampling length)."""
        if self.profile == "W":
            assert self.lambda_f_mm is not None
            return self.lambda_f_mm
        return self.lambda_c_mm

    @property
    def evaluation_length_mm(self) -> float:
        """sections × section length (ISO 4288:1996 default: 5 sections), rounded to 1e-9 mm."""
        return round(self.sections * self.section_length_mm, 9)

    @property
    def run_in_mm(self) -> float:
        """Length left unevaluated at each end: the longest cut-off of the band (0 for "moment")."""
        if self.ends == "moment":
            return 0.0
        return self.lambda_f_mm if self.lambda_f_mm is not None else self.lambda_c_mm

    @property
    def required_trace_mm(self) -> float:
        """Shortest trace that can be evaluated: evaluation length + run-in + run-out.

        Rounded to 1e-9 mm so that decimal inputs compare as written (7 × 0.8 is 5.6, not
        5.6000000000000005).
        """
        return round(self.evaluation_length_mm + 2.0 * self.run_in_mm, 9)

    def section_points(self, dx_um: float) -> int:
        """Points in one section at spacing ``dx_um`` (rounded)."""
        return max(1, round(self.section_length_mm * 1000.0 / float(dx_um)))

    def evaluation_slice(self, n_points: int, dx_um: float) -> slice | None:
        """Index range of the evaluation length, centred in a trace of ``n_points``.

        Returns None when the trace is shorter than :attr:`required_trace_mm`, counted in
        samples: ``sections × round(section/dx) + 2 × round(run_in/dx)`` points less a slack of
        ``ceil(sections/2) + 2`` points. The slack absorbs the rounding of each section and run-in
        to whole samples (≤ ½ sample each) and the N·dx or (N − 1)·dx reading of a trace's
        length, so that a trace of exactly 7 × 0.8 mm is evaluable at any spacing. The run-in
        then falls short of λc by at most about 2 samples, where the Gaussian weight is 6.5e-7
        of its peak. Without run-in (``ends="moment"``) a trace up to the slack shorter than the
        evaluation length is evaluated whole.
        """
        n_eval = self.sections * self.section_points(dx_um)
        n_run = round(self.run_in_mm * 1000.0 / float(dx_um))
        slack = -(-self.sections // 2) + 2
        if n_points < n_eval + 2 * n_run - slack:
            return None
        n_eval = min(n_eval, n_points)
        start = (n_points - n_eval) // 2
        return slice(start, start + n_eval)

    def section_slices(self, n_points: int, dx_um: float) -> list[slice] | None:
        """The ``sections`` consecutive index ranges of the evaluation length, or None."""
        ev = self.evaluation_slice(n_points, dx_um)
        if ev is None:
            return None
        n_sec = (ev.stop - ev.start) // self.sections
        return [
            slice(ev.start + k * n_sec, ev.start + (k + 1) * n_sec) for k in range(self.sections)
        ]


@dataclass(frozen=True)
class SelectionStep:
    """One measurement of the cut-off selection: λc used, value measured, row it falls in."""

    lambda_c_mm: float
    measured_um: float
    row_lambda_c_mm: float | None  # None: the value is outside the table


@dataclass(frozen=True)
class CutoffSelection:
    """Result of :func:`select_lambda_c`."""

    lambda_c_mm: float  # the cut-off to use (settled: the last one; oscillating: the shorter)
    settled: bool  # True when the last value measured lies in the row of the λc used
    steps: tuple[SelectionStep, ...]
    message: str

    def __bool__(self) -> bool:
        return self.settled


def select_lambda_c(
    parameter: str,
    estimate_um: float,
    measure: Callable[[float], float],
    *,
    table: str = "iso4288",
    periodic: bool = False,
    max_steps: int = 8,
) -> CutoffSelection:
    """Choose λc by the ISO 4288:1996 procedure for periodic and non-periodic profiles (clause 7).

    Parameters
    ----------
    parameter:
        ``"RSm"`` for a periodic profile; ``"Ra"``, ``"Rz"``, ``"RSm"``, ... otherwise.
    estimate_um:
        First estimate of the parameter in µm (by eye, from a trace, from the drawing).
    measure:
        ``measure(lambda_c_mm) -> value_um``: the parameter measured with that cut-off.
    table, periodic:
        As :func:`cutoff_row`.
    max_steps:
        Upper bound on measurements.

    Returns
    -------
    CutoffSelection
        ``settled`` True when the value measured with λc lies in λc's row. The procedure moves
        straight to the row the measured value belongs to; if that row was used before (the
        value alternates between two rows) it stops unsettled and says so, keeping the shorter
        of the cut-offs involved (more sections of data in the same trace).

    Notes
    -----
    The shorter-cut-off step (ISO 4288:1996 7.2.2, from memory): once a value lies in the row
    of the λc it was measured with, and the next shorter standard λc has not been measured,
    the parameter is measured with that shorter λc too; if that value lies in the shorter
    cut-off's own row, the shorter cut-off is used (and the step repeats from it). A value
    measured outside the table stops the procedure unsettled.
    """
    lc = default_lambda_c_mm(parameter, estimate_um, table=table, periodic=periodic)
    steps: list[SelectionStep] = []
    used: list[float] = []

    def row_of(value: float) -> float | None:
        try:
            return default_lambda_c_mm(parameter, value, table=table, periodic=periodic)
        except SpeccheckError:
            return None

    while len(steps) < max_steps:
        used.append(lc)
        value = float(measure(lc))
        row = row_of(value)
        steps.append(SelectionStep(lc, value, row))
        if row is None:
            try:
                default_lambda_c_mm(parameter, value, table=table, periodic=periodic)
            except SpeccheckError as exc:
                why = exc.message
            return CutoffSelection(lc, False, tuple(steps), f"stopped: {why}")
        if row == lc:
            return _shorter_step(parameter, lc, value, measure, row_of, steps, used, max_steps)
        if row in used:
            return _oscillation(parameter, lc, row, value, steps)
        lc = row
    return CutoffSelection(
        lc, False, tuple(steps), f"no settled row after {max_steps} measurements"
    )


def _oscillation(
    parameter: str, lc: float, row: float, value: float, steps: list[SelectionStep]
) -> CutoffSelection:
    pair = sorted({lc, row})
    return CutoffSelection(
        pair[0],
        False,
        tuple(steps),
        f"oscillates between λc {pair[0]:g} and {pair[1]:g} mm "
        f"({parameter} {value:g} µm at λc {lc:g} mm belongs to the {row:g} mm row); "
        f"kept {pair[0]:g} mm, state lambda_c explicitly to settle it",
    )


def _shorter_step(
    parameter: str,
    lc: float,
    value: float,
    measure: Callable[[float], float],
    row_of: Callable[[float], float | None],
    steps: list[SelectionStep],
    used: list[float],
    max_steps: int,
) -> CutoffSelection:
    """ISO 4288:1996 7.2.2 (from memory): try the next shorter λc once settled (see above)."""
    note = ""
    while len(steps) < max_steps:
        shorter = [c for c in STANDARD_CUTOFFS_MM if c < lc * (1 - 1e-9)]
        if not shorter or shorter[-1] in used:
            break
        s = shorter[-1]
        used.append(s)
        v = float(measure(s))
        row = row_of(v)
        steps.append(SelectionStep(s, v, row))
        if row != s:
            note = (
                f"; at the next shorter λc {s:g} mm {parameter} {v:g} µm does not lie in "
                f"that cut-off's row, so λc {lc:g} mm stays"
            )
            break
        lc, value = s, v
        note = f"; the shorter λc {s:g} mm was tried and its value lies in its own row"
    return CutoffSelection(
        lc,
        True,
        tuple(steps),
        f"{parameter} {value:g} µm measured at λc {lc:g} mm lies in its row{note}",
    )
