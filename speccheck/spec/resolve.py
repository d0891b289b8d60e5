"""Turn a validated specification file into :class:`Requirement` objects, defaults resolved.

Order of precedence, each value keeping the source it came from:

- rule: ``max`` / ``16%`` in the callout or ``rule:`` in the mapping; else the convention's
  default (ISO 1302: 16 % rule; ASME Y14.36: a single value is a maximum); ISO 21920 has no
  default here: the rule must be stated.
- λc: the callout's transmission band, the requirement's ``cutoff``, ``measurement.cutoff``,
  else the default table (ISO 4288:1996 for iso1302/asme, ISO 21920-3:2021 for iso21920) read
  with the upper limit (the lower limit for a lower-only requirement).
- λs: the band, the requirement's ``ls``, ``measurement.ls`` (``none``: no λs filter), else
  ISO 3274:1996 Table 1 for the λc.
- sections: the name's suffix (``Rz3``), the requirement's ``sections``, ``measurement.sections``,
  else 5 (ISO 4288:1996 4.4).
- filter: the callout's filter or the requirement's ``filter``, ``measurement.filter``, else
  Gaussian (ISO 1302 default, ISO 16610-21). Form: the requirement's, ``measurement.form``, else
  a least-squares line.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from speccheck.errors import SpeccheckError, SpecError
from speccheck.parameters.names import ParsedName, parse_parameter_name
from speccheck.spec._yaml import Document, KeyPath, where
from speccheck.spec.callout import Callout, CalloutError, parse_callout
from speccheck.spec.models import RequirementFields, SpecFile
from speccheck.spec.requirement import Requirement
from speccheck.units import DRAWING_UNITS, UM_PER_UIN, parse_length

__all__ = [
    "requirement_conflicts",
    "resolve_requirements",
    "parse_limit",
    "standard_cutoffs_mm",
    "iso3274_lambda_s_um",
]

_FILTER_NAMES = {
    "gaussian": "Gaussian filter (ISO 16610-21)",
    "robust": "robust Gaussian regression filter (ISO 16610-31)",
}
# Accepted unit spellings for the units that are not lengths or percentages.
_OTHER_UNITS = {"1/cm": ("1/cm", "/cm"), "µm·%": ("µm·%", "um%", "µm%", "um·%")}


# --- adapters to speccheck.parameters.conditions (one place) -------------------------------


def _conditions():
    from speccheck.parameters import conditions

    return conditions


def standard_cutoffs_mm() -> tuple[float, ...]:
    """The standard λc series in mm (ISO 4288:1996 Tables 1-3; ISO 3274:1996 Table 1)."""
    return _conditions().STANDARD_CUTOFFS_MM


def iso3274_lambda_s_um(lambda_c_mm: float) -> float:
    """λs for a standard λc (ISO 3274:1996 Table 1); SpeccheckError if λc is not standard."""
    return float(_conditions().default_lambda_s_um(lambda_c_mm))


_TABLE_NAMES = {
    ("iso4288", "Ra"): "ISO 4288:1996 Table 1",
    ("iso4288", "Rz"): "ISO 4288:1996 Table 2",
    ("iso4288", "RSm"): "ISO 4288:1996 Table 3",
    ("iso21920-3", "Ra"): "ISO 21920-3:2021 nesting index table",
    ("iso21920-3", "Rz"): "ISO 21920-3:2021 nesting index table",
}


def _table_cutoff(
    parameter: str, value_um: float, table: str, periodic: bool = False
) -> tuple[float, str]:
    """Default λc in mm and its source, e.g. (0.8, "ISO 4288:1996 Table 1, Ra > 0.1 – 2 µm")."""
    c = _conditions()
    row = c.cutoff_row(parameter, value_um, table=table, periodic=periodic)
    name = _TABLE_NAMES.get((table, row.column), table)
    read_as = "" if parameter == row.column else f" (column used for {parameter})"
    return float(row.lambda_c_mm), f"{name}, {row.column} {row.bounds_text()}{read_as}"


# --- values with units -----------------------------------------------------------------------


def parse_limit(value: Any, unit: str, what: str) -> float:
    """A limit or uncertainty in the parameter's ``unit``; ValueError with a message if wrong.

    Lengths (µm, mm) accept any length unit ("0.4um", "400nm", "16uin"); ``%`` needs the sign
    ("70%"); unitless parameters take a bare number.
    """
    if isinstance(value, bool):
        raise ValueError(f"{what} must be a number, got {value!r}")
    if unit in ("µm", "mm"):
        example = "um" if unit == "µm" else "mm"
        if isinstance(value, (int, float)):
            raise ValueError(f"{what} {value!r} has no unit (write e.g. '{value}{example}')")
        try:
            length = parse_length(str(value))
        except SpeccheckError as exc:
            raise ValueError(f"{what}: {exc.message}") from None
        return length.um if unit == "µm" else length.mm
    if unit == "%":
        if isinstance(value, (int, float)):
            raise ValueError(f"{what} {value!r} has no unit (write e.g. '{value}%')")
        text = str(value).strip()
        if not text.endswith("%"):
            raise ValueError(f"{what} {value!r} must be a percentage such as '70%'")
        return _number(text[:-1], what, value)
    if unit == "":
        if isinstance(value, (int, float)):
            return float(value)
        return _number(str(value), what, value, hint=" (this parameter has no unit)")
    if isinstance(value, (int, float)):
        raise ValueError(f"{what} {value!r} has no unit (write e.g. '{value}{unit}')")
    text = str(value).strip()
    for suffix in _OTHER_UNITS.get(unit, (unit,)):
        if text.endswith(suffix):
            return _number(text[: -len(suffix)], what, value)
    raise ValueError(f"{what} {value!r} must be in {unit}")


def _number(text: str, what: str, original: Any, hint: str = "") -> float:
    try:
        v = float(text.strip())
    except ValueError:
        raise ValueError(f"cannot read {what} {original!r} as a number{hint}") from None
    if v != v or v in (float("inf"), float("-inf")):
        raise ValueError(f"{what} {original!r} is not a finite number")
    return v


# --- resolution ---------------------------------------------------------------------------------


def estimate_refusal(fields: dict[str, Any], value_per: str) -> str | None:
    """Why ``uncertainty: estimate`` cannot cover a requirement, or None when it can.

    The model (speccheck.uncertainty.model) covers the height parameters of the roughness
    profile under the Gaussian filter, one value per evaluation length, with run-in and run-out.
    """
    from speccheck.parameters.names import parse_parameter_name
    from speccheck.uncertainty.heights import SUPPORTED

    parsed = parse_parameter_name(fields["parameter"])
    covered = ", ".join("R" + b for b in SUPPORTED)
    if parsed is None or parsed.letter != "R" or parsed.base not in SUPPORTED:
        return (
            f"uncertainty: estimate covers {covered}; state U of {fields['parameter']} "
            "under 'uncertainty' instead"
        )
    if fields.get("filter", "gaussian") != "gaussian":
        return "uncertainty: estimate covers the Gaussian filter only"
    if value_per != "evaluation-length":
        return "uncertainty: estimate covers one value per evaluation length"
    if fields.get("ends", "run-in") != "run-in":
        return "uncertainty: estimate needs run-in and run-out (measurement.ends: run-in)"
    return None


@dataclass
class _Defaults:
    lambda_c_mm: float | None
    lambda_s_um: float | None
    ls_none: bool
    ls_given: bool


class _Resolver:
    def __init__(self, spec: SpecFile, doc: Document, path: str):
        self.spec = spec
        self.doc = doc
        self.path = path
        self.errors: list[SpecError] = []

    def err(self, key_path: KeyPath, message: str) -> SpecError:
        line, col = self.doc.position(key_path)
        return SpecError(message, path=self.path, where=where(line, col))

    def measurement_defaults(self) -> _Defaults:
        m = self.spec.measurement
        lc = ls = None
        ls_none = ls_given = False
        if m.cutoff is not None:
            try:
                lc = parse_limit(m.cutoff, "mm", "measurement.cutoff")
                if lc <= 0:
                    raise ValueError(f"measurement.cutoff {m.cutoff!r} must be greater than 0")
            except ValueError as exc:
                self.errors.append(self.err(("measurement", "cutoff"), str(exc)))
        if m.ls is not None:
            ls_given = True
            if isinstance(m.ls, str) and m.ls.strip().lower() == "none":
                ls_none = True
            else:
                try:
                    ls = parse_limit(m.ls, "µm", "measurement.ls")
                    if ls <= 0:
                        raise ValueError(
                            f"measurement.ls {m.ls!r} must be greater than 0 (or 'none')"
                        )
                except ValueError as exc:
                    self.errors.append(self.err(("measurement", "ls"), str(exc)))
                    ls_given = False
        return _Defaults(lc, ls, ls_none, ls_given)

    def uncertainties(self, names: set[str]) -> dict[str, float]:
        out: dict[str, float] = {}
        if not isinstance(self.spec.uncertainty, dict):  # 'estimate': U comes per value
            return out
        for key, value in self.spec.uncertainty.items():
            kp: KeyPath = ("uncertainty", key)
            parsed = parse_parameter_name(str(key))
            if parsed is None:
                self.errors.append(self.err(kp, f"unknown parameter '{key}' in uncertainty"))
                continue
            try:
                u = parse_limit(value, parsed.info.unit, f"uncertainty of {parsed.name}")
            except ValueError as exc:
                self.errors.append(self.err(kp, str(exc)))
                continue
            if u < 0:
                self.errors.append(
                    self.err(kp, f"uncertainty of {parsed.name} must not be negative")
                )
                continue
            out[parsed.name] = u
        return out

    def callout_error(self, index: int, exc: CalloutError) -> SpecError:
        kp: KeyPath = ("requirements", index)
        start = self.doc.string_starts.get(kp)
        if start is not None:
            line, col0 = start
            return SpecError(exc.message, path=self.path, where=where(line, col0 + exc.column - 1))
        line, col = self.doc.position(kp)
        return SpecError(
            f"{exc.message} (character {exc.column} of the callout)",
            path=self.path,
            where=where(line, col),
        )

    def resolve(self) -> list[Requirement]:
        defaults = self.measurement_defaults()
        if self.spec.convention == "asme" and self.spec.units is None:
            self.errors.append(
                self.err(
                    ("convention",),
                    "convention asme: state the drawing's unit, 'units: uin' (microinches, "
                    "usual on inch drawings) or 'units: um'",
                )
            )
        names: set[str] = set()
        resolved: list[Requirement] = []
        pending: list[tuple[int, dict[str, Any]]] = []
        for i, item in enumerate(self.spec.requirements):
            try:
                fields = self.requirement_fields(i, item, defaults)
            except SpecError as exc:
                self.errors.append(exc)
                continue
            names.add(fields["parameter"])
            pending.append((i, fields))
        u_map = self.uncertainties(names)
        for _i, fields in pending:
            name = fields["parameter"]
            u = u_map.get(name)
            if self.spec.uncertainty == "estimate":
                refusal = estimate_refusal(fields, self.spec.measurement.value_per)
                if refusal:
                    self.errors.append(
                        SpecError(
                            f"{fields['text']}: {refusal}",
                            path=self.path,
                            where=fields["location"],
                        )
                    )
                    continue
                fields["uncertainty"] = None
                fields["uncertainty_estimated"] = True
                fields["uncertainty_source"] = (
                    "estimated per value from the instrument file (GUM and Monte Carlo, 95 %)"
                )
                resolved.append(Requirement(**fields))
                continue
            if fields["decision_rule"] != "simple" and u is None:
                self.errors.append(
                    SpecError(
                        f"{fields['text']}: decision rule {fields['decision_rule']} needs the "
                        f"expanded uncertainty U of {name} (add it under 'uncertainty')",
                        path=self.path,
                        where=fields["location"],
                    )
                )
                continue
            fields["uncertainty"] = u
            fields["uncertainty_source"] = "stated, not estimated" if u is not None else "not given"
            resolved.append(Requirement(**fields))
        return resolved

    def requirement_fields(
        self, i: int, item: str | RequirementFields, d: _Defaults
    ) -> dict[str, Any]:
        kp: KeyPath = ("requirements", i)
        conv = self.spec.convention
        m = self.spec.measurement
        req_lc = req_ls = None
        req_ls_none = False
        sections_given: int | None = None
        form_given: str | None = None
        if isinstance(item, str):
            try:
                c: Callout = parse_callout(item)
            except CalloutError as exc:
                raise self.callout_error(i, exc) from None
            parsed, written = c.parameter, c.parameter_text
            upper, lower, rule_written, filter_written = c.upper, c.lower, c.rule, c.filter
            band_lc, band_ls = c.lambda_c_mm, c.lambda_s_mm
            band_lf = None
            if parsed.letter == "W":  # ISO 1302 waviness band λc-λf (from memory)
                band_lc, band_lf, band_ls = c.lambda_s_mm, c.lambda_c_mm, None
            rule_written_source = f"'{c.rule}' in the callout" if c.rule else ""
            text = item
            where_value: dict[str, KeyPath] = {
                "upper": kp,
                "lower": kp,
                "parameter": kp,
                "rule": kp,
            }
        else:
            p = parse_parameter_name(item.parameter)
            if p is None:
                raise self.err((*kp, "parameter"), f"unknown parameter '{item.parameter}'")
            parsed, written = p, item.parameter.strip()
            unit = p.info.unit
            upper = lower = None
            for side in ("upper", "lower"):
                raw = getattr(item, side)
                if raw is None:
                    continue
                try:
                    value = parse_limit(raw, unit, f"{side} limit of {p.name}")
                except ValueError as exc:
                    raise self.err((*kp, side), str(exc)) from None
                if side == "upper":
                    upper = value
                else:
                    lower = value
            if upper is None and lower is None:
                raise self.err(kp, f"requirement on {p.name} needs 'upper', 'lower' or both")
            rule_written = item.rule
            rule_written_source = "stated in the spec" if item.rule else ""
            filter_written = item.filter
            band_lc = band_ls = band_lf = None
            if item.lf is not None:
                try:
                    band_lf = parse_limit(item.lf, "mm", "lf")
                except ValueError as exc:
                    raise self.err((*kp, "lf"), str(exc)) from None
            if item.cutoff is not None:
                try:
                    req_lc = parse_limit(item.cutoff, "mm", "cutoff")
                except ValueError as exc:
                    raise self.err((*kp, "cutoff"), str(exc)) from None
                if req_lc <= 0:
                    raise self.err((*kp, "cutoff"), "cutoff must be greater than 0")
            if item.ls is not None:
                if isinstance(item.ls, str) and item.ls.strip().lower() == "none":
                    req_ls_none = True
                else:
                    try:
                        req_ls = parse_limit(item.ls, "µm", "ls")
                    except ValueError as exc:
                        raise self.err((*kp, "ls"), str(exc)) from None
                    if req_ls <= 0:
                        raise self.err((*kp, "ls"), "ls must be greater than 0 (or 'none')")
            if item.sections is not None:
                if p.sections is not None and p.sections != item.sections:
                    raise self.err(
                        (*kp, "sections"),
                        f"sections {item.sections} contradicts the name '{written}' ({p.sections} "
                        "sections)",
                    )
                sections_given = item.sections
            form_given = item.form
            text = ""
            where_value = {
                "upper": (*kp, "upper"),
                "lower": (*kp, "lower"),
                "parameter": (*kp, "parameter"),
                "rule": (*kp, "rule") if item.rule else kp,
            }
        name, unit = parsed.name, parsed.info.unit
        lf_fields = self.waviness_band(kp, parsed, band_lf, isinstance(item, str))
        drawing_unit = self.drawing_unit(item, unit)
        if isinstance(item, str) and drawing_unit == "µin":  # bare numbers are microinches
            upper = None if upper is None else upper * UM_PER_UIN
            lower = None if lower is None else lower * UM_PER_UIN

        # limits: sign, percentage range, order
        for side, limit in (("upper", upper), ("lower", lower)):
            if limit is None:
                continue
            value = limit
            if parsed.base != "sk" and value <= 0:
                raise self.err(
                    where_value[side], f"the {side} limit of {name} must be greater than 0"
                )
            if unit == "%" and value > 100:
                raise self.err(
                    where_value[side], f"the {side} limit of {name} must not exceed 100 %"
                )
        if upper is not None and lower is not None and lower >= upper:
            raise self.err(
                where_value["lower"],
                f"the lower limit of {name} ({_fmt(lower, unit)}) must be less than the upper "
                "limit "
                f"({_fmt(upper, unit)})",
            )

        # acceptance rule
        if rule_written is not None:
            rule, rule_source = rule_written, rule_written_source
        elif conv == "iso1302":
            rule, rule_source = "16%", "ISO 1302 default (16 % rule)"
        elif conv == "asme":
            rule, rule_source = "max", "ASME Y14.36: a single value is a maximum"
        else:
            how = (
                "add 'max' or '16%' to the callout"
                if isinstance(item, str)
                else "add 'rule: max' or 'rule: 16%'"
            )
            raise self.err(
                where_value["rule"],
                f"convention iso21920 has no default acceptance rule: {how} "
                "(ISO 21920-1 has both a max rule and a 16 % rule)",
            )

        # sections
        if parsed.sections is not None:
            sections, sections_source = parsed.sections, f"the name '{written}'"
        elif sections_given is not None:
            sections, sections_source = sections_given, "sections in the requirement"
        elif m.sections is not None:
            sections, sections_source = m.sections, "measurement.sections in the spec"
        else:
            sections = 5
            sections_source = (
                "ISO 21920-3:2021 default (le = 5 lsc)"
                if conv == "iso21920"
                else "ISO 4288:1996 4.4 default"
            )

        # cut-off λc
        table = "iso21920-3" if conv == "iso21920" else "iso4288"
        if band_lc is not None:
            lc, lc_source = band_lc, "transmission band in the callout"
            periodic_test = False
        elif req_lc is not None:
            lc, lc_source = req_lc, "cutoff in the requirement"
            periodic_test = False
        elif d.lambda_c_mm is not None:
            lc, lc_source = d.lambda_c_mm, "measurement.cutoff in the spec"
            periodic_test = False
        else:
            lc, lc_source = self.table_cutoff(
                kp, parsed, upper if upper is not None else lower, table
            )
            periodic_test = self.spec.measurement.periodic == "auto"
            if periodic_test:
                lc_source += (
                    "; periodic: auto, replaced by the RSm row (ISO 4288:1996 Table 3) if the "
                    "first measurement tests periodic"
                )

        # short-wave cut-off λs
        ls: float | None
        if band_ls is not None:
            ls, ls_source = band_ls * 1000.0, "transmission band in the callout"
        elif req_ls_none:
            ls, ls_source = None, "ls: none in the requirement (no λs filter)"
        elif req_ls is not None:
            ls, ls_source = req_ls, "ls in the requirement"
        elif d.ls_none:
            ls, ls_source = None, "measurement.ls: none in the spec (no λs filter)"
        elif d.lambda_s_um is not None:
            ls, ls_source = d.lambda_s_um, "measurement.ls in the spec"
        else:
            try:
                ls, ls_source = iso3274_lambda_s_um(lc), "ISO 3274:1996 Table 1"
            except SpeccheckError:
                raise self.err(
                    kp,
                    f"ISO 3274 gives no λs for λc {lc:g} mm: state measurement.ls or a band such "
                    "as "
                    f"'0.0025-{lc:g}/'",
                ) from None
        if ls is not None and ls >= lc * 1000.0:
            raise self.err(kp, f"λs {ls:g} µm must be shorter than λc {lc:g} mm")

        # filter and form
        if filter_written is not None:
            filt = filter_written
            filter_source = (
                "filter type in the callout"
                if isinstance(item, str)
                else "filter in the requirement"
            )
        elif m.filter is not None:
            filt, filter_source = m.filter, "measurement.filter in the spec"
        else:
            filt, filter_source = "gaussian", _DEFAULT_FILTER_SOURCE[conv]
        if form_given is not None:
            form, form_source = form_given, "form in the requirement"
        elif m.form is not None:
            form, form_source = m.form, "measurement.form in the spec"
        else:
            form, form_source = "line", "speccheck default"

        if not text:
            text = render_callout(
                written,
                upper,
                lower,
                rule_written,
                filt if filter_written else None,
                ls if (req_ls is not None) else None,
                req_lc,
                lf_fields.get("lambda_f_mm"),
                lc,
            )
        line, col = self.doc.position(kp)
        return {
            "text": text,
            "parameter": name,
            "sections": sections,
            "upper": upper,
            "lower": lower,
            "unit": unit,
            "rule": rule,
            "rule_source": rule_source,
            "filter": filt,
            "lambda_c_mm": lc,
            "lambda_c_source": lc_source,
            "lambda_s_um": ls,
            "lambda_s_source": ls_source,
            "cutoff_table": table,
            "decision_rule": self.spec.decision_rule,
            "form": form,
            "location": where(line, col),
            "sections_source": sections_source,
            "filter_source": filter_source,
            "form_source": form_source,
            "definitions": "iso21920-2" if conv == "iso21920" else "iso4287",
            **self.ends_fields(),
            "periodic_test": periodic_test,
            **lf_fields,
            "drawing_unit": drawing_unit,
        }

    def ends_fields(self) -> dict[str, Any]:
        """How the filters meet the trace ends, with its source (run-in unless stated)."""
        if self.spec.measurement.ends == "moment":
            return {
                "ends": "moment",
                "ends_source": "measurement.ends: filters run to the trace ends by the "
                "ISO 16610-28 moment criterion (from memory)",
            }
        stated = self.spec.measurement.ends is not None
        return {
            "ends": "run-in",
            "ends_source": ("measurement.ends" if stated else "default")
            + ": one cut-off of run-in and run-out at each end",
        }

    def drawing_unit(self, item: str | RequirementFields, unit: str) -> str:
        """The unit the drawing writes this requirement's heights in (µm parameters only)."""
        if unit != "µm":
            return unit
        written = item.units if not isinstance(item, str) else None
        return DRAWING_UNITS[written or self.spec.units or "um"]

    def waviness_band(
        self, kp: KeyPath, parsed: ParsedName, lf_mm: float | None, callout: bool
    ) -> dict[str, Any]:
        """λf of a W requirement (never assumed) or a refusal of λf on R and P requirements."""
        if parsed.letter != "W":
            if lf_mm is not None:
                raise self.err(kp, f"λf applies to waviness (W) parameters only, not {parsed.name}")
            return {}
        if lf_mm is None:
            how = "a band λc-λf in mm such as '0.8-8/" if callout else "'lf' such as '8mm' ("
            raise self.err(
                kp,
                f"{parsed.name} is a waviness parameter: state its transmission band with "
                + (f"{how}{parsed.name} ...'" if callout else f"{how}and 'cutoff' for λc)")
                + "; no λf is assumed",
            )
        if lf_mm <= 0:
            raise self.err(kp, "λf must be greater than 0")
        source = "transmission band in the callout" if callout else "lf in the requirement"
        return {"lambda_f_mm": lf_mm, "lambda_f_source": source}

    def table_cutoff(
        self, kp: KeyPath, parsed: ParsedName, value: float | None, table: str
    ) -> tuple[float, str]:
        name, unit = parsed.name, parsed.info.unit
        how = "state measurement.cutoff, 'cutoff' in the requirement, or a band such as '-0.8/'"
        if value is None or unit not in ("µm", "mm") or parsed.argument is not None:
            raise self.err(kp, f"no default cut-off can be read from a limit of {name}: {how}")
        value_um = value * 1000.0 if unit == "mm" else value
        try:
            return _table_cutoff(name, value_um, table, self.spec.measurement.periodic is True)
        except SpeccheckError as exc:
            reason = exc.message.split(";")[0]
            raise self.err(kp, f"{reason}: {how}") from None


