"""Specification files: safe YAML with positions, pydantic models, the callout parser, lint.

- :func:`load_spec` reads a YAML specification and returns a :class:`LoadedSpec` whose
  :class:`Requirement` objects have every default resolved, each with its source.
- :func:`parse_callout` reads drawing-style requirement text (``"U Rz 4; L Rz 1.6"``).
- :func:`lint_paths` finds mistakes and risky choices; :func:`explain_requirement` says what a
  requirement asks for in plain words.
"""

from speccheck.spec.callout import Callout, parse_callout
from speccheck.spec.loader import check_spec, load_spec
from speccheck.spec.requirement import LoadedSpec, Requirement

__all__ = ["load_spec", "check_spec", "LoadedSpec", "Requirement", "Callout", "parse_callout"]
