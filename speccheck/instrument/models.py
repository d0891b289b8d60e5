"""Pydantic models of an instrument file (``instrument_version: 1``), as written by its owner.

Shape only, as :mod:`speccheck.spec.models` does for specs: lengths stay text with their unit
(``"2um"``) and are turned into numbers by :mod:`speccheck.units`. Identity and calibration state
(``id`` ... ``calibration``) are what a record shows; ``amplification``, ``horizontal_scale``,
``noise`` and ``repeatability`` are the calibration data that uncertainty is estimated from.
"""

from __future__ import annotations

import datetime as dt
from typing import Any, Literal

from pydantic import BaseModel, ConfigDict, Field

__all__ = [
    "Amplification",
    "Calibration",
    "HorizontalScale",
    "InstrumentFile",
    "Noise",
    "Repeatability",
    "RepeatabilityEntry",
    "instrument_json_schema",
]

ValueText = str | float | int


class _Strict(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True)


class Calibration(_Strict):
    """When the instrument was last calibrated, how long that holds, and the certificate."""

    date: dt.date = Field(description="Date of the last calibration, YYYY-MM-DD.")
    interval_days: int | None = Field(
        default=None, ge=1, description="Calibration interval in days (the owner's procedure)."
    )
    certificate: str | None = Field(default=None, description="Calibration certificate reference.")


class Amplification(_Strict):
    """Vertical amplification coefficient from a depth measurement standard (ISO 5436-1 type A;
    calibration per ISO 12179): measured depth = coefficient × true depth."""

    coefficient: float = Field(default=1.0, gt=0, description="Measured/true depth ratio.")
    standard_uncertainty: float = Field(
        ge=0, description="Standard uncertainty of the coefficient (relative, dimensionless)."
    )
    date: dt.date | None = None
    certificate: str | None = None


class HorizontalScale(_Strict):
    """Horizontal (x) scale coefficient: measured length = coefficient × true length."""

    coefficient: float = Field(default=1.0, gt=0)
    standard_uncertainty: float = Field(ge=0, description="Relative standard uncertainty.")
    date: dt.date | None = None
    certificate: str | None = None


class Noise(_Strict):
    """Residual noise Rq0, from traces on an optical flat, and the conditions it was taken under.

    The uncertainty model treats the noise as white, σ per sampled point: ``sigma`` when given,
    else σ = Rq0/√g with g the noise bandwidth of the λc and λs Gaussians at ``spacing``.
    """

    rq0: ValueText = Field(description="Rq of a trace on an optical flat, with unit: '0.004um'.")
    sigma: ValueText | None = Field(
        default=None, description="White-noise standard deviation per point, with unit."
    )
    lambda_c: ValueText | None = Field(default=None, description="λc Rq0 was taken at: '0.8mm'.")
    lambda_s: ValueText | None = Field(default=None, description="λs Rq0 was taken at: '2.5um'.")
    spacing: ValueText | None = Field(default=None, description="Sampling spacing: '0.5um'.")
    date: dt.date | None = None
    certificate: str | None = None
    profiles: list[str] = Field(default_factory=list, description="SHA-256 of the flat traces.")


class RepeatabilityEntry(_Strict):
    """Type A standard deviation of one parameter from repeated traces at one position."""

    sd: ValueText = Field(description="Standard deviation of single values, with unit.")
    dof: int = Field(ge=1, description="Degrees of freedom (number of traces − 1).")


class Repeatability(_Strict):
    """Repeatability study: per-parameter standard deviations and the evidence."""

    date: dt.date | None = None
    lambda_c: ValueText | None = Field(default=None, description="λc of the study: '0.8mm'.")
    lambda_s: ValueText | None = Field(default=None, description="λs of the study: '2.5um'.")
    profiles: list[str] = Field(default_factory=list, description="SHA-256 of the traces.")
    parameters: dict[str, RepeatabilityEntry] = Field(default_factory=dict)


class InstrumentFile(_Strict):
    """A measuring-instrument file (``instrument_version: 1``)."""

    model_config = ConfigDict(
        extra="forbid",
        frozen=True,
        title="speccheck instrument",
        coerce_numbers_to_str=True,
    )

    instrument_version: Literal[1]
    id: str = Field(description="The owner's identifier of the instrument, e.g. 'BENCH-2'.")
    manufacturer: str | None = None
    model: str | None = None
    serial: str | None = None
    version: str | None = Field(default=None, description="Software or firmware version.")
    probing_system: str | None = Field(default=None, description="Probe or pick-up identity.")
    stylus_tip_radius: ValueText | None = Field(default=None, description="With unit: '2um'.")
    lambda_s: ValueText | None = Field(default=None, description="λs of the instrument: '2.5um'.")
    calibration: Calibration | None = None
    amplification: Amplification | None = None
    horizontal_scale: HorizontalScale | None = None
    noise: Noise | None = None
    repeatability: Repeatability | None = None
    notes: str | None = None


def instrument_json_schema() -> dict[str, Any]:
    """JSON Schema (draft 2020-12) of instrument files, from the pydantic models."""
    schema = InstrumentFile.model_json_schema()
    schema["$schema"] = "https://json-schema.org/draft/2020-12/schema"
    return schema
