"""Pydantic models of a specification file (YAML), as written by its author.

These models check the *shape* of the file: which keys exist, which are required, which values
are allowed. Units, callout grammar, parameter names and defaults are checked and resolved
afterwards by :mod:`speccheck.spec.resolve`, which can point at the character concerned.
``speccheck schema`` prints :func:`spec_json_schema`.
"""

from __future__ import annotations

from typing import Annotated, Any, Literal

from pydantic import BaseModel, ConfigDict, Discriminator, Field, Tag

__all__ = [
    "Part",
    "Measurement",
    "Diagnostics",
    "RecordRules",
    "IDENTITY_FIELDS",
    "RequirementFields",
    "RequirementItem",
    "SpecFile",
    "FORMS",
    "model_at",
    "spec_json_schema",
]

#: Form removed before filtering (same names as speccheck.parameters.conditions.FORMS).
FORMS = ("line", "arc", "poly2", "poly3", "poly4", "poly5", "poly6", "none")
Form = Literal["line", "arc", "poly2", "poly3", "poly4", "poly5", "poly6", "none"]
# A length or limit with its unit, e.g. "0.8mm", "2.5um", "0.4 µm", "70%". Numbers are accepted
# by the schema so that the resolver can say precisely that the unit is missing.
ValueText = str | float | int


class _Strict(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True)


class Part(_Strict):
    """The part and surface the specification applies to."""

    model_config = ConfigDict(extra="forbid", frozen=True, coerce_numbers_to_str=True)

    number: str = Field(description="Part number, e.g. KFP-2041.")
    revision: str = Field(description="Drawing revision.")
    surface: str = Field(description="Which surface of the part, e.g. 'seal seat'.")
    name: str | None = None
    supplier: str | None = None
    drawing: str | None = None


class Measurement(_Strict):
    """Defaults for every requirement that does not state its own."""

    cutoff: ValueText | None = Field(default=None, description="λc with unit, e.g. '0.8mm'.")
    ls: ValueText | None = Field(
        default=None, description="λs with unit, e.g. '2.5um', or 'none' (no λs filter)."
    )
    sections: int | None = Field(
        default=None, ge=1, description="Sections in the evaluation length (default 5)."
    )
    filter: Literal["gaussian", "robust"] | None = None
    form: Form | None = None
    value_per: Literal["evaluation-length", "section"] = "evaluation-length"
    periodic: bool | Literal["auto"] | None = Field(
        default=None,
        description="true: the profile is periodic, default cut-offs follow an RSm limit (ISO "
        "4288:1996 Table 3); false or absent: by Ra or Rz (Tables 1, 2); auto: by Ra or Rz "
        "unless the first measurement tests periodic (autocorrelation), then by its RSm.",
    )
    ends: Literal["run-in", "moment"] | None = Field(
        default=None,
        description="How the filters meet the trace ends. 'run-in' (default): one cut-off at "
        "each end is left unevaluated, so the trace must be the evaluation length plus two "
        "cut-offs. 'moment': the filters run to the ends by the ISO 16610-28 moment criterion "
        "and the whole trace, which then needs to be only the evaluation length, is evaluated.",
    )


class Diagnostics(_Strict):
    """What to do when a value rests on a few isolated points."""

    isolated_features: Literal["report", "undecided"] = "report"


#: What a spec may require every record to carry (``record.require``).
IDENTITY_FIELDS = ("serial", "operator", "order", "note", "instrument")


class RecordRules(_Strict):
    """What every record of this surface must carry, and how old a calibration may be."""

    require: list[Literal["serial", "operator", "order", "note", "instrument"]] = Field(
        default_factory=list,
        description="Identity every check must state: serial (the part's), operator, order "
        "(purchase order or lot number), note, instrument (from the profile file or an "
        "instrument file). A missing one is an error before anything is evaluated.",
    )
    max_calibration_age: ValueText | None = Field(
        default=None,
        description="Longest time since the instrument's last calibration, in days: '365 d'. "
        "Older, or no calibration date known: the check is undecided.",
    )


