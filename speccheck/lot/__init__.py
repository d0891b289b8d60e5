"""Lots of parts inspected under a sampling plan.

- :mod:`speccheck.lot.sampling`: ISO 2859-1 code letters and sample sizes, OC curves (pure).
- :mod:`speccheck.lot.plan`: inspection plan files (YAML) and finding each part's profiles.
- :mod:`speccheck.lot.runner`: evaluate the sampled parts in parallel and dispose of the lot.
- :mod:`speccheck.lot.result`: the lot result data model and the disposition rule.
- :mod:`speccheck.lot.report`: the lot report (HTML template → PDF, optionally signed).
- :mod:`speccheck.lot.demo`: the invented demo lot.
"""

from speccheck.lot.plan import LoadedPlan, load_plan
from speccheck.lot.result import LotResult, PartResult, dispose
from speccheck.lot.runner import inspect_lot
from speccheck.lot.sampling import SamplingPlan, acceptance_probability, plan_for_level

__all__ = [
    "LoadedPlan",
    "load_plan",
    "inspect_lot",
    "LotResult",
    "PartResult",
    "dispose",
    "SamplingPlan",
    "plan_for_level",
    "acceptance_probability",
]
