"""Diagnostics for a measured profile: say when a requested value rests on a few points.

:func:`diagnose` finds isolated features (:mod:`speccheck.diagnostics.features`), recomputes the
parameters without them (:mod:`speccheck.diagnostics.influence`) and returns one
:class:`Diagnostic` when features exist **and** at least one requested parameter changes
materially ("sensitive" or "dominated") without them. Otherwise it returns an empty list.

A diagnostic never changes a verdict and its message never states one. A specification may opt
in to treating such a profile as undecided (``isolated_features: undecided``); the evaluator asks
:func:`policy_outcome` for the reason string.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np

from speccheck.diagnostics.features import DEFAULT_K, Feature, find_isolated_features
from speccheck.diagnostics.influence import (
    ANALYSED_BASES,
    ParameterInfluence,
    influence_of_features,
    split_sections,
)

__all__ = [
    "ISOLATED_FEATURES",
    "STABLE_ALTERNATIVES",
    "Diagnostic",
    "Analysis",
    "analyse",
    "diagnose",
    "policy_outcome",
]

#: Reason string handed to the evaluator under ``isolated_features: undecided``.
ISOLATED_FEATURES = "isolated-features"

#: The stable ways to express peak/valley balance and height, as named in messages, with the
#: base names they consist of. A group is left out of a message that flags one of its members.
STABLE_ALTERNATIVES = (
    ("the Rk family (Rk, Rpk, Rvk, Mr1, Mr2; ISO 13565-2)", ("k", "pk", "vk")),
    ("ASME Rpm/Rvm", ("pm", "vm")),
    ("section-averaged Rp/Rv", ("p", "v")),
)
_MAX_LISTED = 3


@dataclass(frozen=True)
class Diagnostic:
    """One finding about a profile; informs, never decides.

    Attributes
    ----------
    parameters:
        Requested parameters that change materially without the features.
    severity:
        ``"warning"``.
    message:
        One line naming the features, the values without them and the stable alternatives.
    features:
        The isolated features found.
    without_features:
        Requested parameter -> value recomputed without the features (unit of the parameter).
    influences:
        Every requested parameter analysed, with and without the features.
    code:
        ``"isolated-features"``.
    """

    parameters: tuple[str, ...]
    severity: Literal["warning"]
    message: str
    features: tuple[Feature, ...]
    without_features: dict[str, float]
    influences: tuple[ParameterInfluence, ...] = field(default=())
    code: str = ISOLATED_FEATURES

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready form (NaN becomes null)."""
        return {
            "code": self.code,
            "parameters": list(self.parameters),
            "severity": self.severity,
            "message": self.message,
            "features": [f.to_dict() for f in self.features],
            "without_features": {k: _num(v) for k, v in self.without_features.items()},
            "sensitivity": {i.name: i.sensitivity for i in self.influences},
            "tail_share": {
                i.name: _num(i.tail_share) for i in self.influences if i.tail_share is not None
            },
        }


@dataclass(frozen=True)
class Analysis:
    """Features and the influence of each analysed parameter (for reports and ``params``)."""

    features: tuple[Feature, ...]
    influences: tuple[ParameterInfluence, ...]

    def to_dict(self) -> dict[str, Any]:
        """``{"features": [...], "influence": {name: {...}}}`` for the parameters output."""
        return {
            "features": [f.to_dict() for f in self.features],
            "influence": {
                i.name: {
                    "value": _num(i.value),
                    "without_features": _num(i.without_value),
                    "unit": i.unit,
                    "change": _num(i.change),
                    "sensitivity": i.sensitivity,
                    "tail_share": _num(i.tail_share),
                }
                for i in self.influences
            },
        }


def _num(v: float | None) -> float | None:
    if v is None or not math.isfinite(v):
        return None
    return float(round(v, 4))


def _fmt(v: float, unit: str) -> str:
    if not math.isfinite(v):
        return "n/a"
    text = f"{v:.3g}" if abs(v) < 100 else f"{v:.0f}"
    return f"{text} {unit}" if unit else text


