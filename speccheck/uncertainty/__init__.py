"""Measurement uncertainty of surface-texture values (pure: arrays and numbers, no specs).

- :mod:`~speccheck.uncertainty.model`: the instrument's error model and :func:`estimate_values`.
- :mod:`~speccheck.uncertainty.gum`: law of propagation of uncertainty (JCGM 100:2008).
- :mod:`~speccheck.uncertainty.montecarlo`: coverage intervals and the adaptive Monte Carlo
  procedure (JCGM 101:2008).
- :mod:`~speccheck.uncertainty.noise`: white noise through the roughness filter.
- :mod:`~speccheck.uncertainty.heights`: height parameters of many profiles at once, gradients.
- :mod:`~speccheck.uncertainty.repeat`: type A repeatability from repeated traces.
"""

from speccheck.uncertainty.model import Estimate, InstrumentErrors, Repeat, estimate_values

__all__ = ["Estimate", "InstrumentErrors", "Repeat", "estimate_values"]
