"""Lot inspection: plan files, finding the sampled parts' profiles, disposition of the lot.

Profiles are closed-form sines: Ra of a sine of amplitude A is 2A/π (domain notes §4, [calc]).
The wavelength 0.1 mm is far inside the λc = 0.8 mm pass band (Gaussian roughness
transmission 1 − exp(−π(α·8)²) ≈ 1, ISO 16610-21), so the evaluated Ra is 2A/π.
"""

from __future__ import annotations

import math
import textwrap
from pathlib import Path

import numpy as np
import pytest

from speccheck.errors import InputError, SpecError
from speccheck.lot.plan import find_part_files, load_plan
from speccheck.lot.result import LotResult, dispose, part_verdict
from speccheck.lot.runner import inspect_lot
from speccheck.profile import Profile
from speccheck.readers import write_csv

DX_UM = 0.5
N_POINTS = 11201  # 5.6 mm = 7 cut-offs of 0.8 mm at ISO 3274's 0.5 µm spacing
WAVELENGTH_MM = 0.1

SPEC = """\
spec_version: 1
part:
  number: KFP-2041
  revision: D
  surface: seal seat
requirements:
  - "Ra 0.4"
measurement:
  cutoff: 0.8mm
"""


def plan_text(
    *, sampling: str = "inspection_level: II\n  acceptance_number: 1", extra: str = ""
) -> str:
    return (
        textwrap.dedent(
            """\
            plan_version: 1
            lot:
              id: L-1
              supplier: Ardent Precision Grinding
              part: KFP-2041
              size: 20
              received: 2026-11-28
            surfaces:
              seal-seat:
                spec: spec.yaml
                measurements: 3
            sampling:
              {sampling}
            """
        ).format(sampling=sampling)
        + extra
    )


def sine_csv(path: Path, ra_um: float, offset_um: float = 0.0) -> None:
    """A sine profile with Ra = ra_um: amplitude A = π·Ra/2 (Ra = 2A/π).

    ``offset_um`` shifts the heights (the mean line takes it, Ra is unchanged) so that each
    profile of a lot is a distinct data set: identical heights are refused as a repeat."""
    x_mm = np.arange(N_POINTS) * DX_UM / 1e3
    amplitude = math.pi * ra_um / 2
    path.parent.mkdir(parents=True, exist_ok=True)
    z_um = amplitude * np.sin(2 * np.pi * x_mm / WAVELENGTH_MM) + offset_um
    write_csv(path, Profile(z_um=z_um, dx_um=DX_UM))


# Ra per profile (3 per part). Limit "Ra 0.4", 16 % rule (ISO 4288 / ISO 1302 default):
GOOD = (0.19, 0.19, 0.19)  # every value ≤ 70 % of the limit (0.28): conforming
BAD = (0.637, 0.637, 0.637)  # 3 of 3 exceed: more than 16 %, nonconforming
OPEN = (0.35, 0.35, 0.45)  # 1 of the first 3 exceeds: up to 1 of 6 allowed, measure more


def build_lot(root: Path, parts: dict[str, tuple[float, ...]], *, plan: str | None = None) -> Path:
    (root / "spec.yaml").write_text(SPEC, encoding="utf-8")
    (root / "plan.yaml").write_text(plan or plan_text(), encoding="utf-8")
    for k, (serial, ras) in enumerate(parts.items()):
        for j, ra in enumerate(ras, start=1):
            offset = 1e-3 * (100 * k + j)  # distinct heights per file, same Ra
            sine_csv(root / "data" / serial / "seal-seat" / f"p{j}.csv", ra, offset)
    return root / "plan.yaml"


# --- disposition (pure) -----------------------------------------------------------------


@pytest.mark.parametrize(
    ("d", "u", "c", "expected"),
    [
        (0, 0, 0, "accept"),
        (1, 0, 0, "reject"),  # d = c + 1
        (1, 0, 1, "accept"),  # d = c
        (2, 0, 1, "reject"),
        (0, 1, 0, "undecided"),  # the undecided part could be nonconforming: d + u > c
        (1, 1, 1, "undecided"),
        (0, 1, 1, "accept"),  # d + u = c: cannot change the outcome
        (1, 1, 2, "accept"),
        (2, 3, 1, "reject"),  # d > c whatever the undecided parts turn out to be
    ],
)
def test_dispose(d, u, c, expected):
    # Single sampling by attributes: accept if d <= c, reject if d > c (ISO 2859-1:1999
    # single sampling plans); undecided parts are counted both ways.
    assert dispose(d, u, c)[0] == expected


