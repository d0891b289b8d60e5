"""Builders shared by the report, signing and verify tests (no tests here).

Profiles are closed forms (sines); results are built by hand so that the report layer is
tested on its own, independent of the evaluator.
"""

from __future__ import annotations

import hashlib
import math
from pathlib import Path
from types import SimpleNamespace

import numpy as np

from speccheck.evaluation.result import (
    CheckResult,
    MeasurementRecord,
    RequirementResult,
    ValueRecord,
)

PASSPHRASE = b"kestrel-demo-pass-1"
SPEC_YAML = b"""# Kestrel Fluid Power, shaft KFP-2041 seal seat (test spec)
part:
  number: KFP-2041
  revision: C
  surface: seal seat
requirements:
  - Ra 0.8
"""


def write_sine_csv(
    path: Path,
    *,
    amplitude_um: float,
    wavelength_mm: float = 0.1,
    length_mm: float = 6.0,
    dx_um: float = 0.5,
    scratch_um: float = 0.0,
) -> Path:
    """A sine profile as CSV; Ra of a sine = 2A/π (closed form)."""
    n = int(round(length_mm * 1000 / dx_um))
    x_mm = np.arange(n) * dx_um / 1000
    z = amplitude_um * np.sin(2 * np.pi * x_mm / wavelength_mm)
    if scratch_um:
        mid = n // 2
        z[mid - 4 : mid + 4] -= scratch_um
    lines = ["x [mm],z [um]"] + [f"{a:.6f},{b:.6f}" for a, b in zip(x_mm, z, strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def requirement(parameter: str = "Ra", **kw) -> SimpleNamespace:
    """A resolved requirement with the fields the report reads (LoadedSpec.requirements)."""
    base = dict(
        text=f"{parameter} 0.8",
        parameter=parameter,
        sections=5,
        upper=0.8,
        lower=None,
        unit="µm",
        rule="16%",
        filter="gaussian",
        lambda_c_mm=0.8,
        lambda_s_um=2.5,
        decision_rule="simple",
        uncertainty=None,
        form="line",
    )
    base.update(kw)
    return SimpleNamespace(**base)


def spec_for(path: Path, requirements=None) -> SimpleNamespace:
    raw = path.read_bytes()
    return SimpleNamespace(
        path=str(path),
        raw=raw,
        sha256=hashlib.sha256(raw).hexdigest(),
        part={"number": "KFP-2041", "revision": "C", "surface": "seal seat"},
        convention="iso1302",
        decision_rule="simple",
        requirements=tuple(requirements or [requirement()]),
    )


def result_for(
    spec,
    profile_paths,
    *,
    verdict="conforming",
    values=None,
    reason=None,
    next_step=None,
    diagnostics=None,
    extra_requirements=(),
) -> CheckResult:
    """A hand-built CheckResult: one Ra requirement, one value per profile."""
    meas = []
    for i, p in enumerate(profile_paths):
        data = Path(p).read_bytes()
        meas.append(
            MeasurementRecord(
                index=i,
                path=str(p),
                sha256=hashlib.sha256(data).hexdigest(),
                format="csv",
                points=12000,
                spacing_um=0.5,
                length_mm=6.0,
                status="evaluated",
                parameters={
                    "Ra": {"value": values[i] if values else 0.5, "unit": "µm"},
                    "Rsk": {"value": 0.0, "unit": ""},
                },
            )
        )
    vals = values or [0.5] * len(meas)
    counts = ["exceeding" if v > 0.8 else "within" for v in vals]
    req = RequirementResult(
        text="Ra 0.8",
        parameter="Ra",
        upper=0.8,
        lower=None,
        unit="µm",
        rule="16%",
        decision_rule="simple",
        uncertainty=None,
        verdict=verdict,
        reason=reason,
        explanation=f"test explanation for a {verdict} requirement",
        next=next_step,
        values=[
            ValueRecord(
                measurement=i,
                value=v,
                unit="µm",
                zone="outside" if v > 0.8 else "within",
                counts_as=c,
            )
            for i, (v, c) in enumerate(zip(vals, counts, strict=True))
        ],
        conditions={
            "lambda_c_mm": 0.8,
            "lambda_s_um": 2.5,
            "sections": 5,
            "evaluation_length_mm": 4.0,
            "filter": "gaussian",
            "form": "line",
        },
        diagnostics=list(diagnostics or []),
    )
    return CheckResult(
        verdict=verdict,
        reason=reason,
        requirements=[req, *extra_requirements],
        measurements=meas,
        spec={
            "path": spec.path,
            "sha256": spec.sha256,
            "part": dict(spec.part),
            "convention": "iso1302",
        },
        software={"name": "speccheck", "version": "test"},
        created="2026-12-01T10:00:00Z",
    )


def sine_ra_um(amplitude_um: float) -> float:
    """Ra of a sine of amplitude A: 2A/π (closed form; domain notes 4, [calc])."""
    return 2 * amplitude_um / math.pi
