"""Profile filters: pure functions on height arrays in µm.

- :func:`gaussian_mean_line`, :func:`gaussian_lowpass`: ISO 16610-21 Gaussian (λc mean line,
  λs short-wave filter).
- :func:`robust_mean_line`, :func:`regression_mean_line`: ISO 16610-31 robust Gaussian
  regression (order 2 or 0) and the plain Gaussian regression.
- :func:`valley_suppressed_mean_line`: ISO 13565-1 reference line.
- :func:`remove_form`: least-squares line, arc, polynomial.
"""

from speccheck.filters.form import FORM_KINDS, FormFit, remove_form
from speccheck.filters.gaussian import (
    ALPHA,
    gaussian_kernel,
    gaussian_lowpass,
    gaussian_mean_line,
    mean_line_transmission,
)
from speccheck.filters.robust import RobustFit, regression_mean_line, robust_mean_line
from speccheck.filters.valley import valley_suppressed_mean_line

__all__ = [
    "ALPHA",
    "FORM_KINDS",
    "FormFit",
    "RobustFit",
    "gaussian_kernel",
    "gaussian_lowpass",
    "gaussian_mean_line",
    "mean_line_transmission",
    "regression_mean_line",
    "remove_form",
    "robust_mean_line",
    "valley_suppressed_mean_line",
]
