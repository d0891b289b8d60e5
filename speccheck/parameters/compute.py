"""From a measured trace to the full set of profile parameters.

Pipeline (:func:`compute_parameters`)
-------------------------------------
1. form removal (``conditions.form``; ISO 4287:1997 3.1.6);
2. λs low-pass if ``conditions.lambda_s_um`` is set: the primary profile P (ISO 3274:1996 3.4.1);
3. mean line of P at λc: Gaussian (ISO 16610-21), robust Gaussian regression (ISO 16610-31,
   order 2 or 0) or the ISO 13565-1 reference line, by ``conditions.filter``;
4. the evaluated profile: R = P − mean line; W = mean line at λc − mean line at λf (λf is the
   waviness section length); P = the primary profile less the least-squares line of the
   evaluated portion;
5. the evaluation length, ``sections`` × section length, centred in the trace
   (:meth:`Conditions.evaluation_slice`); run-in and run-out only feed the filters;
6. section parameters on the sections as rows of a 2-D array, averaged over the sections
   (ISO 4287:1997 4: "defined over a sampling length", ISO 4288:1996 4.4 mean of the sections);
   evaluation-length parameters (Rt, Rmr(c), Rδc, Rz1max, Rmax, Rpc, the ISO 13565 families) on
   the whole evaluation length. Under ``conditions.definitions == "iso21920-2"`` the field
   parameters of ISO 21920-2:2021 (Ra, Rq, Rsk, Rku, RΔq, and Rc, RSm on the elements of the
   whole evaluation length) are computed over the evaluation length instead; Rz, Rp, Rv stay
   section means (:func:`speccheck.parameters.names.basis` says which is which).

The P profile is evaluated over the evaluation length as **one** section (ISO 4287:1997 3.1.9:
the primary sampling length equals the evaluation length), so its section parameters equal
their evaluation-length values; its heights are measured from the least-squares line of the
evaluated portion.

The Rk family (ISO 13565-2) and Rpq, Rvq, Rmq (ISO 13565-3) are computed on the roughness
profile of the ISO 13565-1 reference line (valley-suppressed Gaussian), or on the robust
roughness profile when ``conditions.filter`` is a robust filter (ISO 16610-31 is the filter
meant for stratified surfaces); a note in the result says which.

The table of parameters is the plain dict :data:`SECTION_FUNCTIONS` plus the explicit calls in
:func:`compute_parameters`; every formula is in the module named there.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from speccheck.parameters import amplitude, asme, material, rk, spacing
from speccheck.parameters.conditions import Conditions
from speccheck.parameters.names import PARAMETERS, basis, parse_parameter_name

__all__ = [
    "ParameterValue",
    "EvaluatedProfiles",
    "ParameterSet",
    "InsufficientData",
    "FLAT_TOLERANCE_UM",
    "SECTION_FUNCTIONS",
    "compute_parameters",
    "evaluated_profile",
    "check_parameter_names",
]


@dataclass(frozen=True)
class ParameterValue:
    """One parameter value with its unit (``"µm"``, ``"mm"``, ``"%"``, ``""``, ...)."""

    value: float
    unit: str


@dataclass(frozen=True)
class EvaluatedProfiles:
    """Arrays over the evaluation length (and over the whole trace), for plots and diagnostics.

    ``roughness_um`` is the evaluated profile of the conditions' kind: roughness for R, waviness
    for W, primary for P. ``primary_um`` is the primary profile after form removal and λs.
    """

    x_mm: np.ndarray
    primary_um: np.ndarray
    mean_line_um: np.ndarray
    roughness_um: np.ndarray
    section_bounds_mm: tuple[float, ...]
    dx_um: float
    trace_x_mm: np.ndarray
    trace_primary_um: np.ndarray
    trace_mean_line_um: np.ndarray


def _json_number(v: float) -> float | None:
    return None if not math.isfinite(v) else float(v)


def _values_dict(values: dict[str, ParameterValue]) -> dict[str, dict[str, Any]]:
    return {k: {"value": _json_number(p.value), "unit": p.unit} for k, p in values.items()}


def _conditions_dict(c: Conditions) -> dict[str, Any]:
    to_dict = getattr(c, "to_dict", None)
    if callable(to_dict):
        return dict(to_dict())
    return {
        "lambda_c_mm": c.lambda_c_mm,
        "lambda_s_um": c.lambda_s_um,
        "lambda_f_mm": c.lambda_f_mm,
        "evaluation_length_mm": c.evaluation_length_mm,
        "sections": c.sections,
        "filter": c.filter,
        "form": c.form,
        "profile": c.profile,
        "definitions": c.definitions,
        "ends": c.ends,
    }


@dataclass(frozen=True)
class ParameterSet:
    """All parameters of one profile under one set of conditions."""

    values: dict[str, ParameterValue]
    sections: tuple[dict[str, ParameterValue], ...]
    conditions: Conditions
    profiles: EvaluatedProfiles
    notes: tuple[str, ...]

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready: ``{"parameters", "sections", "conditions", "notes"}``; NaN becomes null."""
        notes = list(self.notes)
        for name, p in self.values.items():
            if not math.isfinite(p.value) and not any(n.startswith(f"{name}:") for n in notes):
                notes.append(f"{name}: not computable on this profile (null)")
        params = _values_dict(self.values)
        for name, entry in params.items():
            parsed = parse_parameter_name(name)
            if parsed is not None:
                entry["basis"] = basis(parsed.base, self.conditions.definitions)
        return {
            "parameters": params,
            "sections": [_values_dict(s) for s in self.sections],
            "conditions": _conditions_dict(self.conditions),
            "notes": notes,
        }