def test_part_verdict():
    assert part_verdict(["conforming", "nonconforming", "undecided"]) == "nonconforming"
    assert part_verdict(["conforming", "undecided"]) == "undecided"
    assert part_verdict(["conforming", "conforming"]) == "conforming"


# --- plan files -----------------------------------------------------------------------


def test_load_plan(tmp_path: Path):
    plan = load_plan(build_lot(tmp_path, {}))
    assert plan.lot["size"] == 20 and plan.lot["received"] == "2026-11-28"
    # ISO 2859-1:1999 Table 1: lot of 20 -> code letter C; Table 2-A: C -> n = 5
    assert (plan.sampling.code_letter, plan.sampling.sample_size) == ("C", 5)
    assert plan.surfaces[0].spec_path == (tmp_path / "spec.yaml").resolve()
    assert plan.pattern == "{part_serial}/{surface}/*.csv"
    assert len(plan.sha256) == 64


@pytest.mark.parametrize(
    ("text", "message"),
    [
        (
            plan_text(extra="colour: red\n"),
            "plan.yaml:15:1: unknown key 'colour'",
        ),
        (
            plan_text(sampling="sample_size: 5\n  inspection_level: II\n  acceptance_number: 1"),
            "plan.yaml:12:1: sampling: give either 'sample_size' or "
            "'inspection_level: II', not both or neither",
        ),
        (
            plan_text(sampling="inspection_level: III\n  acceptance_number: 1"),
            "plan.yaml:13:3: sampling.inspection_level: Input should be 'II'",
        ),
        (
            plan_text(sampling="sample_size: 5"),
            "plan.yaml:12:1: missing key 'acceptance_number' in sampling",
        ),
        (
            plan_text(extra='data:\n  pattern: "{serial}/*.csv"\n'),
            "plan.yaml:16:3: data.pattern: unknown placeholder {serial} "
            "(known: {part_serial}, {surface})",
        ),
        (
            plan_text().replace("spec: spec.yaml", "spec: missing.yaml"),
            "plan.yaml:10:5: surfaces.seal-seat.spec: spec file 'missing.yaml' not found",
        ),
        ("plan_version: 1\nlot: !!python/object:os.system {}\n", "plan.yaml:2:6: tag"),
    ],
)
def test_plan_errors_name_file_and_place(tmp_path: Path, text: str, message: str):
    (tmp_path / "spec.yaml").write_text(SPEC, encoding="utf-8")
    (tmp_path / "plan.yaml").write_text(text, encoding="utf-8")
    with pytest.raises(SpecError) as info:
        load_plan(tmp_path / "plan.yaml")
    got = info.value.one_line().replace(str(tmp_path) + "/", "")
    assert got.startswith(message), got


def test_find_part_files_counts(tmp_path: Path):
    plan_path = build_lot(tmp_path, {f"S{i}": GOOD for i in (1, 2, 10, 3)})
    plan = load_plan(plan_path)
    with pytest.raises(
        InputError, match=r"the plan samples 5 part\(s\) but 4 match .*\(S1, S2, S3, S10\)"
    ):
        find_part_files(plan, tmp_path / "data")
    sine_csv(tmp_path / "data" / "S4" / "seal-seat" / "p1.csv", 0.19)
    with pytest.raises(InputError) as info:
        find_part_files(plan, tmp_path / "data")
    assert info.value.where == "part S4"
    assert "the plan asks for 3 profile(s), found 1" in info.value.message
    for j in (2, 3):
        sine_csv(tmp_path / "data" / "S4" / "seal-seat" / f"p{j}.csv", 0.19)
    files = find_part_files(plan, tmp_path / "data")
    assert list(files) == ["S1", "S2", "S3", "S4", "S10"]  # natural order
    assert [p.name for p in files["S4"]["seal-seat"]] == ["p1.csv", "p2.csv", "p3.csv"]


# --- whole lots -----------------------------------------------------------------------


