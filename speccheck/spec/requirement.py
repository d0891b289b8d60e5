"""The resolved specification: what the evaluator applies, every default filled in with its source.

:class:`Requirement` and :class:`LoadedSpec` are plain frozen dataclasses; they are produced by
:func:`speccheck.spec.loader.load_spec` and read by the evaluation and report layers. Limits are
in ``Requirement.unit`` (the parameter's unit), lengths carry their unit in their names.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Literal

from speccheck.errors import SpeccheckError

if TYPE_CHECKING:
    from speccheck.parameters.conditions import Conditions

__all__ = ["Requirement", "LoadedSpec", "Convention", "DecisionRule", "Rule", "rules_standard"]

Convention = Literal["iso1302", "iso21920", "asme"]
DecisionRule = Literal["simple", "guarded-acceptance", "guarded-rejection"]
Rule = Literal["16%", "max"]


def rules_standard(convention: str) -> str:
    """The standard the 16 % rule and the max-rule are cited from under ``convention``.

    ISO 21920-3:2021 replaced ISO 4288:1996 and carries both rules (from memory; its clause
    numbers are not cited here). ISO 1302 and ASME drawings that state the 16 % rule refer to
    ISO 4288.
    """
    return "ISO 21920-3" if convention == "iso21920" else "ISO 4288"


def rule_words(convention: str, rule: str, sampling: str) -> str:
    """The rule with its source, e.g. "16 % rule (ISO 4288 5.2, step procedure)"."""
    ref = rules_standard(convention)
    if rule == "16%":
        clause = " 5.2" if ref == "ISO 4288" else ""
        how = "step procedure" if sampling == "sequential" else "fixed sample"
        return f"16 % rule ({ref}{clause}, {how})"
    if convention == "asme":
        return "maximum (ASME Y14.36: a single value is a maximum)"
    return f"max-rule ({ref}{' 5.3' if ref == 'ISO 4288' else ''})"


@dataclass(frozen=True)
class Requirement:
    """One requirement on one parameter, one- or two-sided, with every default resolved."""

    text: str  # callout as written, or rendered from the structured mapping (callout grammar)
    parameter: str  # canonical computed name (ParsedName.name): "Ra", "Rz", "Rmr(0.5)", "Mr1"
    sections: int  # 5 by default; 3 for "Rz3"
    upper: float | None  # in `unit`
    lower: float | None
    unit: str  # names.PARAMETERS[base].unit ("µm", "%", "mm", "")
    rule: Rule
    rule_source: str
    filter: Literal["gaussian", "robust"]
    lambda_c_mm: float
    lambda_c_source: str
    lambda_s_um: float | None  # None: no λs filter (data already short-wave filtered)
    lambda_s_source: str
    cutoff_table: Literal["iso4288", "iso21920-3"]
    decision_rule: DecisionRule
    uncertainty: float | None  # expanded uncertainty U (k = 2) in `unit`, None if not given
    form: str  # "line" (default), "arc", "poly2".."poly6", "none"
    location: str  # "line 12, col 5" of the requirement in the YAML
    # Sources of the remaining resolved values (for `speccheck explain` and reports).
    sections_source: str = ""
    filter_source: str = ""
    form_source: str = ""
    uncertainty_source: str = ""
    # True under `uncertainty: estimate`: every value carries its own U, estimated at check time
    uncertainty_estimated: bool = False
    # Which edition defines the parameter's value: "iso4287" (ISO 4287:1997 section means; also
    # used under the ASME convention) or "iso21920-2" (ISO 21920-2:2021 field parameters).
    definitions: Literal["iso4287", "iso21920-2"] = "iso4287"
    # Long-wave cut-off λf of a waviness (W) requirement, with its source; None for R and P.
    lambda_f_mm: float | None = None
    lambda_f_source: str = ""
    # The unit the drawing states heights in ("µm" or "µin"); limits above are always in
    # `unit`. Only µm parameters are shown in µin; others keep their own unit.
    drawing_unit: str = ""
    # How the filters meet the trace ends (Conditions.ends) and where that came from.
    ends: Literal["run-in", "moment"] = "run-in"
    ends_source: str = ""
    # True when λc came from the Ra/Rz table under `periodic: auto`: the evaluation replaces it
    # by the RSm row (ISO 4288:1996 Table 3) when the first measurement tests periodic.
    periodic_test: bool = False

    def conditions(self) -> Conditions:
        """The measurement conditions this requirement is evaluated under (one place for all).

        Raises SpeccheckError (from Conditions) when the settings cannot go together.
        """
        from speccheck.parameters.conditions import Conditions
        from speccheck.parameters.names import parse_parameter_name

        parsed = parse_parameter_name(self.parameter)
        if parsed is None:
            raise SpeccheckError(f"unknown parameter {self.parameter!r}")
        cond = Conditions(
            lambda_c_mm=self.lambda_c_mm,
            lambda_s_um=self.lambda_s_um,
            lambda_f_mm=self.lambda_f_mm,
            sections=self.sections,
            filter=self.filter,
            form=self.form,
            profile=parsed.letter,
            definitions=self.definitions,
            ends=self.ends,
        )
        from speccheck.parameters.compute import check_parameter_names

        try:  # a parametrised name that compute would refuse (Rmr(x)) is refused here
            check_parameter_names([self.parameter], cond)
        except ValueError as exc:
            raise SpeccheckError(str(exc)) from None
        return cond

    @property
    def evaluation_length_mm(self) -> float:
        """sections × λc (ISO 4288:1996 4.4: sampling length lr = λc)."""
        return self.sections * self.lambda_c_mm


@dataclass(frozen=True)
class LoadedSpec:
    """A specification file, read, validated and resolved."""

    path: str
    sha256: str
    raw: bytes  # the file exactly as read
    part: dict[str, str]  # number, revision, surface, (name, supplier, drawing)
    convention: Convention
    decision_rule: DecisionRule
    value_per: Literal["evaluation-length", "section"]
    isolated_features: Literal["report", "undecided"]
    notes: str | None
    requirements: tuple[Requirement, ...]
    # how the 16 % rule takes its values: the ISO 4288 step procedure, or a sample fixed in advance
    sampling: Literal["sequential", "fixed"] = "sequential"
    # `uncertainty: estimate`: U per value from the instrument file's calibration data
    uncertainty_estimate: bool = False
    # `record:`: identity every record must carry, the longest calibration age (days), and
    # where each is written ("line L, col C")
    record_require: tuple[str, ...] = ()
    record_require_where: str = ""
    max_calibration_age_days: float | None = None
    max_calibration_age_where: str = ""
