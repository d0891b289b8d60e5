"""The measured profile: what every reader returns and every computation starts from.

Heights are float64 micrometres, sampled at a uniform spacing ``dx_um``. Points the instrument
could not measure are flagged in ``valid`` (their height is NaN). Arrays are read-only.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

__all__ = [
    "Profile",
    "SourceInfo",
    "InstrumentMeta",
    "DropoutReport",
    "MAX_DROPOUT_RUN_POINTS",
    "MAX_DROPOUT_RUN_UM",
    "fill_dropouts",
]

# Dropout policy (documented in README, "Dropouts"): a run of invalid points is bridged by a
# straight line when it is at most MAX_DROPOUT_RUN_POINTS long *and* at most MAX_DROPOUT_RUN_UM
# wide; a longer run refuses evaluation. Common practice, no source: a few points of a stylus or
# optical dropout carry no texture information worth keeping, a gap wider than a few µm does.
MAX_DROPOUT_RUN_POINTS = 5
MAX_DROPOUT_RUN_UM = 10.0


@dataclass(frozen=True)
class InstrumentMeta:
    """The instrument identity a profile file states, field by field, as written in it.

    ``calibration_date`` is an ISO 8601 date (YYYY-MM-DD) when the file gives one. Every field
    is None when the file does not say.
    """

    id: str | None = None
    manufacturer: str | None = None
    model: str | None = None
    serial: str | None = None
    version: str | None = None
    probing_system: str | None = None
    calibration_date: str | None = None

    def stated(self) -> dict[str, str]:
        """The fields the file states, in field order."""
        return {k: v for k, v in self.__dict__.items() if v}


@dataclass(frozen=True)
class SourceInfo:
    """Where a profile came from."""

    path: str | None = None
    sha256: str | None = None
    format: str | None = None  # "csv", "x3p", "sdf", "demo", ...
    instrument: str | None = None  # the identity as one line of text, for people
    date: str | None = None
    comment: str | None = None
    instrument_meta: InstrumentMeta = field(default_factory=InstrumentMeta)


@dataclass(frozen=True)
class DropoutReport:
    """Invalid points found by the reader and what was done with them."""

    invalid_points: int = 0
    interpolated_points: int = 0
    runs: int = 0
    longest_run_points: int = 0
    # (start x in mm, end x in mm) of every run too long to bridge
    refused_gaps_mm: tuple[tuple[float, float], ...] = ()

    @property
    def usable(self) -> bool:
        return not self.refused_gaps_mm


def _readonly(a: np.ndarray) -> np.ndarray:
    a.setflags(write=False)
    return a


@dataclass(frozen=True)
class Profile:
    """A uniformly sampled height profile.

    Attributes
    ----------
    z_um:
        Heights in micrometres, float64, read-only; NaN where ``valid`` is False.
    dx_um:
        Sampling spacing in micrometres (> 0).
    valid:
        True where the instrument measured a height.
    source:
        Provenance (file, SHA-256 of the file's bytes, format, instrument, date, comment).
    dropouts:
        What :func:`fill_dropouts` did; all zero for a profile straight from a reader.
    """

    z_um: np.ndarray
    dx_um: float
    valid: np.ndarray = field(default=None)  # type: ignore[assignment,arg-type]
    source: SourceInfo = field(default_factory=SourceInfo)
    dropouts: DropoutReport = field(default_factory=DropoutReport)

    def __post_init__(self) -> None:
        z = np.array(self.z_um, dtype=np.float64, copy=True).reshape(-1)
        if self.valid is None:
            valid = np.isfinite(z)
        else:
            valid = np.array(self.valid, dtype=bool, copy=True).reshape(-1) & np.isfinite(z)
            if valid.shape != z.shape:
                raise ValueError("valid mask and heights differ in length")
        z[~valid] = np.nan
        if not (np.isfinite(self.dx_um) and self.dx_um > 0):
            raise ValueError(f"dx_um must be a positive finite number, got {self.dx_um!r}")
        object.__setattr__(self, "z_um", _readonly(z))
        object.__setattr__(self, "valid", _readonly(valid))
        object.__setattr__(self, "dx_um", float(self.dx_um))

    @property
    def n_points(self) -> int:
        return int(self.z_um.size)

    @property
    def length_mm(self) -> float:
        """Traced length (n − 1)·dx in millimetres."""
        return (self.n_points - 1) * self.dx_um / 1e3

    @property
    def n_invalid(self) -> int:
        return int(self.n_points - np.count_nonzero(self.valid))

    def x_mm(self) -> np.ndarray:
        """Positions of the points in millimetres, starting at 0."""
        return np.arange(self.n_points) * (self.dx_um / 1e3)

    def replace(self, **changes) -> Profile:
        return replace(self, **changes)


def _runs(mask: np.ndarray) -> list[tuple[int, int]]:
    """Half-open index ranges [start, stop) of the True runs in ``mask``."""
    if not mask.any():
        return []
    d = np.diff(np.concatenate(([0], mask.view(np.int8), [0])))
    starts = np.flatnonzero(d == 1)
    stops = np.flatnonzero(d == -1)
    return list(zip(starts.tolist(), stops.tolist(), strict=True))


def fill_dropouts(
    profile: Profile,
    *,
    max_run_points: int = MAX_DROPOUT_RUN_POINTS,
    max_run_um: float = MAX_DROPOUT_RUN_UM,
) -> Profile:
    """Bridge short runs of invalid points linearly; record long runs as refused gaps.

    Invalid points at either end of the trace are cropped (there is nothing to interpolate
    from), and counted. The returned profile has ``dropouts`` filled in; when
    ``dropouts.usable`` is False the profile must not be evaluated (its heights still hold NaN
    in the refused gaps).
    """
    z = np.array(profile.z_um, copy=True)
    invalid = ~profile.valid
    n_invalid = int(invalid.sum())
    if n_invalid == 0:
        return profile.replace(dropouts=DropoutReport())
    good = np.flatnonzero(~invalid)
    if good.size < 2:
        return profile.replace(
            dropouts=DropoutReport(
                invalid_points=n_invalid,
                runs=1,
                longest_run_points=n_invalid,
                refused_gaps_mm=((0.0, profile.length_mm),),
            )
        )
    first, last = int(good[0]), int(good[-1])
    z = z[first : last + 1]
    inner_invalid = invalid[first : last + 1]
    runs = _runs(inner_invalid)
    refused: list[tuple[float, float]] = []
    filled = 0
    longest = 0
    dx_mm = profile.dx_um / 1e3
    for a, b in runs:
        n = b - a
        longest = max(longest, n)
        if n <= max_run_points and (n + 1) * profile.dx_um <= max_run_um + 1e-9:
            left, right = z[a - 1], z[b]
            t = np.arange(1, n + 1) / (n + 1)
            z[a:b] = left + (right - left) * t
            filled += n
        else:
            refused.append((round((first + a) * dx_mm, 6), round((first + b - 1) * dx_mm, 6)))
    valid = np.isfinite(z)
    report = DropoutReport(
        invalid_points=n_invalid,
        interpolated_points=filled,
        runs=len(runs) + (first > 0) + (last < profile.n_points - 1),
        longest_run_points=max(longest, first, profile.n_points - 1 - last),
        refused_gaps_mm=tuple(refused),
    )
    return Profile(z_um=z, dx_um=profile.dx_um, valid=valid, source=profile.source, dropouts=report)
