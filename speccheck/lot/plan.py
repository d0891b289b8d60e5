"""Inspection plan files: which lot, which surfaces against which specs, how many parts.

An inspection plan is a YAML file (``plan_version: 1``), read with the same safe YAML reader as
specification files (no tags, no duplicate keys, positions kept) and validated by pydantic::

    plan_version: 1
    lot:
      id: ARD-2611-014
      supplier: Ardent Precision Grinding
      part: KFP-2041
      size: 20                  # parts in the lot (N)
      received: 2026-11-28
    surfaces:                   # surface name -> spec file (relative to this plan)
      seal-seat:
        spec: kfp-2041-seal-seat.yaml
        measurements: 3         # profiles per surface and part, at least
    sampling:
      inspection_level: II      # n from the ISO 2859-1 code letter ...
      acceptance_number: 1      # ... or `sample_size: 8` instead; c is always stated
    data:
      pattern: "{part_serial}/{surface}/*.csv"

``data.pattern`` says where the profiles of one part and surface lie below the ``--data``
folder: ``{part_serial}`` stands for the part's serial (any text without ``/``), ``{surface}``
for the surface name, ``*`` and ``?`` match within one folder level (no ``**``). Every sampled
part has its own serial; the number of serials found must equal the sample size.
"""

from __future__ import annotations

import hashlib
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Literal

from speccheck.errors import InputError, SpecError
from speccheck.lot.sampling import SamplingPlan, plan_for_level, plan_for_sample_size

__all__ = [
    "LoadedPlan",
    "PlanCheck",
    "PlanSurface",
    "check_plan",
    "is_plan_document",
    "load_plan",
    "plan_json_schema",
    "find_part_files",
    "DEFAULT_PATTERN",
]

DEFAULT_PATTERN = "{part_serial}/{surface}/*.csv"
_NAME = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._-]*$")
_PLACEHOLDER = re.compile(r"\{([^{}]*)\}")


def _models():
    """The pydantic models (built on first use: pydantic is not imported by ``--help``)."""
    from pydantic import BaseModel, ConfigDict, Field, field_validator, model_validator

    class _Strict(BaseModel):
        model_config = ConfigDict(extra="forbid", frozen=True)

    class Lot(_Strict):
        """The lot inspected: identity, supplier, part and lot size."""

        model_config = ConfigDict(extra="forbid", frozen=True, coerce_numbers_to_str=True)
        id: str = Field(min_length=1, description="Lot identifier, as on the delivery papers.")
        supplier: str = Field(min_length=1, description="Who delivered the lot.")
        part: str = Field(min_length=1, description="Part number of the parts in the lot.")
        size: int = Field(ge=1, description="Lot size N: parts in the lot.")
        received: str = Field(min_length=1, description="Date the lot was received (text).")
        part_name: str | None = Field(None, description="Part name, for the record.")
        order: str | None = Field(None, description="Purchase order, for the record.")

    class Surface(_Strict):
        """One surface of the part: its specification and the profiles per part."""

        spec: str = Field(
            min_length=1,
            description="Specification file of this surface, relative to the plan's folder.",
        )
        measurements: int = Field(
            1, ge=1, description="Profiles measured per sampled part on this surface, at least."
        )

    class Sampling(_Strict):
        """Sampling by attributes (ISO 2859-1 single sampling): n and c."""

        model_config = ConfigDict(extra="forbid", frozen=True)
        sample_size: int | None = Field(
            None,
            ge=1,
            description="Sample size n stated directly (instead of inspection_level).",
        )
        inspection_level: Literal["II"] | None = Field(
            None,
            description=(
                "ISO 2859-1 general inspection level (II): n from the lot size's code letter "
                "(instead of sample_size)."
            ),
        )
        acceptance_number: int = Field(
            ge=0,
            description="Acceptance number c: accept the lot with at most c nonconforming parts.",
        )

        @model_validator(mode="after")
        def _one_way(self):
            if (self.sample_size is None) == (self.inspection_level is None):
                raise ValueError(
                    "give either 'sample_size' or 'inspection_level: II', not both or neither"
                )
            return self

    class Data(_Strict):
        """Where the profile files of the sampled parts lie, and how to read them."""

        pattern: str = Field(
            DEFAULT_PATTERN,
            description=(
                "Where one part's profiles of one surface lie below --data: {part_serial} once, "
                "{surface} optional, * and ? within one folder level."
            ),
        )
        format: Literal["csv", "tsv", "txt", "x3p", "sdf"] | None = Field(
            None, description="Profile file format; by default taken from each file's extension."
        )
        dx: str | None = Field(
            None, description="Sampling step with its unit (e.g. '0.5um') for files without one."
        )
        decimal: Literal[".", ","] = Field(".", description="Decimal mark of text profile files.")

        @field_validator("pattern")
        @classmethod
        def _pattern(cls, v: str) -> str:
            names = _PLACEHOLDER.findall(v)
            unknown = sorted(set(names) - {"part_serial", "surface"})
            if unknown:
                raise ValueError(
                    f"unknown placeholder {{{unknown[0]}}} (known: {{part_serial}}, {{surface}})"
                )
            if names.count("part_serial") != 1:
                raise ValueError("the pattern must contain {part_serial} exactly once")
            if v.startswith("/") or ".." in v.split("/") or "**" in v or "\\" in v:
                raise ValueError(
                    "the pattern is relative to --data, with '/' between folders, no '..' or '**'"
                )
            return v

    class PlanFile(_Strict):
        """speccheck inspection plan file, plan_version 1."""

        plan_version: Literal[1] = Field(description="Version of the plan file format: 1.")
        lot: Lot = Field(description="The lot inspected.")
        surfaces: dict[str, Surface] = Field(
            min_length=1,
            description="Surface name (letters, digits, '.', '_', '-') -> its spec and profiles.",
        )
        sampling: Sampling = Field(description="How many parts are inspected and when to accept.")
        data: Data = Field(Data(), description="Where the profile files lie and how to read them.")
        notes: str | None = Field(None, description="Free text, kept in the lot record.")

        @field_validator("surfaces")
        @classmethod
        def _surface_names(cls, v: dict[str, Any]) -> dict[str, Any]:
            for name in v:
                if not _NAME.match(name):
                    raise ValueError(
                        f"surface name {name!r}: letters, digits, '.', '_' and '-' only "
                        "(it is part of the data path)"
                    )
            return v

    return PlanFile