# Where the default Gaussian filter comes from under each convention (from memory for ISO
# 21920-3 and ASME B46.1, both of which name the ISO 16610-21 Gaussian filter as the default).
_DEFAULT_FILTER_SOURCE = {
    "iso1302": "ISO 1302 default",
    "iso21920": "ISO 21920-3 default",
    "asme": "ASME B46.1 default",
}


def _fmt(value: float, unit: str) -> str:
    return f"{value:g} {unit}".strip() if unit != "%" else f"{value:g} %"


def render_callout(
    written: str,
    upper: float | None,
    lower: float | None,
    rule: str | None,
    filter_: str | None,
    lambda_s_um: float | None,
    lambda_c_mm: float | None,
    lambda_f_mm: float | None = None,
    resolved_lambda_c_mm: float | None = None,
) -> str:
    """A mapping-form requirement written in the callout grammar (it parses back to itself).

    A waviness requirement is written with its band λc-λf (ISO 1302, from memory), λc as
    resolved; λs is then not part of the text.
    """
    head = ""
    if filter_ is not None:
        head += '"Gaussian" ' if filter_ == "gaussian" else '"robust" '
    if lambda_f_mm is not None:
        lc_w = "" if resolved_lambda_c_mm is None else f"{resolved_lambda_c_mm:g}"
        head += f"{lc_w}-{lambda_f_mm:g}/"
    elif lambda_s_um is not None or lambda_c_mm is not None:
        ls = f"{lambda_s_um / 1000.0:g}" if lambda_s_um is not None else ""
        lc = f"{lambda_c_mm:g}" if lambda_c_mm is not None else ""
        head += f"{ls}-{lc}/"
    r = f" {rule}" if rule else ""

    def one(side: str, value: float) -> str:
        return f"{side}{head}{written}{r} {value:g}"

    if upper is not None and lower is not None:
        return f"{one('U ', upper)}; {one('L ', lower)}"
    if lower is not None:
        return one("L ", lower)
    assert upper is not None
    return one("", upper)


