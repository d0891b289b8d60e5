"""speccheck: decide whether measured surface profiles meet a surface-finish specification.

Layers, lowest first; each imports only from layers above it in this list:

- ``speccheck.errors``, ``speccheck.units``, ``speccheck.profile``: errors and exit statuses,
  unit conversion, the :class:`Profile` every reader returns.
- ``speccheck.readers``: files in (delimited text, ISO 25178-72 X3P, ISO 25178-71 SDF), Profile out.
- ``speccheck.filters``: ISO 16610 Gaussian and robust filters, form removal, ISO 13565-1.
- ``speccheck.parameters``: ISO 4287 / ISO 21920-2, ISO 13565, ASME B46.1 parameters;
  measurement conditions and ISO 4288 / ISO 21920-3 default cut-offs.
- ``speccheck.diagnostics``: when a value rests on a few points (scratches, spikes).
- ``speccheck.spec``: specification files (YAML, pydantic), drawing callout parser, lint.
- ``speccheck.evaluation``: 16 % rule, max-rule, ISO 14253-1 decision rules, verdicts.
- ``speccheck.report``: conformance record (jinja2 + weasyprint), signing, verification.
- ``speccheck.lot``, ``speccheck.records``: sampling plans, lots, the append-only records store.
- ``speccheck.demo``: the built-in demo data set.
- ``speccheck.cli``: the ``speccheck`` command, thin wrappers over the above.
"""

from speccheck._version import __version__
from speccheck.errors import ExitStatus, SpeccheckError

__all__ = ["__version__", "ExitStatus", "SpeccheckError", "Profile"]


def __getattr__(name: str):  # PEP 562: keep `import speccheck` free of numpy for a fast CLI
    if name == "Profile":
        from speccheck.profile import Profile

        return Profile
    raise AttributeError(f"module 'speccheck' has no attribute {name!r}")