def plan_json_schema() -> dict[str, Any]:
    """JSON Schema (draft 2020-12) of lot plan files, from the pydantic models."""
    schema = _models().model_json_schema()
    schema["$schema"] = "https://json-schema.org/draft/2020-12/schema"
    schema["title"] = "speccheck lot plan file, plan_version 1"
    return schema


@dataclass(frozen=True)
class PlanSurface:
    """One surface of the part: its spec file (absolute) and the profiles needed per part."""

    name: str
    spec_path: Path
    spec_text: str  # as written in the plan
    measurements: int


@dataclass(frozen=True)
class LoadedPlan:
    """A validated inspection plan with its sampling plan resolved."""

    path: str
    sha256: str
    raw: bytes
    lot: dict[str, Any]  # id, supplier, part, size, received, (part_name, order)
    surfaces: tuple[PlanSurface, ...]
    sampling: SamplingPlan
    pattern: str
    fmt: str | None
    dx: str | None
    decimal: str
    notes: str | None

    def to_dict(self) -> dict[str, Any]:
        return {
            "path": self.path,
            "sha256": self.sha256,
            "plan_version": 1,
            "pattern": self.pattern,
            "notes": self.notes,
        }


def _key_text(path: tuple[Any, ...]) -> str:
    out = ""
    for k in path:
        out += f"[{k}]" if isinstance(k, int) else (f".{k}" if out else str(k))
    return out


@dataclass
class PlanCheck:
    """Everything found reading one plan file: the plan when valid, every error otherwise.

    ``document`` (keys with positions) is None when the YAML itself could not be read;
    ``surface_positions`` maps each surface name to the (line, col) of its ``spec`` key.
    """

    path: str
    plan: LoadedPlan | None
    errors: list[SpecError]
    document: Any = None
    surface_positions: dict[str, tuple[int, int]] | None = None


