"""speccheck's public Python API: specs, profiles, evaluation, parameters and verification.

Everything a script or a plant system needs is here; other modules are internal and may change
without notice. Every function takes and returns explicit units (lengths as text such as
``"0.5um"`` or ``"0.8mm"``; results carry a ``unit`` beside each value).

A whole check in a few lines, with no file touched (a sine of amplitude A has Ra = 2A/π,
here 0.4 µm; handbook formula)::

    >>> import numpy as np
    >>> from speccheck import api
    >>> spec = api.spec_from_dict({
    ...     "spec_version": 1,
    ...     "part": {"number": "KFP-2041", "revision": "C", "surface": "seal seat"},
    ...     "measurement": {"ls": "none"},
    ...     "requirements": ["Ra 0.8"],
    ... })
    >>> x_um = np.arange(11201) * 0.5
    >>> z = (0.2 * np.pi) * np.sin(2 * np.pi * x_um / 50.0)
    >>> result = api.evaluate(spec, [api.profile_from_arrays(z, z_unit="um", dx="0.5um")])
    >>> result.verdict
    'conforming'

The acceptance of parts can affect safety: the drawing, the contract and the applicable
standards take precedence, results are only as good as the instrument's calibration, and parts
are released by qualified personnel.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping, Sequence
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from speccheck.errors import SpeccheckError
from speccheck.profile import Profile, SourceInfo

if TYPE_CHECKING:
    from speccheck.evaluation.result import CheckResult
    from speccheck.parameters.compute import ParameterSet, ParameterValue
    from speccheck.report.verify import VerifyResult
    from speccheck.spec.loader import LoadedSpec

__all__ = [
    "Parameters",
    "evaluate",
    "load_spec",
    "parameters",
    "profile_from_arrays",
    "spec_from_dict",
    "spec_from_yaml",
    "verify",
]


def load_spec(path: str | Path) -> LoadedSpec:
    """Read and validate a specification file; a bad one raises a one-line ``SpecError``.

    >>> load_spec("no-such-spec.yaml")
    Traceback (most recent call last):
    ...
    speccheck.errors.SpecError: no-such-spec.yaml: file not found
    """
    from speccheck.spec.loader import load_spec as _load

    return _load(path)


def spec_from_yaml(text: str, *, name: str = "<spec>") -> LoadedSpec:
    """A specification from YAML text; errors name ``name`` and the line and column.

    >>> text = '''spec_version: 1
    ... part: {number: KFP-2041, revision: C, surface: seal seat}
    ... requirements: [Ra 0.8]
    ... '''
    >>> spec = spec_from_yaml(text)
    >>> [r.parameter for r in spec.requirements]
    ['Ra']
    >>> spec_from_yaml("spec_version: 1\\nrequirements: [Ra 0.8\\n", name="drawing-7.yaml")
    Traceback (most recent call last):
    ...
    speccheck.errors.SpecError: drawing-7.yaml:3:1: YAML syntax: ...
    """
    from speccheck.spec.loader import check_spec_bytes

    checked = check_spec_bytes(text.encode("utf-8"), name)
    if checked.errors or checked.spec is None:
        raise checked.errors[0]
    return checked.spec


def spec_from_dict(data: Mapping[str, Any], *, name: str = "<spec>") -> LoadedSpec:
    """A specification from a mapping shaped like the YAML file (written out as YAML first,
    so it is validated, hashed and recorded exactly as a file would be).

    >>> PART = {"number": "KFP-2041", "revision": "C", "surface": "seal seat"}
    >>> spec = spec_from_dict({"spec_version": 1, "part": PART,
    ...                        "requirements": ["Rz max 6.3"]})
    >>> spec.requirements[0].rule
    'max'
    """
    import yaml

    text = yaml.safe_dump(dict(data), sort_keys=False, allow_unicode=True)
    return spec_from_yaml(text, name=name)


def profile_from_arrays(
    z: Any, *, z_unit: str, dx: str, valid: Any = None, name: str | None = None
) -> Profile:
    """A measured profile from heights ``z`` in ``z_unit`` sampled every ``dx``.

    ``valid`` marks measured points (False or NaN: a dropout).

    >>> p = profile_from_arrays([0.0, 1.0, 0.5], z_unit="nm", dx="0.5um")
    >>> p.z_um.tolist(), p.dx_um
    ([0.0, 0.001, 0.0005], 0.5)
    """
    from speccheck.units import parse_length, um_per_unit

    scale = um_per_unit(z_unit, where="z_unit")
    dx_um = parse_length(dx, where="dx").um
    if not (np.isfinite(dx_um) and dx_um > 0):
        raise SpeccheckError(f"dx must be a positive length, got {dx!r}", where="dx")
    z_um = np.asarray(z, dtype=np.float64) * scale
    return Profile(z_um, dx_um, valid=valid, source=SourceInfo(path=name, format="array"))


def evaluate(spec: LoadedSpec, profiles: Sequence[Profile]) -> CheckResult:
    """Check profiles (in measurement order) against a spec: a ``CheckResult`` with
    ``verdict``, ``requirements`` (values, zones, next steps) and ``to_dict()`` (the JSON of
    ``speccheck check --json``).

    >>> PART = {"number": "KFP-2041", "revision": "C", "surface": "seal seat"}
    >>> spec = spec_from_dict({"spec_version": 1, "part": PART,
    ...                        "measurement": {"ls": "none"}, "requirements": ["Ra 0.8"]})
    >>> x_um = np.arange(11201) * 0.5
    >>> rough = profile_from_arrays(0.5 * np.pi * np.sin(2 * np.pi * x_um / 50), z_unit="um",
    ...                             dx="0.5um")
    >>> r = evaluate(spec, [rough, rough, rough])  # Ra ≈ 1.0 µm > 0.8 µm three times
    >>> r.verdict, r.requirements[0].values[0].unit
    ('nonconforming', 'µm')
    """
    from speccheck.evaluation.evaluator import evaluate as _evaluate

    return _evaluate(spec, profiles)


class Parameters(Mapping[str, "ParameterValue"]):
    """Parameter values by name (``params["Ra"].value``, ``.unit``), with ``sections``,
    ``conditions`` and ``notes`` as computed."""

    def __init__(self, computed: ParameterSet):
        self._set = computed

    def __getitem__(self, name: str) -> ParameterValue:
        return self._set.values[name]

    def __iter__(self) -> Iterator[str]:
        return iter(self._set.values)

    def __len__(self) -> int:
        return len(self._set.values)

    @property
    def sections(self) -> tuple[dict[str, ParameterValue], ...]:
        """Per-section values, first section first."""
        return self._set.sections

    @property
    def conditions(self) -> Any:
        """The conditions (λc, λs, sections, filter, form, profile, definitions, ends)."""
        return self._set.conditions

    @property
    def notes(self) -> tuple[str, ...]:
        """What the computation wants the reader to know."""
        return self._set.notes

    def to_dict(self) -> dict[str, Any]:
        """The JSON form (as ``speccheck params --json`` writes it, without ``source``)."""
        return self._set.to_dict()


def parameters(
    profile: Profile,
    *,
    cutoff: str,
    ls: str | None = "table",
    sections: int = 5,
    definitions: str = "iso4287",
    extra: Sequence[str] = (),
) -> Parameters:
    """Every standard parameter of ``profile`` at cut-off ``cutoff`` (λs from ISO 3274 Table 1
    with ``ls="table"``, none with ``ls=None``, or a length such as ``"2.5um"``).

    >>> x_um = np.arange(11201) * 0.5
    >>> p = profile_from_arrays(0.2 * np.pi * np.sin(2 * np.pi * x_um / 50), z_unit="um",
    ...                         dx="0.5um")
    >>> params = parameters(p, cutoff="0.8mm", ls=None)
    >>> round(params["Ra"].value, 2), params["Ra"].unit  # 2A/π = 0.4 µm
    (0.4, 'µm')
    """
    from speccheck.parameters.compute import InsufficientData, compute_parameters
    from speccheck.parameters.conditions import Conditions
    from speccheck.parameters.cutoff import lambda_s_for
    from speccheck.units import parse_length

    lambda_c_mm = parse_length(cutoff, where="cutoff").mm
    ls_um = "table" if ls == "table" else (None if ls is None else parse_length(ls).um)
    conditions = Conditions(
        lambda_c_mm,
        lambda_s_for(lambda_c_mm, ls_um),  # type: ignore[arg-type]
        sections=sections,
        definitions=definitions,
    )
    computed = compute_parameters(profile, dx_um=profile.dx_um, conditions=conditions, extra=extra)
    if isinstance(computed, InsufficientData):
        raise SpeccheckError(computed.reason, path=profile.source.path)
    return Parameters(computed)


def verify(path: str | Path, *, trust: Sequence[str | Path] = ()) -> VerifyResult:
    """Verify a signed record (conformance or lot) and recompute its result from the files it
    attaches; ``ok`` is True when the signature holds and the recomputation agrees.

    >>> verify("no-such-record.pdf")
    Traceback (most recent call last):
    ...
    speccheck.errors.ReportError: no-such-record.pdf: file not found
    """
    from speccheck.lot.verify import verify_record

    return verify_record(Path(path), trust=[Path(t) for t in trust])
