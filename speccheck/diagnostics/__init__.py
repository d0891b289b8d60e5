"""Say when a parameter value rests on a few points.

- :mod:`~speccheck.diagnostics.features` - isolated valleys and spikes against the local texture
- :mod:`~speccheck.diagnostics.influence` - tail shares, values without features, classes
- :mod:`~speccheck.diagnostics.diagnose` - the diagnostic for a profile and the opt-in policy
- :mod:`~speccheck.diagnostics.advice` - advice for specifications (for the specification check)

Wiring::

    diags = diagnose(parameter_set, requested=[r.parameter for r in spec.requirements])
    reason = policy_outcome(diags, spec.isolated_features)   # "isolated-features" or None
    lines = sensitive_parameter_advice([r.parameter for r in spec.requirements])
"""

from speccheck.diagnostics.advice import sensitive_parameter_advice
from speccheck.diagnostics.diagnose import (
    ISOLATED_FEATURES,
    Analysis,
    Diagnostic,
    analyse,
    diagnose,
    policy_outcome,
)
from speccheck.diagnostics.features import Feature, find_isolated_features, remove_features
from speccheck.diagnostics.influence import ParameterInfluence, tail_share

__all__ = [
    "ISOLATED_FEATURES",
    "Analysis",
    "Diagnostic",
    "Feature",
    "ParameterInfluence",
    "analyse",
    "diagnose",
    "find_isolated_features",
    "policy_outcome",
    "remove_features",
    "sensitive_parameter_advice",
    "tail_share",
]
