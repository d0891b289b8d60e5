"""How much a parameter rests on a few points: tail shares, values without features, classes.

Three measures for each parameter of a roughness profile:

* **tail share** (Rsk, Rku): the share of Σ|Z|³ (Rsk) or ΣZ⁴ (Rku) contributed by the 0.1 % of
  points with the largest |Z| (:func:`tail_share`). The absolute third moment is used for Rsk so
  that the share lies in [0, 1] and is defined when ΣZ³ is near zero. Reference values for a
  Gaussian profile (closed form ∫ |z|^p φ(z) dz beyond the 99.9 % quantile of |z|, 3.29σ):
  2.9 % for p = 3, 5.5 % for p = 4;
* **value without features**: the parameter recomputed on the profile whose isolated features
  were replaced by straight lines (:func:`speccheck.diagnostics.features.remove_features`);
* **class** (:func:`sensitivity_class`) from the change between the two values.

Classes and thresholds (speccheck's own choices; common practice, no source)
-----------------------------------------------------------------------------
=================================  ======================  =======================================
parameters                         "sensitive" from        "dominated" from
=================================  ======================  =======================================
Rsk (change in absolute terms)     |ΔRsk| ≥ 0.3            |ΔRsk| ≥ 1.0, or a sign change with
                                                           both |Rsk| ≥ 0.3
Rku (change relative to without)   15 %                    50 %
heights: Ra Rq Rp Rv Rz Rt Rmax    10 %                    30 %
Rz1max Rpm Rvm Rk Rpk Rvk
=================================  ======================  =======================================

Relative changes are taken against the value without features, but at least 0.5 × Rq (without
features) for heights (:data:`RELATIVE_FLOOR_RQ`): on a turned profile Rvk is near zero and a
change of a few hundredths of a micrometre is no change. Rp, Rv, Rz, Rt exceed Rq and Ra is
about 0.8 Rq on most profiles, so the floor only acts on near-zero values.

Rsk is compared in absolute terms because it passes through zero. 0.3 lies above the scatter of
Rsk between repeated traces of one homogeneous surface (about 0.1-0.2, from memory); 10 % for
heights is below the step between adjacent preferred limit values (R10 series, 25 %), so a
"sensitive" height could move a value across a limit. Below the "sensitive" threshold a
parameter is "stable". "Materially" in :func:`speccheck.diagnostics.diagnose` means "sensitive"
or "dominated".

Recomputation follows :mod:`speccheck.parameters.compute`: section parameters (Ra, Rq, Rsk, Rku,
Rp, Rv, Rz) are the mean over the sections; Rt over the evaluation length; Rz1max and Rmax the
largest section Rz; Rpm, Rvm the section means of Rp, Rv; Rk, Rpk, Rvk (ISO 13565-2) over the
evaluation length of the profile passed as ``rk_um``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np

from speccheck.diagnostics.features import Feature, remove_features
from speccheck.parameters import amplitude, asme, rk

__all__ = [
    "SensitivityClass",
    "ANALYSED_BASES",
    "TOP_FRACTION",
    "RSK_SENSITIVE",
    "RSK_DOMINATED",
    "RKU_SENSITIVE",
    "RKU_DOMINATED",
    "HEIGHT_SENSITIVE",
    "HEIGHT_DOMINATED",
    "RELATIVE_FLOOR_RQ",
    "ParameterInfluence",
    "tail_share",
    "split_sections",
    "recompute",
    "sensitivity_class",
    "influence_of_features",
]

SensitivityClass = Literal["stable", "sensitive", "dominated"]

#: Share of the points counted as "the most extreme" in :func:`tail_share` (0.1 %).
TOP_FRACTION = 0.001
#: Rsk: absolute change for "sensitive" and "dominated".
RSK_SENSITIVE = 0.3
RSK_DOMINATED = 1.0
#: Rku: change relative to the value without features.
RKU_SENSITIVE = 0.15
RKU_DOMINATED = 0.50
#: Height parameters (µm): change relative to the value without features.
HEIGHT_SENSITIVE = 0.10
HEIGHT_DOMINATED = 0.30

#: Base names (without profile letter) this module recomputes, in report order.
ANALYSED_BASES = (
    "sk",
    "ku",
    "t",
    "max",
    "z1max",
    "p",
    "v",
    "z",
    "a",
    "q",
    "pm",
    "vm",
    "k",
    "pk",
    "vk",
)
#: Relative changes of heights are taken against at least this share of Rq (without features),
#: so that Rvk going from 0.01 µm to 0.03 µm on a profile without valleys is not "dominated".
RELATIVE_FLOOR_RQ = 0.5

_POWER = {"sk": 3, "ku": 4}


@dataclass(frozen=True)
class ParameterInfluence:
    """A parameter with and without the isolated features.

    Attributes
    ----------
    name:
        ``"Rsk"``, ``"Rt"``, ...
    value, without_value:
        Recomputed with and without the features, in ``unit``.
    unit:
        ``"µm"`` or ``""``.
    change:
        ``|ΔRsk|`` for Rsk, otherwise ``|value − without_value| / max(|without_value|, floor)``
        (no unit).
    sensitivity:
        ``"stable"``, ``"sensitive"`` or ``"dominated"``.
    tail_share:
        Share of the moment from the top 0.1 % of |Z| (Rsk, Rku), else None.
    """

    name: str
    value: float
    without_value: float
    unit: str
    change: float
    sensitivity: SensitivityClass
    tail_share: float | None

    @property
    def material(self) -> bool:
        """True for "sensitive" and "dominated"."""
        return self.sensitivity != "stable"


def tail_share(z_um, *, power: int, top_fraction: float = TOP_FRACTION) -> float:
    """Share of Σ|Z|^power contributed by the ``top_fraction`` of points with the largest |Z|.

    Parameters
    ----------
    z_um : array_like
        Heights from the mean line, µm (1-D).
    power : int
        3 for Rsk (ISO 4287:1997 4.2.3), 4 for Rku (4.2.4).
    top_fraction : float
        Share of points counted as extreme; at least one point is counted.

    Returns
    -------
    float
        In [0, 1]; NaN for a flat profile.
    """
    z = np.abs(np.asarray(z_um, dtype=np.float64).reshape(-1))
    if z.size == 0:
        raise ValueError("z_um is empty")
    if not 0 < top_fraction < 1:
        raise ValueError(f"top_fraction must lie in (0, 1), got {top_fraction!r}")
    w = z ** int(power)
    total = float(w.sum())
    if total <= 0:
        return math.nan
    n_top = max(1, int(math.ceil(top_fraction * z.size)))
    top = np.partition(w, z.size - n_top)[z.size - n_top :]
    return float(top.sum() / total)


def split_sections(n_points: int, sections: int) -> list[slice]:
    """Equal sections of ``n_points`` (boundaries rounded to whole points)."""
    if sections < 1 or n_points < sections:
        raise ValueError(f"cannot split {n_points} points into {sections} sections")
    edges = np.linspace(0, n_points, sections + 1).round().astype(int)
    return [slice(int(a), int(b)) for a, b in zip(edges[:-1], edges[1:], strict=True)]


def recompute(z_um, *, sections: list[slice], bases=ANALYSED_BASES, rk_um=None) -> dict[str, float]:
    """Parameters of ``bases`` on heights ``z_um``, as :mod:`speccheck.parameters.compute` does.

    Parameters
    ----------
    z_um : array_like
        Heights from the mean line over the evaluation length, µm.
    sections : list of slice
        The sections of the evaluation length.
    bases : iterable of str
        Base names out of :data:`ANALYSED_BASES`.
    rk_um : array_like, optional
        The profile for the Rk family (ISO 13565-1 roughness profile), µm; default ``z_um``.

    Returns
    -------
    dict
        base name -> value (µm for heights, no unit for sk, ku).
    """
    z = np.asarray(z_um, dtype=np.float64).reshape(-1)
    rows = [z[s] for s in sections]
    out: dict[str, float] = {}
    rk_result = None

    def mean_of(fn) -> float:
        per = np.array([fn(r) for r in rows], dtype=np.float64)
        ok = np.isfinite(per)
        return float(np.mean(per[ok])) if ok.any() else math.nan

    for base in bases:
        if base == "a":
            out[base] = mean_of(amplitude.arithmetic_mean_height)
        elif base == "q":
            out[base] = mean_of(amplitude.root_mean_square_height)
        elif base == "sk":
            out[base] = mean_of(amplitude.skewness)
        elif base == "ku":
            out[base] = mean_of(amplitude.kurtosis)
        elif base in ("p", "pm"):
            out[base] = mean_of(amplitude.max_peak_height)
        elif base in ("v", "vm"):
            out[base] = mean_of(amplitude.max_valley_depth)
        elif base == "z":
            out[base] = mean_of(amplitude.max_height)
        elif base == "t":
            out[base] = amplitude.total_height(z)
        elif base in ("z1max", "max"):
            out[base] = float(max(asme.largest_peak_to_valley(r) for r in rows))
        elif base in ("k", "pk", "vk"):
            if rk_result is None:
                rk_result = rk.rk_parameters(z if rk_um is None else rk_um)
            key = {"k": "Rk", "pk": "Rpk", "vk": "Rvk"}[base]
            out[base] = float(getattr(rk_result, key)) if rk_result else math.nan
        else:
            raise ValueError(f"no recomputation for parameter base {base!r}")
    return out


def sensitivity_class(
    base: str, value: float, without_value: float, *, floor: float = 0.0
) -> tuple[float, SensitivityClass]:
    """Change and class of one parameter (thresholds in the module docstring).

    Parameters
    ----------
    base : str
        Base name without the profile letter (``"sk"``, ``"ku"``, ``"t"``, ...).
    value, without_value : float
        With and without the features (µm for heights).
    floor : float
        For relative changes, the denominator is at least this (same unit as the value);
        :func:`influence_of_features` passes 0.5 × Rq without features for heights.

    Returns
    -------
    (float, str)
        The change (absolute for Rsk, relative otherwise) and ``"stable"``, ``"sensitive"`` or
        ``"dominated"``. A NaN value on either side gives ``(nan, "stable")``: nothing to say.
    """
    if not (math.isfinite(value) and math.isfinite(without_value)):
        return math.nan, "stable"
    if base == "sk":
        change = abs(value - without_value)
        flipped = value * without_value < 0 and min(abs(value), abs(without_value)) >= RSK_SENSITIVE
        if change >= RSK_DOMINATED or flipped:
            return change, "dominated"
        return change, ("sensitive" if change >= RSK_SENSITIVE else "stable")
    if base == "ku":
        lo, hi = RKU_SENSITIVE, RKU_DOMINATED
    else:
        lo, hi = HEIGHT_SENSITIVE, HEIGHT_DOMINATED
    scale = max(abs(without_value), float(floor))
    if scale == 0:
        change = 0.0 if value == 0 else math.inf
    else:
        change = abs(value - without_value) / scale
    if change >= hi:
        return change, "dominated"
    return change, ("sensitive" if change >= lo else "stable")


def influence_of_features(
    roughness_um,
    features: list[Feature],
    *,
    sections: list[slice],
    letter: str = "R",
    bases=ANALYSED_BASES,
    rk_um=None,
) -> list[ParameterInfluence]:
    """Each parameter of ``bases`` with and without ``features``, classified.

    Parameters
    ----------
    roughness_um : array_like
        Heights from the mean line over the evaluation length, µm.
    features : list of Feature
        From :func:`speccheck.diagnostics.features.find_isolated_features` on the same heights.
    sections : list of slice
        The sections of the evaluation length.
    letter : str
        Profile letter for the names (``"R"``, ``"W"``, ``"P"``); Rmax and the Rk family exist
        for R only.
    rk_um : array_like, optional
        ISO 13565-1 roughness profile over the same points for the Rk family; default the
        heights themselves. Features are removed from it over the same intervals.

    Returns
    -------
    list of ParameterInfluence
        In the order of ``bases``.
    """
    from speccheck.parameters.names import PARAMETERS, parse_parameter_name

    z = np.asarray(roughness_um, dtype=np.float64).reshape(-1)
    usable = []
    for b in bases:
        parsed = parse_parameter_name(letter + b)
        if parsed is not None:
            usable.append((b, parsed.name))
    names = [b for b, _ in usable]
    rk_z = None if rk_um is None else np.asarray(rk_um, dtype=np.float64).reshape(-1)
    if rk_z is not None and rk_z.shape != z.shape:
        raise ValueError(f"rk_um must have the shape of roughness_um {z.shape}, got {rk_z.shape}")
    with_f = recompute(z, sections=sections, bases=names, rk_um=rk_z)
    if features:
        clean = remove_features(z, features)
        rk_clean = None if rk_z is None else remove_features(rk_z, features)
        without = recompute(clean, sections=sections, bases=names, rk_um=rk_clean)
        rq_clean = float(amplitude.root_mean_square_height(clean))
    else:
        without = with_f
        rq_clean = float(amplitude.root_mean_square_height(z))
    out: list[ParameterInfluence] = []
    for base, name in usable:
        floor = RELATIVE_FLOOR_RQ * rq_clean if PARAMETERS[base].unit == "µm" else 0.0
        change, cls = sensitivity_class(base, with_f[base], without[base], floor=floor)
        share = tail_share(z, power=_POWER[base]) if base in _POWER else None
        out.append(
            ParameterInfluence(
                name=name,
                value=with_f[base],
                without_value=without[base],
                unit=PARAMETERS[base].unit,
                change=change,
                sensitivity=cls,
                tail_share=share,
            )
        )
    return out