def _validation_errors(exc: Any, doc: Any, p: str) -> list[SpecError]:
    """Pydantic errors as SpecErrors at their keys' positions, in file order."""
    from speccheck.spec._yaml import where

    errors: list[tuple[int, int, int, str]] = []
    for e in exc.errors(include_url=False):
        loc = tuple(e["loc"])
        line, col = doc.position(loc)
        inside = f" in {_key_text(loc[:-1])}" if len(loc) > 1 else ""
        if e["type"] == "extra_forbidden":
            msg = f"unknown key '{loc[-1]}'{inside}"
        elif e["type"] == "missing":
            msg = f"missing key '{loc[-1]}'{inside}"
        else:
            detail = (
                str(e.get("ctx", {}).get("error", e["msg"]))
                if e["type"] == "value_error"
                else e["msg"]
            )
            msg = f"{_key_text(loc)}: {detail}" if loc else detail
        errors.append((line, col, len(errors), msg))
    return [SpecError(m, path=p, where=where(ln, c)) for ln, c, _, m in sorted(errors)]


def check_plan(path: str | Path) -> PlanCheck:
    """Read and validate an inspection plan file, collecting every error instead of the first.

    Parameters
    ----------
    path:
        The YAML file. Spec paths inside it are relative to its folder.

    Returns
    -------
    PlanCheck
        ``plan`` set and ``errors`` empty when the file is valid.

    Raises
    ------
    SpecError
        Only when the file cannot be read at all (missing, too large, not text).
    """
    from pydantic import ValidationError

    from speccheck._atomic import note_input, read_bounded
    from speccheck.spec._text import apply_written_text
    from speccheck.spec._yaml import MAX_SPEC_BYTES, decode_yaml_bytes, load_yaml, where

    p = str(path)
    raw = read_bounded(path, limit=MAX_SPEC_BYTES, role="inspection plan", error=SpecError)
    try:
        doc = load_yaml(decode_yaml_bytes(raw, p), p)
    except SpecError as exc:
        return PlanCheck(p, None, [exc])
    if not isinstance(doc.data, dict):
        msg = "an inspection plan is a mapping starting with 'plan_version: 1'"
        return PlanCheck(p, None, [SpecError(msg, path=p, where=where(1, 1))], doc)
    plan_model = _models()
    text_errors = apply_written_text(plan_model, doc, p)
    if text_errors:
        return PlanCheck(p, None, list(text_errors), doc)
    try:
        model = plan_model.model_validate(doc.data)
    except ValidationError as exc:
        return PlanCheck(p, None, _validation_errors(exc, doc, p), doc)

    base = Path(path).resolve().parent
    surfaces, errors, positions = [], [], {}
    for name, s in model.surfaces.items():
        spec_path = (base / s.spec).resolve()
        line, col = doc.position(("surfaces", name, "spec"))
        positions[name] = (line, col)
        if not spec_path.is_file():
            errors.append(
                SpecError(
                    f"surfaces.{name}.spec: spec file {s.spec!r} not found (looked in {base})",
                    path=p,
                    where=where(line, col),
                )
            )
            continue
        note_input(spec_path, "specification")
        surfaces.append(PlanSurface(name, spec_path, s.spec, s.measurements))

    lot = model.lot.model_dump(exclude_none=True)
    smp = model.sampling
    try:
        if smp.inspection_level is not None:
            sampling = plan_for_level(
                lot["size"], smp.acceptance_number, level=smp.inspection_level
            )
        else:
            assert smp.sample_size is not None
            sampling = plan_for_sample_size(lot["size"], smp.sample_size, smp.acceptance_number)
    except ValueError as exc:  # a lot of one part has no ISO 2859-1 code letter
        line, col = doc.position(("lot", "size"))
        errors.insert(0, SpecError(f"lot.size: {exc}", path=p, where=where(line, col)))
    if errors:
        return PlanCheck(p, None, errors, doc, positions)
    plan = LoadedPlan(
        path=p,
        sha256=hashlib.sha256(raw).hexdigest(),
        raw=raw,
        lot=lot,
        surfaces=tuple(surfaces),
        sampling=sampling,
        pattern=model.data.pattern,
        fmt=model.data.format,
        dx=model.data.dx,
        decimal=model.data.decimal,
        notes=model.notes,
    )
    return PlanCheck(p, plan, [], doc, positions)