def _rk_profile(source, x: np.ndarray, dx: float) -> np.ndarray | None:
    """The ISO 13565-1 roughness profile over the evaluation length, as compute uses it.

    None when the Rk family is computed on the evaluated profile itself (robust filters) or
    does not exist (W, P profiles).
    """
    conditions = getattr(source, "conditions", None)
    if conditions is None or getattr(conditions, "profile", "R") != "R":
        return None
    if getattr(conditions, "filter", "gaussian") in ("robust", "robust-order0"):
        return None
    from speccheck.filters import valley_suppressed_mean_line

    p = source.profiles
    primary = np.asarray(p.trace_primary_um, dtype=np.float64)
    line = valley_suppressed_mean_line(
        primary, dx_um=dx, cutoff_um=float(conditions.lambda_c_mm) * 1000.0
    )
    start = int(round((float(x[0]) - float(p.trace_x_mm[0])) * 1000.0 / dx))
    out = (primary - line)[start : start + x.size]
    return out if out.size == x.size else None


def _arrays(source, dx_um, sections):
    """(roughness_um, dx_um, x_mm, section slices, letter, reported values) of the source."""
    profiles = getattr(source, "profiles", None)
    if profiles is not None:
        z = np.asarray(profiles.roughness_um, dtype=np.float64)
        dx = float(profiles.dx_um)
        x = np.asarray(profiles.x_mm, dtype=np.float64)
        bounds = tuple(profiles.section_bounds_mm)
        n_sec = max(1, len(bounds) - 1)
        letter = getattr(getattr(source, "conditions", None), "profile", "R")
        reported = {k: float(v.value) for k, v in source.values.items()}
        return z, dx, x, split_sections(z.size, n_sec), letter, reported
    if dx_um is None:
        raise ValueError("dx_um is needed when diagnose() is given an array of heights")
    z = np.asarray(source, dtype=np.float64).reshape(-1)
    dx = float(dx_um)
    return z, dx, None, split_sections(z.size, int(sections)), "R", {}


def analyse(
    source, *, dx_um: float | None = None, sections: int = 5, k: float = DEFAULT_K
) -> Analysis:
    """Isolated features and every analysed parameter with and without them.

    Parameters
    ----------
    source : ParameterSet or array_like
        A :class:`speccheck.parameters.compute.ParameterSet` (its evaluated profile, x positions
        and sections are used) or heights from the mean line over the evaluation length, µm.
    dx_um : float, optional
        Sampling spacing, µm; required for an array.
    sections : int
        Number of sections of an array (ignored for a ParameterSet).
    k : float
        Feature threshold in robust σ (:data:`speccheck.diagnostics.features.DEFAULT_K`).

    Returns
    -------
    Analysis
    """
    z, dx, x, secs, letter, _ = _arrays(source, dx_um, sections)
    window_um = (secs[0].stop - secs[0].start) * dx  # one section: the local texture
    feats = find_isolated_features(z, dx_um=dx, x_mm=x, k=k, window_um=window_um)
    rk_um = _rk_profile(source, x, dx) if x is not None else None
    infl = influence_of_features(z, feats, sections=secs, letter=letter, rk_um=rk_um)
    return Analysis(tuple(feats), tuple(infl))


def _canonical(names: Sequence[str]) -> list[str]:
    from speccheck.parameters.names import parse_parameter_name

    out = []
    for n in names:
        parsed = parse_parameter_name(n)
        if parsed is not None and parsed.name not in out:
            out.append(parsed.name)
    return out


def _describe(features: Sequence[Feature]) -> str:
    parts = []
    for f in features[:_MAX_LISTED]:
        size = (
            f"{f.extreme_um:.1f} µm deep" if f.kind == "valley" else f"{f.extreme_um:.1f} µm high"
        )
        parts.append(f"{f.kind} at x = {f.x_mm:.3f} mm ({size}, {f.width_um:.1f} µm wide)")
    more = len(features) - _MAX_LISTED
    if more > 0:
        parts.append(f"{more} more")
    n = len(features)
    head = "1 isolated feature" if n == 1 else f"{n} isolated features"
    return f"{head}: " + "; ".join(parts)


