"""The measuring instrument: identity, calibration state and calibration data (YAML, pydantic).

An instrument file says which instrument measured (id, model, serial), when it was last calibrated
and against which certificate, and the calibration data that measurement uncertainty is estimated
from (vertical amplification, horizontal scale, residual noise, repeatability).
"""

from speccheck.instrument.loader import LoadedInstrument, check_instrument, load_instrument
from speccheck.instrument.models import (
    Amplification,
    Calibration,
    HorizontalScale,
    InstrumentFile,
    Noise,
    Repeatability,
    RepeatabilityEntry,
    instrument_json_schema,
)

__all__ = [
    "LoadedInstrument",
    "check_instrument",
    "load_instrument",
    "Amplification",
    "Calibration",
    "HorizontalScale",
    "InstrumentFile",
    "Noise",
    "Repeatability",
    "RepeatabilityEntry",
    "instrument_json_schema",
]