def _same_quantity(r: Requirement) -> tuple:
    return (r.parameter, r.sections, r.lambda_c_mm, r.lambda_s_um, r.lambda_f_mm, r.filter, r.form)


def requirement_conflicts(
    reqs: list[Requirement] | tuple[Requirement, ...],
) -> list[tuple[str, Requirement, str]]:
    """Pairs of requirements on the same quantity (parameter and conditions) that clash.

    Returns ``(kind, requirement, message)`` with kind ``"contradiction"`` (no value can meet
    both: a lower limit at or above an upper limit) or ``"duplicate"`` (the same side limited
    twice; the stricter limit governs), placed at the later requirement.
    """
    out: list[tuple[str, Requirement, str]] = []
    for j, b in enumerate(reqs):
        for i, a in enumerate(reqs[:j]):
            if _same_quantity(a) != _same_quantity(b):
                continue
            u = a.unit
            for lo_req, hi_req in ((a, b), (b, a)):
                if lo_req.lower is not None and hi_req.upper is not None:
                    if lo_req.lower >= hi_req.upper:
                        out.append(
                            (
                                "contradiction",
                                b,
                                f"{b.text} contradicts requirement {i + 1} ({a.text}): no "
                                f"{b.parameter} can be ≥ {_fmt(lo_req.lower, u)} and "
                                f"≤ {_fmt(hi_req.upper, u)}",
                            )
                        )
            for side in ("upper", "lower"):
                both = getattr(a, side) is not None and getattr(b, side) is not None
                if both and a.rule == b.rule:
                    out.append(
                        (
                            "duplicate",
                            b,
                            f"{b.text} limits the {side} side of {b.parameter} again (requirement "
                            f"{i + 1}: {a.text}) under the same conditions; the stricter limit "
                            "governs: state it once",
                        )
                    )
    return out


def resolve_requirements(
    spec: SpecFile, doc: Document, path: str
) -> tuple[list[Requirement], list[SpecError]]:
    """Resolve every requirement of ``spec``; returns the requirements and all errors found.

    Parameters
    ----------
    spec:
        The validated file.
    doc:
        The YAML document it came from (for positions).
    path:
        Shown in errors.

    Returns
    -------
    (requirements, errors)
        A requirement with an error is left out of ``requirements``.
    """
    r = _Resolver(spec, doc, path)
    reqs = r.resolve()
    for kind, req, message in requirement_conflicts(reqs):
        if kind == "contradiction":
            r.errors.append(SpecError(message, path=path, where=req.location))
    return reqs, r.errors