# A profile whose heights all lie within this of its mean line after form removal and
# filtering carries no measured texture (1 pm, far below the vertical resolution of any
# surface-texture instrument, about 0.1 nm for the finest; from memory). Its Rq is 0 and Rsk,
# Rku are 0/0: it is never evaluated.
FLAT_TOLERANCE_UM = 1e-6


@dataclass(frozen=True)
class InsufficientData:
    """The trace cannot be evaluated: too short for the conditions (``kind="too-short"``) or
    flat after form removal and filtering (``kind="flat"``). A falsy result, not an exception."""

    reason: str
    required_mm: float
    available_mm: float
    kind: str = "too-short"

    def __bool__(self) -> bool:
        return False


# Section parameters: base name -> function of the sections (rows, heights from the mean line,
# µm) and the spacing in µm. The profile letter is prefixed when results are named.
SECTION_FUNCTIONS: dict[str, Callable[[np.ndarray, float], Any]] = {
    "a": lambda z, dx: amplitude.arithmetic_mean_height(z),
    "q": lambda z, dx: amplitude.root_mean_square_height(z),
    "sk": lambda z, dx: amplitude.skewness(z),
    "ku": lambda z, dx: amplitude.kurtosis(z),
    "p": lambda z, dx: amplitude.max_peak_height(z),
    "v": lambda z, dx: amplitude.max_valley_depth(z),
    "z": lambda z, dx: amplitude.max_height(z),
    "c": lambda z, dx: spacing.mean_height_of_elements(z, dx_um=dx),
    "Sm": lambda z, dx: spacing.mean_width_of_elements_mm(z, dx_um=dx),
}


def _required_trace_mm(conditions: Conditions) -> float:
    req = conditions.required_trace_mm
    return float(req() if callable(req) else req)


def _mean_line(primary: np.ndarray, dx_um: float, conditions: Conditions) -> np.ndarray:
    from speccheck.filters import gaussian_mean_line, robust_mean_line, valley_suppressed_mean_line

    cutoff_um = conditions.lambda_c_mm * 1000.0
    if conditions.filter == "gaussian":
        return gaussian_mean_line(primary, dx_um=dx_um, cutoff_um=cutoff_um)
    if conditions.filter in ("robust", "robust-order0"):
        order = 0 if conditions.filter == "robust-order0" else 2
        return robust_mean_line(primary, dx_um=dx_um, cutoff_um=cutoff_um, order=order).mean_line_um
    if conditions.filter == "iso13565-1":
        return valley_suppressed_mean_line(primary, dx_um=dx_um, cutoff_um=cutoff_um)
    raise ValueError(f"unknown filter {conditions.filter!r}")