@pytest.fixture(scope="module")
def mixed_lot(tmp_path_factory) -> Path:
    root = tmp_path_factory.mktemp("lot")
    return build_lot(root, {"S-01": GOOD, "S-02": BAD, "S-03": GOOD, "S-04": OPEN, "S-05": GOOD})


def test_mixed_lot_is_undecided_then_decided(mixed_lot: Path):
    # d = 1 nonconforming, u = 1 undecided, c = 1: the undecided part decides -> undecided
    plan = load_plan(mixed_lot)
    result = inspect_lot(plan, mixed_lot.parent / "data", workers=1)
    assert [p.verdict for p in result.parts] == [
        "conforming",
        "nonconforming",
        "conforming",
        "undecided",
        "conforming",
    ]
    assert (result.nonconforming, result.undecided, result.disposition) == (1, 1, "undecided")
    assert result.remeasure == ["S-04"]
    assert int(result.exit_status) == 3
    # The evaluated Ra equals 2A/π of the generated sine (closed form), to the filter's error
    ra = result.parts[1].surfaces["seal-seat"].requirements[0].values[0].value
    assert ra == pytest.approx(0.637, rel=2e-3)
    # JSON round trip keeps everything
    again = LotResult.from_dict(result.to_dict())
    assert again.to_dict() == result.to_dict()


def test_mixed_lot_with_two_workers_same_outcome(mixed_lot: Path):
    # the process pool gives the same parts, in the same order, with the same verdicts
    plan = load_plan(mixed_lot)
    one = inspect_lot(plan, mixed_lot.parent / "data", workers=1)
    two = inspect_lot(plan, mixed_lot.parent / "data", workers=2)
    assert [(p.serial, p.verdict) for p in one.parts] == [(p.serial, p.verdict) for p in two.parts]
    assert two.disposition == one.disposition


def test_lot_rejected_and_accepted(tmp_path: Path):
    reject_dir = tmp_path / "reject"
    reject_dir.mkdir()
    plan = load_plan(build_lot(reject_dir, {"A": GOOD, "B": BAD, "C": GOOD, "D": BAD, "E": GOOD}))
    res = inspect_lot(plan, reject_dir / "data", workers=1)
    assert (res.nonconforming, res.disposition, int(res.exit_status)) == (2, "reject", 1)

    accept_dir = tmp_path / "accept"
    accept_dir.mkdir()
    text = plan_text(sampling="sample_size: 4\n  acceptance_number: 1")
    plan = load_plan(build_lot(accept_dir, {"A": GOOD, "B": BAD, "C": GOOD, "D": GOOD}, plan=text))
    assert plan.sampling.code_letter is None and plan.sampling.sample_size == 4
    res = inspect_lot(plan, accept_dir / "data", workers=1)
    assert (res.nonconforming, res.disposition, int(res.exit_status)) == (1, "accept", 0)


def test_progress_reports_every_task(mixed_lot: Path):
    seen: list[tuple[int, int]] = []
    inspect_lot(
        load_plan(mixed_lot),
        mixed_lot.parent / "data",
        workers=1,
        progress=lambda d, t: seen.append((d, t)),
    )
    assert seen == [(i, 5) for i in range(1, 6)]  # 5 parts x 1 surface


def test_lot_view_reads_the_oc_curve(mixed_lot: Path):
    from test_sampling import hypergeometric_pa_by_hand

    from speccheck.lot.report import OC_READING_FRACTIONS, lot_view

    result = inspect_lot(load_plan(mixed_lot), mixed_lot.parent / "data", workers=1)
    view = lot_view(result, plots=False)
    # N = 20, n = 5, c = 1 (n/N = 0.25 > 0.1: hypergeometric with D = round(pN)), summed by hand
    expected = [
        f"{hypergeometric_pa_by_hand(round(p * 20), 20, 5, 1):.3f}" for p in OC_READING_FRACTIONS
    ]
    assert [r["pa"] for r in view["readings"]] == expected
    assert view["disposition_text"] == "UNDECIDED — MEASURE AGAIN"
    assert [r["serial"] for r in view["remeasure"]] == ["S-04"]
    assert [d["title"] for d in view["distributions"]] == ["seal-seat — Ra 0.4"]