def _message(
    flagged: list[ParameterInfluence],
    reported: dict[str, float],
    features: Sequence[Feature],
    moved_alternatives: list[ParameterInfluence],
) -> str:
    names = ", ".join(i.name for i in flagged)
    it = "it" if len(features) == 1 else "them"
    values = "; ".join(
        f"{i.name} {_fmt(reported.get(i.name, i.value), i.unit)} as measured, "
        f"{_fmt(i.without_value, i.unit)} without {it}"
        for i in flagged
    )
    flagged_names = {i.name for i in flagged}
    letter = flagged[0].name[0]
    alt = ", ".join(
        label
        for label, bases in STABLE_ALTERNATIVES
        if not any(letter + b in flagged_names for b in bases)
        and (letter == "R" or "k" not in bases)
    )
    text = (
        f"{names} rest{'s' if len(flagged) == 1 else ''} on a few points: {_describe(features)}. "
        f"{values}"
    )
    if alt:
        text += f". The same function is expressed more stably by {alt}"
    if moved_alternatives:
        moved = ", ".join(
            f"{i.name} {_fmt(i.value, i.unit)} ({_fmt(i.without_value, i.unit)} without)"
            for i in moved_alternatives
        )
        subject = "feature also moves" if len(features) == 1 else "features also move"
        text += f". On this profile the {subject} {moved}"
    where = "feature" if len(features) == 1 else "features"
    what = "value" if len(flagged) == 1 else "values"
    return text + f". Inspect the surface at the {where} before relying on the {what}."


def diagnose(
    source,
    *,
    requested: Sequence[str] | None = None,
    dx_um: float | None = None,
    sections: int = 5,
    k: float = DEFAULT_K,
) -> list[Diagnostic]:
    """Warn when a requested parameter rests on a few isolated points.

    Parameters
    ----------
    source : ParameterSet, InsufficientData or array_like
        The computed parameters of a profile (their evaluated profile is analysed), or heights
        from the mean line over the evaluation length in µm. A falsy result
        (``InsufficientData``) gives no diagnostics.
    requested : sequence of str, optional
        Parameters the specification controls (``"Rsk"``, ``"Rz3"``, ``"Rmax"``); None: every
        analysed parameter. Names outside the analysed set are ignored.
    dx_um : float, optional
        Sampling spacing, µm; required for an array.
    sections : int
        Number of sections of an array.
    k : float
        Feature threshold in robust σ.

    Returns
    -------
    list of Diagnostic
        Empty, or one diagnostic naming every requested parameter that is "sensitive" or
        "dominated" (:mod:`speccheck.diagnostics.influence`).

    Notes
    -----
    Wiring: ``diagnose(parameter_set, requested=[r.parameter for r in spec.requirements])``.
    """
    if source is None or (not isinstance(source, np.ndarray) and hasattr(source, "reason")):
        return []
    z, dx, x, secs, letter, reported = _arrays(source, dx_um, sections)
    window_um = (secs[0].stop - secs[0].start) * dx  # one section: the local texture
    feats = find_isolated_features(z, dx_um=dx, x_mm=x, k=k, window_um=window_um)
    if not feats:
        return []
    rk_um = _rk_profile(source, x, dx) if x is not None else None
    infl = influence_of_features(
        z, feats, sections=secs, letter=letter, bases=ANALYSED_BASES, rk_um=rk_um
    )
    wanted = _canonical(requested) if requested is not None else [i.name for i in infl]
    considered = [i for i in infl if i.name in wanted]
    flagged = [i for i in considered if i.material]
    if not flagged:
        return []
    alt_names = {letter + b for b in ("p", "v", "pm", "vm", "k", "pk", "vk")}
    flagged_names = {i.name for i in flagged}
    moved = [i for i in infl if i.name in alt_names and i.material and i.name not in flagged_names]
    message = _message(flagged, reported, feats, moved)
    return [
        Diagnostic(
            parameters=tuple(i.name for i in flagged),
            severity="warning",
            message=message,
            features=tuple(feats),
            without_features={i.name: i.without_value for i in flagged},
            influences=tuple(considered),
        )
    ]


def policy_outcome(
    diagnostics: Sequence[Diagnostic], policy: Literal["report", "undecided"]
) -> str | None:
    """The reason for an undecided outcome, or None.

    Parameters
    ----------
    diagnostics : sequence of Diagnostic
        From :func:`diagnose`.
    policy : {"report", "undecided"}
        The specification's ``isolated_features`` setting. ``"report"`` (default): diagnostics
        are shown and the verdict stands. ``"undecided"``: a profile with an isolated-features
        diagnostic is undecided.

    Returns
    -------
    str or None
        ``"isolated-features"`` under ``"undecided"`` when such a diagnostic exists, else None.
    """
    if policy not in ("report", "undecided"):
        raise ValueError(f"policy must be 'report' or 'undecided', got {policy!r}")
    if policy == "undecided" and any(d.code == ISOLATED_FEATURES for d in diagnostics):
        return ISOLATED_FEATURES
    return None