def load_plan(path: str | Path) -> LoadedPlan:
    """Read and validate an inspection plan file.

    Parameters
    ----------
    path:
        The YAML file. Spec paths inside it are relative to its folder.

    Returns
    -------
    LoadedPlan

    Raises
    ------
    SpecError
        With ``path`` and ``where="line L, col C"``: YAML syntax, an unknown or missing key, a
        bad value, a spec file that does not exist (the first such error in the file).
    """
    check = check_plan(path)
    if check.errors:
        raise check.errors[0]
    assert check.plan is not None
    return check.plan


def is_plan_document(path: str | Path) -> bool:
    """True when ``path`` reads as a YAML mapping with a top-level ``plan_version`` key.

    Unreadable or malformed files count as not a plan (the spec reader reports them).
    """
    from speccheck._atomic import read_bounded
    from speccheck.errors import SpeccheckError
    from speccheck.spec._yaml import MAX_SPEC_BYTES, decode_yaml_bytes, load_yaml

    p = str(path)
    try:  # the same safe reader as the loaders (no tags, bounded size and nesting)
        raw = read_bounded(path, limit=MAX_SPEC_BYTES, role="file", error=SpecError)
        data = load_yaml(decode_yaml_bytes(raw, p), p).data
    except (OSError, SpeccheckError):
        return False
    return isinstance(data, dict) and "plan_version" in data


def _natural_key(text: str) -> list[Any]:
    return [int(t) if t.isdigit() else t.lower() for t in re.split(r"(\d+)", text)]


def _pattern_regex(pattern: str, surface: str) -> re.Pattern[str]:
    out = []
    for piece in re.split(r"(\{part_serial\}|\{surface\}|\*|\?)", pattern):
        if piece == "{part_serial}":
            out.append(r"(?P<part_serial>[^/]+)")
        elif piece == "{surface}":
            out.append(re.escape(surface))
        elif piece == "*":
            out.append(r"[^/]*")
        elif piece == "?":
            out.append(r"[^/]")
        else:
            out.append(re.escape(piece))
    return re.compile("".join(out) + r"\Z")


def find_part_files(plan: LoadedPlan, data_dir: str | Path) -> dict[str, dict[str, list[Path]]]:
    """Profile files of every sampled part, found below ``data_dir`` by the plan's pattern.

    Returns
    -------
    dict
        serial -> surface name -> files (natural sort order), serials in natural order.

    Raises
    ------
    InputError
        The folder does not exist; a part lacks a surface or has fewer profiles than the plan
        asks for; the number of parts found differs from the sample size.
    """
    import glob

    from speccheck._atomic import note_input

    root = Path(data_dir)
    if not root.is_dir():
        raise InputError("data folder does not exist", path=str(root))
    found: dict[str, dict[str, list[Path]]] = {}
    for surface in plan.surfaces:
        regex = _pattern_regex(plan.pattern, surface.name)
        globbed = plan.pattern.replace("{part_serial}", "*").replace(
            "{surface}", glob.escape(surface.name)
        )
        for hit in glob.glob(globbed, root_dir=root):
            rel = Path(hit).as_posix()
            m = regex.match(rel)
            if m is None or not (root / hit).is_file():
                continue
            note_input(root / hit, "profile")
            found.setdefault(m.group("part_serial"), {}).setdefault(surface.name, []).append(
                root / hit
            )
    serials = sorted(found, key=_natural_key)
    n = plan.sampling.sample_size
    if len(serials) != n:
        listed = ", ".join(serials[:12]) + (" …" if len(serials) > 12 else "") or "none"
        raise InputError(
            f"the plan samples {n} part(s) but {len(serials)} match '{plan.pattern}' ({listed})",
            path=str(root),
        )
    out: dict[str, dict[str, list[Path]]] = {}
    for serial in serials:
        out[serial] = {}
        for surface in plan.surfaces:
            files = sorted(found[serial].get(surface.name, []), key=lambda q: _natural_key(q.name))
            if len(files) < surface.measurements:
                raise InputError(
                    f"surface {surface.name}: the plan asks for {surface.measurements} profile(s), "
                    f"found {len(files)} matching '{plan.pattern}'",
                    path=str(root),
                    where=f"part {serial}",
                )
            out[serial][surface.name] = files
    return out