class RequirementFields(_Strict):
    """A requirement written as a mapping instead of callout text."""

    parameter: str = Field(description="Parameter, e.g. 'Ra', 'Rz3', 'Rpk', 'Rmr(0.5)'.")
    upper: ValueText | None = Field(
        default=None, description="Upper limit with unit: '0.8um', '70%'."
    )
    lower: ValueText | None = Field(default=None, description="Lower limit with unit.")
    rule: Literal["16%", "max"] | None = None
    cutoff: ValueText | None = Field(default=None, description="λc with unit, e.g. '0.8mm'.")
    ls: ValueText | None = Field(default=None, description="λs with unit, or 'none'.")
    units: Literal["um", "uin"] | None = Field(
        default=None, description="Overrides the spec's units for this requirement."
    )
    lf: ValueText | None = Field(
        default=None, description="λf with unit (W parameters only; never assumed), e.g. '8mm'."
    )
    sections: int | None = Field(default=None, ge=1)
    filter: Literal["gaussian", "robust"] | None = None
    form: Form | None = None


def _requirement_kind(value: Any) -> str | None:
    if isinstance(value, str):
        return "callout"
    if isinstance(value, dict) or isinstance(value, RequirementFields):
        return "fields"
    return None


RequirementItem = Annotated[
    Annotated[str, Tag("callout")] | Annotated[RequirementFields, Tag("fields")],
    Discriminator(
        _requirement_kind,
        custom_error_type="requirement_form",
        custom_error_message=(
            "a requirement is callout text such as 'Ra 0.8' or a mapping with 'parameter'"
        ),
    ),
]


class SpecFile(_Strict):
    """A surface-finish specification file (``spec_version: 1``)."""

    model_config = ConfigDict(
        extra="forbid",
        frozen=True,
        title="speccheck specification",
        json_schema_extra={"$comment": "speccheck specification file, spec_version 1"},
    )

    spec_version: Literal[1]
    part: Part
    requirements: list[RequirementItem] = Field(min_length=1)
    measurement: Measurement = Field(default_factory=lambda: Measurement())
    convention: Literal["iso1302", "iso21920", "asme"] = "iso1302"
    units: Literal["um", "uin"] | None = Field(
        default=None,
        description="Unit of the bare limit numbers in callouts: 'um' (µm) or 'uin' (µin, "
        "1 µin = 0.0254 µm exactly); required under convention asme.",
    )
    decision_rule: Literal["simple", "guarded-acceptance", "guarded-rejection"] = "simple"
    uncertainty: Literal["estimate"] | dict[str, ValueText] = Field(
        default_factory=dict,
        description="Expanded uncertainty U (k = 2) per parameter, with unit: {'Ra': '0.05um'} "
        "(stated, not estimated); or 'estimate': U of every value estimated from the "
        "instrument file's calibration data and the profile (GUM and Monte Carlo, 95 %).",
    )
    diagnostics: Diagnostics = Field(default_factory=lambda: Diagnostics())
    sampling: Literal["sequential", "fixed"] = Field(
        default="sequential",
        description=(
            "16 % rule: 'sequential' (ISO 4288 step procedure, decided at the first decisive "
            "step) or 'fixed' (a sample of 12 or more values fixed in advance, 16 % of all)."
        ),
    )
    record: RecordRules = Field(default_factory=lambda: RecordRules())
    notes: str | None = None


def model_at(path: tuple[str | int, ...]) -> type[BaseModel] | None:
    """The model whose fields are the keys at ``path`` (``()``, ``("part",)``, ...)."""
    if path == ():
        return SpecFile
    if len(path) == 1:
        sections: dict[str, type[BaseModel]] = {
            "part": Part,
            "measurement": Measurement,
            "diagnostics": Diagnostics,
            "record": RecordRules,
        }
        return sections.get(str(path[0]))
    if len(path) == 2 and path[0] == "requirements" and isinstance(path[1], int):
        return RequirementFields
    return None


def spec_json_schema() -> dict[str, Any]:
    """JSON Schema (draft 2020-12) of specification files, from the pydantic models."""
    schema = SpecFile.model_json_schema()
    schema["$schema"] = "https://json-schema.org/draft/2020-12/schema"
    return schema
