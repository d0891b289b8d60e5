"""speccheck.evaluation: acceptance rules, ISO 14253-1 decision rules, the evaluator, the result.

- :mod:`~speccheck.evaluation.rules`: 16 % rule (ISO 4288 step procedure) and max-rule.
- :mod:`~speccheck.evaluation.decision`: zones and simple / guarded acceptance / guarded rejection.
- :mod:`~speccheck.evaluation.evaluator`: spec + profiles -> :class:`CheckResult`.
- :mod:`~speccheck.evaluation.result`: the result data model and its JSON form.

Importing this package does not import numpy; the evaluator imports it when it runs.
"""

from speccheck.evaluation.evaluator import evaluate, evaluate_files, load_inputs
from speccheck.evaluation.result import CheckResult

__all__ = ["evaluate", "evaluate_files", "load_inputs", "CheckResult"]