def evaluated_profile(
    z_um, *, dx_um: float, conditions: Conditions
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Steps 1-4 of the pipeline over the whole trace: (primary_um, mean_line_um, evaluated_um).

    For R the evaluated profile is P − mean line at λc; for W the mean line at λc minus the mean
    line at λf; for P the primary profile less its mean line, the least-squares line of the
    evaluated portion (:func:`_primary_mean_line`).
    """
    from speccheck.filters import gaussian_lowpass, gaussian_mean_line, remove_form

    z = np.asarray(z_um, dtype=np.float64)
    residual = remove_form(z, dx_um=dx_um, form=conditions.form).residual_um
    if conditions.lambda_s_um is not None:
        primary = gaussian_lowpass(residual, dx_um=dx_um, lambda_s_um=conditions.lambda_s_um)
    else:
        primary = np.array(residual, dtype=np.float64)
    if conditions.profile == "P":
        line = _primary_mean_line(primary, dx_um, conditions)
        return primary, line, primary - line
    line = _mean_line(primary, dx_um, conditions)
    if conditions.profile == "W":
        assert conditions.lambda_f_mm is not None  # Conditions insists on λf for W
        long = gaussian_mean_line(primary, dx_um=dx_um, cutoff_um=conditions.lambda_f_mm * 1000.0)
        return primary, long, line - long
    return primary, line, primary - line


def _primary_mean_line(primary: np.ndarray, dx_um: float, conditions: Conditions) -> np.ndarray:
    """Mean line of the P profile: least-squares line of the evaluated portion (ISO 4287:1997
    3.1.8.3, from memory), extended over the whole trace for plots.

    The nominal form (``conditions.form``) has already been removed over the whole trace; for a
    line form the result is exactly the least-squares line of the evaluated portion of the
    λs-filtered trace. For arcs and polynomials it is that form plus a line refitted over the
    evaluated portion. A trace too short for the evaluation length keeps a zero line (it is not
    evaluated).
    """
    ev = conditions.evaluation_slice(primary.size, dx_um)
    if ev is None:
        return np.zeros_like(primary)
    x = np.arange(primary.size, dtype=np.float64)
    xe = x[ev] - x[ev].mean()
    ye = primary[ev]
    slope = float(np.dot(xe, ye - ye.mean()) / np.dot(xe, xe))
    return ye.mean() + slope * (x - x[ev].mean())


def _section_rows(profile: np.ndarray, start: int, n_sec: int, m: int, margin: int) -> np.ndarray:
    """Sections as rows, each extended by ``margin`` trace points per side (edge-clamped)."""
    offsets = np.arange(-margin, m + margin)
    idx = start + np.arange(n_sec)[:, None] * m + offsets[None, :]
    return profile[np.clip(idx, 0, profile.size - 1)]


def _parse_extra(names: Sequence[str], conditions: Conditions) -> list[tuple[str, str, str]]:
    """(canonical name, base, argument) of each parametrised extra name; ValueError if unusable."""
    out: list[tuple[str, str, str]] = []
    for text in names:
        parsed = parse_parameter_name(text)
        if parsed is None:
            raise ValueError(f"unknown parameter {text!r}")
        if parsed.letter != conditions.profile:
            raise ValueError(
                f"{text} belongs to the {parsed.letter} profile; these conditions evaluate "
                f"the {conditions.profile} profile"
            )
        if parsed.sections is not None and parsed.sections != conditions.sections:
            raise ValueError(
                f"{text} asks for {parsed.sections} sections; these conditions have "
                f"{conditions.sections} (use a Conditions with sections={parsed.sections})"
            )
        if parsed.argument is None:
            continue  # a standard parameter: always computed
        if parsed.base == "mr":
            try:
                material.parse_relative_level(parsed.argument)
            except ValueError:
                raise ValueError(
                    f"{text}: the level must be a depth in µm, e.g. Rmr(0.5), or a depth below "
                    "the level at a reference ratio, e.g. Rmr(0.5,5%)"
                ) from None
        elif parsed.base == "dc":
            material.parse_ratio_pair(parsed.argument)
        out.append((parsed.name, parsed.base, parsed.argument))
    return out


def check_parameter_names(names: Sequence[str], conditions: Conditions) -> None:
    """ValueError, with the message compute_parameters would give, for an unusable name."""
    _parse_extra(names, conditions)


def _mean_over_sections(name: str, per: np.ndarray, notes: list[str]) -> float:
    ok = np.isfinite(per)
    if ok.all():
        return float(np.mean(per))
    if not ok.any():
        notes.append(f"{name}: not computable in any section (null)")
        return math.nan
    missing = ", ".join(str(i + 1) for i in np.flatnonzero(~ok))
    notes.append(f"{name}: not computable in section(s) {missing}; mean of the other sections")
    return float(np.mean(per[ok]))


def compute_parameters(
    z_um, *, dx_um: float, conditions: Conditions, extra: Sequence[str] = ()
) -> ParameterSet | InsufficientData:
    """All standard parameters of the conditions' profile, plus parametrised ones in ``extra``.

    Parameters
    ----------
    z_um : array_like or Profile
        Traced heights in µm, uniformly spaced, finite (bridge dropouts first with
        :func:`speccheck.profile.fill_dropouts`). A :class:`speccheck.profile.Profile` is
        accepted too (its ``z_um`` is used; ``dx_um`` must still be given).
    dx_um : float
        Sampling spacing in µm.
    conditions : Conditions
        Transmission band, sections, filter, form and profile kind.
    extra : sequence of str
        Parametrised names such as ``"Rmr(0.5)"`` (depth in µm below the highest peak of the
        evaluation length) and ``"Rdc(20-80)"`` (material ratios in %); standard names are
        accepted and ignored (always computed).

    Returns
    -------
    ParameterSet or InsufficientData
        InsufficientData (falsy) when the trace is shorter than
        ``conditions.required_trace_mm``.

    Raises
    ------
    ValueError
        Non-finite heights, a bad spacing, or an unknown or unusable name in ``extra``.

    Notes
    -----
    The pipeline is in the module docstring.
    """
    z = np.asarray(getattr(z_um, "z_um", z_um), dtype=np.float64).reshape(-1)
    dx = float(dx_um)
    if not (dx > 0.0 and math.isfinite(dx)):
        raise ValueError(f"dx_um must be a positive number, got {dx_um!r}")
    if not np.all(np.isfinite(z)):
        raise ValueError(
            "z_um holds NaN or infinite heights; bridge dropouts first (fill_dropouts)"
        )
    extras = _parse_extra(extra, conditions)
    letter = conditions.profile
    ev = conditions.evaluation_slice(z.size, dx)
    available_mm = z.size * dx / 1000.0
    if ev is None:
        required_mm = _required_trace_mm(conditions)
        return InsufficientData(
            f"trace {available_mm:g} mm is shorter than the {required_mm:g} mm needed "
            f"({conditions.sections} × {conditions.section_length_mm:g} mm"
            + (
                f" plus {conditions.run_in_mm:g} mm run-in and run-out)"
                if conditions.run_in_mm
                else ", filters run to the ends)"
            ),
            required_mm=required_mm,
            available_mm=available_mm,
        )
    primary, line, prof = evaluated_profile(z, dx_um=dx, conditions=conditions)
    start, n_eval = ev.start, ev.stop - ev.start
    if not np.any(np.abs(prof[ev]) > FLAT_TOLERANCE_UM):
        return InsufficientData(
            f"the {letter} profile is flat over the evaluation length (all heights within "
            f"±{FLAT_TOLERANCE_UM:g} µm after form removal and filtering): no surface texture "
            "was measured",
            required_mm=_required_trace_mm(conditions),
            available_mm=available_mm,
            kind="flat",
        )
    if letter == "P":
        n_sec, m = 1, n_eval
    else:
        n_sec, m = conditions.sections, n_eval // conditions.sections
    notes: list[str] = []
    sec = _section_rows(prof, start, n_sec, m, 0)
    le = sec.reshape(-1)
    values: dict[str, ParameterValue] = {}
    per_section: list[dict[str, ParameterValue]] = [{} for _ in range(n_sec)]

    def put(base: str, value: float) -> None:
        name = parse_name(base)
        values[name] = ParameterValue(float(value), PARAMETERS[base].unit)

    def parse_name(base: str) -> str:
        parsed = parse_parameter_name(letter + base)
        assert parsed is not None, base
        return parsed.name

    _section_values(prof, start, n_sec, m, dx, conditions, values, per_section, notes)
    put("t", amplitude.total_height(le))
    put("z1max", amplitude.largest_section_max_height(sec))
    put("pm", asme.mean_peak_height(sec))
    put("vm", asme.mean_valley_depth(sec))
    if letter == "R":
        put("max", asme.largest_peak_to_valley(sec))
        put("pc", asme.peak_count_per_cm(le, dx_um=dx))
        notes.append(f"Rpc: peak-count band ±{asme.DEFAULT_PEAK_BAND_UM:g} µm about the mean line")
        _stratified(primary, line, dx, conditions, ev, values, notes)
    for name, base, arg in extras:
        if base == "mr":
            depth, ref = material.parse_relative_level(arg)
            if ref is None:
                v = material.material_ratio_at_depth(le, depth_um=depth)
            else:
                v = material.relative_material_ratio(le, depth_um=depth, reference_pct=ref)
        else:
            a, b = material.parse_ratio_pair(arg)
            v = material.section_height_difference(le, mr1_pct=a, mr2_pct=b)
        values[name] = ParameterValue(v, PARAMETERS[base].unit)
    um_to_mm = dx / 1000.0
    bounds = tuple(float((start + k * m) * um_to_mm) for k in range(n_sec + 1))
    x_trace = np.arange(z.size) * um_to_mm
    profiles = EvaluatedProfiles(
        x_mm=x_trace[ev],
        primary_um=primary[ev],
        mean_line_um=line[ev],
        roughness_um=prof[ev],
        section_bounds_mm=bounds,
        dx_um=dx,
        trace_x_mm=x_trace,
        trace_primary_um=primary,
        trace_mean_line_um=line,
    )
    return ParameterSet(values, tuple(per_section), conditions, profiles, tuple(notes))


def _field_value(
    base: str, le: np.ndarray, wide: np.ndarray, dx: float, rz_um: float, section_um: float
) -> float:
    """One ISO 21920-2 field parameter over the evaluation length ``le`` (µm from the mean line).

    ``wide`` is ``le`` with :data:`spacing.SLOPE_MARGIN_POINTS` trace points each side (RΔq);
    ``rz_um`` the mean section Rz and ``section_um`` the section length (element discrimination).
    """
    if base == "dq":
        return float(spacing.rms_slope(wide, dx_um=dx))
    if base == "c":
        return spacing.field_mean_height_of_elements(
            le, dx_um=dx, section_length_um=section_um, rz_um=rz_um
        )
    if base == "Sm":
        return spacing.field_mean_width_of_elements_mm(
            le, dx_um=dx, section_length_um=section_um, rz_um=rz_um
        )
    return float(SECTION_FUNCTIONS[base](le, dx))


def _section_values(
    prof: np.ndarray,
    start: int,
    n_sec: int,
    m: int,
    dx: float,
    conditions: Conditions,
    values: dict[str, ParameterValue],
    per_section: list[dict[str, ParameterValue]],
    notes: list[str],
) -> None:
    """Section parameters and RΔq: per-section values, and each overall value by its basis.

    The overall value is the mean of the section values (ISO 4287:1997) or, for the field
    parameters of ISO 21920-2:2021 under ``conditions.definitions == "iso21920-2"``, the value
    over the whole evaluation length (:func:`speccheck.parameters.names.basis`). Per-section
    values are kept in both cases, for plots and comparison.
    """
    letter = conditions.profile
    sec = _section_rows(prof, start, n_sec, m, 0)
    wide = _section_rows(prof, start, n_sec, m, spacing.SLOPE_MARGIN_POINTS)
    per_by_base: dict[str, np.ndarray] = {}
    for base, fn in SECTION_FUNCTIONS.items():
        per_by_base[base] = np.asarray(fn(sec, dx), dtype=np.float64).reshape(n_sec)
    per_by_base["dq"] = np.asarray(spacing.rms_slope(wide, dx_um=dx)).reshape(n_sec)
    le = sec.reshape(-1)
    margin = spacing.SLOPE_MARGIN_POINTS
    idx = np.clip(np.arange(start - margin, start + n_sec * m + margin), 0, prof.size - 1)
    rz_um = float(np.mean(per_by_base["z"]))
    for base, per in per_by_base.items():
        name = _name(letter, base)
        unit = PARAMETERS[base].unit
        for k in range(n_sec):
            per_section[k][name] = ParameterValue(float(per[k]), unit)
        if n_sec > 1 and basis(base, conditions.definitions) == "field":
            v = _field_value(base, le, prof[idx], dx, rz_um, conditions.section_length_mm * 1e3)
            if not math.isfinite(v):
                notes.append(f"{name}: not computable over the evaluation length (null)")
        else:
            v = _mean_over_sections(name, per, notes)
        values[name] = ParameterValue(v, unit)


def _name(letter: str, base: str) -> str:
    parsed = parse_parameter_name(letter + base)
    assert parsed is not None, base
    return parsed.name


def _stratified(
    primary: np.ndarray,
    line_um: np.ndarray,
    dx_um: float,
    conditions: Conditions,
    ev: slice,
    values: dict[str, ParameterValue],
    notes: list[str],
) -> None:
    """ISO 13565-2 and ISO 13565-3 parameters into ``values`` (R profile only)."""
    if conditions.filter in ("robust", "robust-order0"):
        line = line_um
        notes.append("Rk family on the ISO 16610-31 robust roughness profile")
    elif conditions.filter == "iso13565-1":
        line = line_um
        notes.append(
            "Rk family on the ISO 13565-1 roughness profile (valley-suppressed reference line)"
        )
    else:
        # ISO 13565-1:1996 clause 5 (speccheck.filters.valley_suppressed_mean_line), reusing
        # its step 1, which is the Gaussian mean line already computed: valleys below it are
        # cut off and the result filtered again. Saves one convolution of the whole trace.
        from speccheck.filters import gaussian_mean_line

        line = gaussian_mean_line(
            np.maximum(primary, line_um), dx_um=dx_um, cutoff_um=conditions.lambda_c_mm * 1000.0
        )
        notes.append(
            "Rk family on the ISO 13565-1 roughness profile (valley-suppressed reference line)"
        )
    r = (primary - line)[ev]
    curve = material.material_ratio_curve(r)
    res = rk.rk_parameters(r, curve=curve)
    if isinstance(res, rk.NoCore):
        notes.append(res.reason)
    else:
        for key, base in (
            ("Rk", "k"),
            ("Rpk", "pk"),
            ("Rvk", "vk"),
            ("Mr1", "mr1"),
            ("Mr2", "mr2"),
            ("A1", "A1"),
            ("A2", "A2"),
        ):
            values[key] = ParameterValue(float(getattr(res, key)), PARAMETERS[base].unit)
    q = rk.probability_parameters(r, curve=curve)
    if isinstance(q, rk.NoCore):
        notes.append(q.reason)
    else:
        values["Rpq"] = ParameterValue(q.Rpq, PARAMETERS["pq"].unit)
        values["Rvq"] = ParameterValue(q.Rvq, PARAMETERS["vq"].unit)
        values["Rmq"] = ParameterValue(q.Rmq, PARAMETERS["mq"].unit)
