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
    "PlanSurface",
    "load_plan",
    "find_part_files",
    "plan_json_schema",
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
        model_config = ConfigDict(extra="forbid", frozen=True, coerce_numbers_to_str=True)
        id: str = Field(min_length=1)
        supplier: str = Field(min_length=1)
        part: str = Field(min_length=1)
        size: int = Field(ge=1)
        received: str = Field(min_length=1)
        part_name: str | None = None
        order: str | None = None

    class Surface(_Strict):
        spec: str = Field(min_length=1)
        measurements: int = Field(1, ge=1)

    class Sampling(_Strict):
        model_config = ConfigDict(extra="forbid", frozen=True)
        sample_size: int | None = Field(None, ge=1)
        inspection_level: Literal["II"] | None = None
        acceptance_number: int = Field(ge=0)

        @model_validator(mode="after")
        def _one_way(self):
            if (self.sample_size is None) == (self.inspection_level is None):
                raise ValueError(
                    "give either 'sample_size' or 'inspection_level: II', not both or neither"
                )
            return self

    class Data(_Strict):
        pattern: str = DEFAULT_PATTERN
        format: Literal["csv", "tsv", "txt", "x3p", "sdf"] | None = None
        dx: str | None = None
        decimal: Literal[".", ","] = "."

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
        plan_version: Literal[1]
        lot: Lot
        surfaces: dict[str, Surface] = Field(min_length=1)
        sampling: Sampling
        data: Data = Data()
        notes: str | None = None

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
        bad value, a spec file that does not exist.
    """
    from pydantic import ValidationError

    from speccheck.spec._text import apply_written_text
    from speccheck.spec._yaml import decode_yaml_bytes, load_yaml, where

    p = str(path)
    from speccheck._atomic import note_input, read_bounded
    from speccheck.spec._yaml import MAX_SPEC_BYTES

    raw = read_bounded(path, limit=MAX_SPEC_BYTES, role="inspection plan", error=SpecError)
    doc = load_yaml(decode_yaml_bytes(raw, p), p)
    if not isinstance(doc.data, dict):
        raise SpecError(
            "an inspection plan is a mapping starting with 'plan_version: 1'",
            path=p,
            where=where(1, 1),
        )
    plan_model = _models()
    text_errors = apply_written_text(plan_model, doc, p)
    if text_errors:
        raise text_errors[0]
    try:
        model = plan_model.model_validate(doc.data)
    except ValidationError as exc:
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
        line, col, _, msg = min(errors)
        raise SpecError(msg, path=p, where=where(line, col)) from None

    base = Path(path).resolve().parent
    surfaces = []
    for name, s in model.surfaces.items():
        spec_path = (base / s.spec).resolve()
        if not spec_path.is_file():
            line, col = doc.position(("surfaces", name, "spec"))
            raise SpecError(
                f"surfaces.{name}.spec: spec file {s.spec!r} not found (looked in {base})",
                path=p,
                where=where(line, col),
            )
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
        raise SpecError(f"lot.size: {exc}", path=p, where=where(line, col)) from None
    return LoadedPlan(
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
