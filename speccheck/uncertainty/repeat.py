"""Calibration studies from traces: residual noise on an optical flat, repeatability (type A).

Pure functions on heights; the caller reads the files and writes the instrument file.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

__all__ = ["NoiseStudy", "noise_study", "RepeatStudy", "repeatability_study"]


@dataclass(frozen=True)
class NoiseStudy:
    """Rq0 of traces on an optical flat and the white-noise σ per point it implies."""

    rq0_um: float  # √(mean Rqᵢ²) over the traces
    sigma_um: float  # Rq0 / √g
    bandwidth: float  # g, dimensionless
    rq_um: tuple[float, ...]  # each trace's Rq


def noise_study(traces: Sequence[np.ndarray], *, dx_um: float, conditions: Any) -> NoiseStudy:
    """Residual noise from traces of an optical flat (ISO 12179 practice, from memory).

    Rq of the roughness profile of each trace (ISO 4287:1997 4.2.2) under ``conditions``;
    Rq0 = √(mean Rqᵢ²); σ = Rq0/√g, g from :func:`speccheck.uncertainty.noise.noise_bandwidth`.
    ValueError when a trace is too short or flat to give an Rq.
    """
    from speccheck.parameters.compute import InsufficientData, compute_parameters
    from speccheck.uncertainty.noise import noise_bandwidth

    rq = []
    for i, z in enumerate(traces):
        ps = compute_parameters(z, dx_um=dx_um, conditions=conditions)
        if isinstance(ps, InsufficientData):
            raise ValueError(f"trace {i + 1}: {ps.reason}")
        rq.append(float(ps.values["Rq"].value))
    rq0 = math.sqrt(float(np.mean(np.square(rq))))
    g = noise_bandwidth(
        dx_um=dx_um, lambda_c_um=conditions.lambda_c_mm * 1000.0, lambda_s_um=conditions.lambda_s_um
    )
    return NoiseStudy(rq0, rq0 / math.sqrt(g), g, tuple(rq))


@dataclass(frozen=True)
class RepeatStudy:
    """Per parameter: mean, standard deviation of single values and degrees of freedom."""

    mean: dict[str, float]
    sd: dict[str, float]
    dof: int
    units: dict[str, str]


def repeatability_study(
    traces: Sequence[np.ndarray], *, dx_um: float, conditions: Any, names: Sequence[str]
) -> RepeatStudy:
    """Type A evaluation from n repeated traces at one position (JCGM 100:2008 4.2.2, 4.2.3).

    s = √(Σ(qₖ − q̄)²/(n − 1)) of the single values, ν = n − 1 degrees of freedom. ValueError
    with fewer than 2 traces or a value that cannot be computed.
    """
    from speccheck.parameters.compute import InsufficientData, compute_parameters

    if len(traces) < 2:
        raise ValueError("a repeatability study needs at least 2 traces")
    table: dict[str, list[float]] = {n: [] for n in names}
    units: dict[str, str] = {}
    for i, z in enumerate(traces):
        ps = compute_parameters(z, dx_um=dx_um, conditions=conditions, extra=tuple(names))
        if isinstance(ps, InsufficientData):
            raise ValueError(f"trace {i + 1}: {ps.reason}")
        for n in names:
            pv = ps.values.get(n)
            if pv is None or not math.isfinite(pv.value):
                raise ValueError(f"trace {i + 1}: {n} cannot be computed")
            table[n].append(float(pv.value))
            units[n] = pv.unit
    return RepeatStudy(
        {n: float(np.mean(v)) for n, v in table.items()},
        {n: float(np.std(v, ddof=1)) for n, v in table.items()},
        len(traces) - 1,
        units,
    )
