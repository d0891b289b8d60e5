"""Demo profiles: documented process models and the invented Kestrel Fluid Power data set.

The process models are pure functions (heights in µm out, a :class:`numpy.random.Generator` in)
that other modules may use to build test and demonstration profiles. The data set is set in an
invented scenario: Kestrel Fluid Power, maker of hydraulic units, receives ground shafts from
Ardent Precision Grinding and plateau-honed cylinder blocks from Holloway Bore & Hone, and
turns flanges in-house. All companies, parts and numbers are fictional; the data is synthetic.

Sizing (domain notes §1, ISO 3274 table and common practice): a trace covers 7 cut-offs (5
sections plus run-in and run-out) at the sampling spacing ISO 3274 allows for that cut-off:
λc 0.8 mm → 5.6 mm at 0.5 µm; λc 2.5 mm → 17.5 mm at 1.5 µm.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import Any

import numpy as np

from speccheck.errors import SpeccheckError
from speccheck.profile import Profile, SourceInfo

__all__ = [
    "DEMO_SEED",
    "DEMO_CATALOGUE",
    "TRACE_FOR_CUTOFF",
    "turned_profile",
    "ground_profile",
    "plateau_honed_profile",
    "add_scratch",
    "add_spike",
    "build_demo_profiles",
    "write_demo_data",
    "prepare_demo_folder",
]

DEMO_SEED = 20261202

# λc (mm) -> (trace length in mm, sampling spacing in µm): 7 cut-offs; ISO 3274 spacing.
TRACE_FOR_CUTOFF: dict[float, tuple[float, float]] = {0.8: (5.6, 0.5), 2.5: (17.5, 1.5)}


def _n_points(length_mm: float, dx_um: float) -> int:
    if not (length_mm > 0 and dx_um > 0):
        raise ValueError(f"length_mm and dx_um must be positive, got {length_mm!r}, {dx_um!r}")
    return int(round(length_mm * 1e3 / dx_um)) + 1


def turned_profile(
    *,
    length_mm: float,
    dx_um: float,
    feed_mm: float,
    nose_radius_mm: float,
    rng: np.random.Generator,
    noise_um: float = 0.03,
    depth_jitter_um: float = 0.0,
) -> np.ndarray:
    """Feed marks of a round-nosed turning tool.

    Each revolution leaves a circular arc of radius r (the tool nose) centred every feed f; the
    surface is the lowest of the arcs at each x, so the profile is a row of sharp cusps between
    broad valleys (positive skew). Before noise the peak-to-valley height is
    ``r − sqrt(r² − f²/4)`` ≈ ``f²/(8 r)``.

    Parameters
    ----------
    length_mm, dx_um:
        Trace length and sampling spacing.
    feed_mm, nose_radius_mm:
        Feed per revolution f and tool nose radius r (f < 2 r).
    rng:
        Random generator (start phase, jitter, noise).
    noise_um:
        Standard deviation of white measurement/material noise added to every point.
    depth_jitter_um:
        Standard deviation of the depth of each revolution's arc (spindle run-out, tool
        deflection); 0 for the ideal kinematic profile.

    Returns
    -------
    ndarray
        Heights in µm (float64), valley bottoms near 0.

    References
    ----------
    Classical kinematic roughness of turning, Rt ≈ f²/(8 r) (common practice, no source).
    """
    if not 0 < feed_mm < 2 * nose_radius_mm:
        raise ValueError(f"feed_mm must be in (0, 2 nose_radius_mm), got {feed_mm!r}")
    n = _n_points(length_mm, dx_um)
    x_mm = np.arange(n) * (dx_um / 1e3)
    phase_mm = rng.uniform(0.0, feed_mm)
    k = np.floor((x_mm - phase_mm) / feed_mm + 0.5).astype(np.int64)  # nearest arc centre
    n_arcs = int(k.max() - k.min()) + 3
    depth_um = rng.normal(0.0, depth_jitter_um, n_arcs) if depth_jitter_um > 0 else np.zeros(n_arcs)
    r = nose_radius_mm
    z_um = np.full(n, np.inf)
    for shift in (-1, 0, 1):
        kk = k + shift
        u_mm = x_mm - (phase_mm + kk * feed_mm)
        arc_um = (r - np.sqrt(np.maximum(r * r - u_mm * u_mm, 0.0))) * 1e3
        z_um = np.minimum(z_um, arc_um + depth_um[kk - k.min() + 1])
    if noise_um > 0:
        z_um = z_um + rng.normal(0.0, noise_um, n)
    return z_um


def _gaussian_field(n: int, dx_um: float, correlation_um: float, acf: str, rng) -> np.ndarray:
    """Zero-mean, unit-variance Gaussian random profile with the given autocorrelation.

    Spectral synthesis: white noise shaped in the Fourier domain by the square root of the power
    spectrum of the autocorrelation (Wiener–Khinchin); generated on twice the length and cut,
    so the periodic wrap does not correlate the two ends.
    """
    m = 2 * n
    k = np.fft.rfftfreq(m, d=dx_um)  # cycles per µm
    if acf == "gaussian":  # R(τ) = exp(−(τ/β)²)  →  S(k) ∝ exp(−(π k β)²)
        psd = np.exp(-((np.pi * k * correlation_um) ** 2))
    elif acf == "exponential":  # R(τ) = exp(−|τ|/β)  →  S(k) ∝ 1 / (1 + (2π k β)²)
        psd = 1.0 / (1.0 + (2 * np.pi * k * correlation_um) ** 2)
    else:
        raise ValueError(f"acf must be 'gaussian' or 'exponential', got {acf!r}")
    white = np.fft.rfft(rng.standard_normal(m))
    z = np.fft.irfft(white * np.sqrt(psd), n=m)[:n]
    z -= z.mean()
    return z / z.std()


def ground_profile(
    *,
    length_mm: float,
    dx_um: float,
    ra_um: float,
    correlation_um: float,
    rng: np.random.Generator,
    acf: str = "gaussian",
) -> np.ndarray:
    """Random texture of a ground surface: a Gaussian process with a given autocorrelation.

    Parameters
    ----------
    length_mm, dx_um:
        Trace length and sampling spacing.
    ra_um:
        Arithmetic mean deviation of the generated trace about its mean (scaled exactly; a λc
        filter then removes a little long-wave content, so the evaluated Ra is slightly lower).
    correlation_um:
        Correlation length β: the autocorrelation is exp(−(τ/β)²) (``acf="gaussian"``) or
        exp(−|τ|/β) (``acf="exponential"``).
    rng:
        Random generator.

    Returns
    -------
    ndarray
        Heights in µm (float64), mean 0; skewness ≈ 0, kurtosis ≈ 3.

    Notes
    -----
    Ground surfaces are commonly modelled as Gaussian random profiles (common practice, no
    source).
    """
    n = _n_points(length_mm, dx_um)
    z = _gaussian_field(n, dx_um, correlation_um, acf, rng)
    return z * (ra_um / np.mean(np.abs(z)))


def plateau_honed_profile(
    *,
    length_mm: float,
    dx_um: float,
    plateau_rq_um: float,
    valley_depth_um: float,
    valley_density_per_mm: float,
    rng: np.random.Generator,
    valley_width_um: float = 30.0,
    correlation_um: float = 6.0,
) -> np.ndarray:
    """Stratified texture of a plateau-honed bore: smooth plateau cut by deep honing grooves.

    The plateau is a Gaussian random texture of RMS height ``plateau_rq_um`` whose peaks above
    +1 Rq are flattened to a fifth of their height (the plateau pass); grooves are placed at
    random (Poisson, ``valley_density_per_mm``), each a rounded (parabolic) valley of depth
    uniform in 0.5–1.5 × ``valley_depth_um`` and width uniform in 0.6–1.4 ×
    ``valley_width_um``. The result skews negative (Rpk small, Rvk large).

    Returns
    -------
    ndarray
        Heights in µm (float64), plateau mean near 0.

    Notes
    -----
    Common practice, no source: plateau-honed cylinder bores are described as a smooth bearing
    plateau with deep oil-retaining valleys (the use case of ISO 13565-2).
    """
    n = _n_points(length_mm, dx_um)
    z = _gaussian_field(n, dx_um, correlation_um, "gaussian", rng) * plateau_rq_um
    top = plateau_rq_um
    z = np.where(z > top, top + (z - top) * 0.2, z)
    n_grooves = rng.poisson(valley_density_per_mm * length_mm)
    centres_mm = rng.uniform(0.0, length_mm, n_grooves)
    depths_um = valley_depth_um * rng.uniform(0.5, 1.5, n_grooves)
    widths_um = valley_width_um * rng.uniform(0.6, 1.4, n_grooves)
    for c, d, w in zip(centres_mm, depths_um, widths_um, strict=True):
        z = np.minimum(z, _groove(n, dx_um, c, d, w, sign=-1.0))
    return z


def _groove(n: int, dx_um: float, x_mm: float, depth_um: float, width_um: float, *, sign: float):
    """A parabolic bump of the given height at x (``+inf``/``-inf``-free: 0 outside)."""
    u_um = np.arange(n) * dx_um - x_mm * 1e3
    inside = np.abs(u_um) < width_um / 2
    shape = np.where(inside, 1.0 - (2.0 * u_um / width_um) ** 2, 0.0)
    if sign < 0:  # a valley: +inf outside so that np.minimum leaves the surface alone
        return np.where(inside, -depth_um * shape, np.inf)
    return depth_um * shape


def add_scratch(
    z_um: np.ndarray, *, dx_um: float, x_mm: float, depth_um: float, width_um: float
) -> np.ndarray:
    """A copy of ``z_um`` with a scratch: heights lowered by a parabolic groove.

    At ``x_mm`` the height drops by ``depth_um``; the drop falls to zero at ±``width_um``/2.
    """
    z = np.array(z_um, dtype=np.float64, copy=True)
    return z - _groove(z.size, dx_um, x_mm, depth_um, width_um, sign=+1.0)


def add_spike(
    z_um: np.ndarray, *, dx_um: float, x_mm: float, height_um: float, width_um: float
) -> np.ndarray:
    """A copy of ``z_um`` with a spike (dust, burr): heights raised by a narrow parabola."""
    z = np.array(z_um, dtype=np.float64, copy=True)
    return z + _groove(z.size, dx_um, x_mm, height_um, width_um, sign=+1.0)


_ARDENT = "Ardent Precision Grinding"
_HOLLOWAY = "Holloway Bore & Hone"
_KESTREL = "Kestrel Fluid Power (in-house turning)"

# One entry per demo profile: who made it, what it is, how it was made, and the cut-off its
# specification is meant to use. "model" names the function above and "settings" its arguments.
DEMO_CATALOGUE: dict[str, dict[str, Any]] = {}
for _i, (_ra, _beta) in enumerate([(0.22, 8.0), (0.25, 10.0), (0.28, 9.0)], start=1):
    DEMO_CATALOGUE[f"kfp-2041_ardent_{_i:02d}"] = {
        "part": "KFP-2041",
        "part_name": "shaft",
        "surface": "seal seat (ground)",
        "supplier": _ARDENT,
        "process": "plunge cylindrical grinding",
        "lambda_c_mm": 0.8,
        "model": "ground_profile",
        "settings": {"ra_um": _ra, "correlation_um": _beta, "acf": "gaussian"},
        "expect": "Ra about 0.2–0.3 µm, Rsk near 0",
    }
for _i, (_rq, _depth, _dens) in enumerate(
    [(0.16, 2.5, 5.0), (0.18, 2.5, 6.0), (0.20, 2.2, 6.0)], start=1
):
    DEMO_CATALOGUE[f"kfp-3310_holloway_{_i:02d}"] = {
        "part": "KFP-3310",
        "part_name": "cylinder block",
        "surface": "bore (plateau-honed)",
        "supplier": _HOLLOWAY,
        "process": "plateau honing",
        "lambda_c_mm": 0.8,
        "model": "plateau_honed_profile",
        "settings": {
            "plateau_rq_um": _rq,
            "valley_depth_um": _depth,
            "valley_density_per_mm": _dens,
        },
        "expect": "Rk about 0.5–1 µm, Rpk small, Rvk larger, Rsk negative",
    }
DEMO_CATALOGUE["kfp-3310_holloway_04_scratch"] = {
    **DEMO_CATALOGUE["kfp-3310_holloway_01"],
    "same_surface_as": "kfp-3310_holloway_01",
    "scratch": {"x_mm": 2.8, "depth_um": 10.0, "width_um": 6.0},
    "expect": "as holloway_01 plus one scratch 10 µm deep, 6 µm wide at x = 2.8 mm",
}
for _i, (_noise, _jitter) in enumerate([(0.03, 0.02), (0.05, 0.05), (0.04, 0.10)], start=1):
    DEMO_CATALOGUE[f"kfp-1187_inhouse_{_i:02d}"] = {
        "part": "KFP-1187",
        "part_name": "flange",
        "surface": "sealing face (turned)",
        "supplier": _KESTREL,
        "process": "facing, round-nosed insert",
        "lambda_c_mm": 0.8,
        "model": "turned_profile",
        "settings": {
            "feed_mm": 0.1,
            "nose_radius_mm": 0.8,
            "noise_um": _noise,
            "depth_jitter_um": _jitter,
        },
        "expect": "Rt about f²/(8r) = 1.56 µm, Ra about 0.4 µm, Rsk positive, RSm 0.1 mm "
        "(periodic: ISO 4288 would also allow λc 0.25 mm; the trace covers both)",
    }


def build_demo_profiles(seed: int = DEMO_SEED) -> dict[str, Profile]:
    """The demo data set, one :class:`Profile` per :data:`DEMO_CATALOGUE` entry.

    Deterministic: each profile draws from its own generator seeded by ``(seed, index in the
    catalogue)``, so the same seed always gives the same heights. A scratched profile uses the
    generator of the profile named in ``same_surface_as``: the same surface plus the scratch.
    """
    models: dict[str, Callable[..., np.ndarray]] = {
        "ground_profile": ground_profile,
        "plateau_honed_profile": plateau_honed_profile,
        "turned_profile": turned_profile,
    }
    out: dict[str, Profile] = {}
    names = list(DEMO_CATALOGUE)
    for name, entry in DEMO_CATALOGUE.items():
        length_mm, dx_um = TRACE_FOR_CUTOFF[entry["lambda_c_mm"]]
        rng = np.random.default_rng([seed, names.index(entry.get("same_surface_as", name))])
        z_um = models[entry["model"]](
            length_mm=length_mm, dx_um=dx_um, rng=rng, **entry["settings"]
        )
        if "scratch" in entry:
            z_um = add_scratch(z_um, dx_um=dx_um, **entry["scratch"])
        source = SourceInfo(
            format="demo",
            instrument="speccheck demo generator (synthetic)",
            date="2026-11-30",
            comment=f"{entry['part']} {entry['part_name']} {entry['surface']}, "
            f"{entry['supplier']}; invented demo data",
        )
        out[name] = Profile(z_um=z_um, dx_um=dx_um, source=source)
    return out


def write_demo_data(folder: str | Path, *, seed: int = DEMO_SEED) -> list[Path]:
    """Write every demo profile as ``<name>.csv`` and ``<name>.x3p`` into ``folder``.

    The folder is created if needed; each file is written atomically. Returns the paths, CSV
    and X3P of each profile in catalogue order.
    """
    from speccheck.readers import write_csv, write_x3p

    folder = Path(folder)
    if folder.exists() and not folder.is_dir():
        raise SpeccheckError("exists and is not a folder", path=str(folder))
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise SpeccheckError(
            f"cannot create the folder ({exc.strerror or exc})", path=str(folder)
        ) from exc
    paths: list[Path] = []
    for name, profile in build_demo_profiles(seed).items():
        csv_path, x3p_path = folder / f"{name}.csv", folder / f"{name}.x3p"
        write_csv(csv_path, profile)
        write_x3p(x3p_path, profile)
        paths += [csv_path, x3p_path]
    return paths


def prepare_demo_folder(folder: str | Path, *, seed: int = DEMO_SEED) -> list[dict[str, Any]]:
    """Write the demo data set and read every X3P file back; one summary row per profile.

    Each row: ``name``, ``part``, ``supplier``, ``lambda_c_mm`` and the keys of
    :func:`speccheck.readers.profile_summary` (``points``, ``spacing_um``, ``length_mm``,
    ``z_range_um``, ...) of the file as read back.
    """
    from speccheck.readers import profile_summary, read_profile

    rows = []
    paths = write_demo_data(folder, seed=seed)
    for name, x3p_path in zip(DEMO_CATALOGUE, paths[1::2], strict=True):
        entry = DEMO_CATALOGUE[name]
        row = {
            "name": name,
            "part": entry["part"],
            "supplier": entry["supplier"],
            "lambda_c_mm": entry["lambda_c_mm"],
        }
        row.update(profile_summary(read_profile(x3p_path)))
        rows.append(row)
    return rows
