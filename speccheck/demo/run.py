"""The whole job on the built-in demo data: profiles, specs, checks, signed records, a lot.

Everything is synthetic and set in an invented scenario (Kestrel Fluid Power receiving parts
from Ardent Precision Grinding and Holloway Bore & Hone). The signing key made here is a
throwaway demonstration key; the records say so on their face.
"""

from __future__ import annotations

import secrets
import shutil
from collections.abc import Callable
from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path
from typing import Any

from speccheck.errors import SpeccheckError

__all__ = ["DEMO_CASES", "DemoCase", "DemoRun", "run_demo", "example_spec_path"]


@dataclass(frozen=True)
class DemoCase:
    """One check of the demo: an example spec, the demo profiles it is applied to, and the
    verdict documented in rules_examples/README.md."""

    spec: str  # file name in rules_examples/
    profiles: tuple[str, ...]  # demo profile names (files <name>.x3p or .csv in the data folder)
    expected: str  # "conforming", "nonconforming" or "undecided"
    story: str


_ARDENT = ("kfp-2041_ardent_01.x3p", "kfp-2041_ardent_02.x3p", "kfp-2041_ardent_03.csv")
_HOLLOWAY = ("kfp-3310_holloway_01.x3p", "kfp-3310_holloway_02.x3p", "kfp-3310_holloway_03.x3p")
_FLANGE = ("kfp-1187_inhouse_01.x3p", "kfp-1187_inhouse_02.x3p", "kfp-1187_inhouse_03.x3p")

DEMO_CASES: tuple[DemoCase, ...] = (
    DemoCase(
        "kfp-2041-seal-seat.yaml",
        _ARDENT,
        "conforming",
        "ground seal seat, ISO 1302 callouts, 16 % rule and max-rule",
    ),
    DemoCase(
        "kfp-2041-asme.yaml",
        _ARDENT,
        "conforming",
        "same shafts on an ASME Y14.36 drawing: every value is a maximum",
    ),
    DemoCase(
        "kfp-2041-asme-uin.yaml",
        _ARDENT,
        "conforming",
        "the same shafts on an inch drawing: limits in microinches",
    ),
    DemoCase(
        "kfp-2041-iso21920.yaml",
        _ARDENT,
        "undecided",
        "tighter Rz under the 16 % rule: one of three exceeds, measure three more",
    ),
    DemoCase(
        "kfp-3310-bore.yaml",
        _HOLLOWAY,
        "conforming",
        "plateau-honed bore, Rk family on the robust filter",
    ),
    DemoCase(
        "kfp-3310-incoming-guarded-rejection.yaml",
        (*_HOLLOWAY, "kfp-3310_holloway_04_scratch.x3p"),
        "conforming",
        "guarded rejection: values within U of the limit are not proof of non-conformity",
    ),
    DemoCase(
        "kfp-3310-bore-slope.yaml",
        (*_HOLLOWAY, "kfp-3310_holloway_04_scratch.x3p"),
        "conforming",
        "RΔq as an ISO 4287 section mean: the scratch is averaged with four clean sections",
    ),
    DemoCase(
        "kfp-3310-bore-slope-iso21920.yaml",
        (*_HOLLOWAY, "kfp-3310_holloway_04_scratch.x3p"),
        "nonconforming",
        "the same limit under ISO 21920-2: RΔq over the whole evaluation length",
    ),
    DemoCase(
        "kfp-1187-flange-face.yaml",
        _FLANGE,
        "nonconforming",
        "turned gasket face below its lower Ra limit: too smooth to grip the gasket",
    ),
)


@dataclass
class DemoRun:
    folder: Path
    reports: list[tuple[DemoCase, str, Path]] = field(default_factory=list)  # case, verdict, pdf
    lot_report: Path | None = None
    lot_disposition: str | None = None
    verified: str | None = None
    records: Path | None = None
    audit_ok: bool | None = None
    revised_spec: Path | None = None
    replay: dict | None = None  # what revision E would have changed (ReplaySummary.to_dict)


def example_spec_path(name: str) -> Path:
    """Path of a shipped example spec (installed as ``speccheck.rules_examples``)."""
    try:
        p = Path(str(resources.files("speccheck.rules_examples").joinpath(name)))
        if p.is_file():
            return p
    except ModuleNotFoundError:
        pass
    p = Path(__file__).resolve().parents[2] / "rules_examples" / name
    if p.is_file():
        return p
    raise SpeccheckError(f"example spec {name!r} is not installed")


def _demo_key(folder: Path) -> tuple[Path, bytes, Path]:
    """A throwaway key for the demo; reused when the demo folder already has one."""
    from speccheck.report import new_key

    p12, pw_file = folder / "demo-signing-key.p12", folder / "demo-signing-key.passphrase"
    if p12.is_file() and pw_file.is_file():
        return p12, pw_file.read_bytes().strip(), p12.with_suffix(".pem")
    for stale in (p12, pw_file, p12.with_suffix(".pem")):
        stale.unlink(missing_ok=True)
    passphrase = secrets.token_urlsafe(18).encode()
    pw_file.write_bytes(passphrase + b"\n")
    pw_file.chmod(0o600)
    new_key(
        p12,
        name="DEMO KEY - Kestrel Fluid Power incoming inspection (throwaway)",
        organisation="Kestrel Fluid Power (fictional)",
        passphrase=passphrase,
        days=30,
    )
    return p12, passphrase, p12.with_suffix(".pem")


def _replay_revision(run: DemoRun, store: Any, specs: Path, echo: Callable[[str], None]) -> None:
    """Ask the drawing author's question of the demo records: what would revision E change?"""
    from speccheck.lot.demo import write_revised_spec
    from speccheck.replay import Archive, replay

    run.revised_spec = write_revised_spec(specs)
    summary = replay(store, Archive(run.folder), run.revised_spec, workers=2).to_dict()
    run.replay = summary
    changed = ", ".join(
        f"lot {lot['lot']} {lot['before']} -> {lot['after']}"
        for lot in summary["lots"]
        if lot["before"] != lot["after"]
    )
    echo(
        f"replay under {run.revised_spec.name}: {len(summary['flips'])} of "
        f"{summary['replayed']} past checks would change verdict"
        + (f"; {changed}" if changed else "")
    )


def run_demo(folder: str | Path, *, echo: Callable[[str], None] = print) -> DemoRun:
    """Build the demo folder and run every demo case, the lot and the records audit."""
    from speccheck.demo.data import ground_profile, prepare_demo_folder
    from speccheck.evaluation.evaluator import evaluate_files
    from speccheck.lot.demo import build_demo_lot
    from speccheck.lot.plan import load_plan
    from speccheck.lot.report import write_lot_report
    from speccheck.lot.runner import inspect_lot
    from speccheck.records.store import RecordsStore
    from speccheck.report import verify_report, write_report
    from speccheck.spec.loader import load_spec

    root = Path(folder)
    if root.exists() and not root.is_dir():
        raise SpeccheckError("exists and is not a folder", path=str(root))
    root.mkdir(parents=True, exist_ok=True)
    run = DemoRun(folder=root)
    data, specs, reports = root / "profiles", root / "specs", root / "reports"
    for d in (specs, reports):
        d.mkdir(exist_ok=True)
    echo(f"demo data (synthetic, invented scenario) -> {data}")
    prepare_demo_folder(data)
    p12, passphrase, pem = _demo_key(root)
    run.records = root / "records.sqlite"
    store = RecordsStore.open(run.records)

    for case in DEMO_CASES:
        spec_path = specs / case.spec
        shutil.copyfile(example_spec_path(case.spec), spec_path)
        profile_paths = [data / name for name in case.profiles]
        result = evaluate_files(spec_path, profile_paths)
        pdf = reports / (Path(case.spec).stem + ".pdf")
        info = write_report(
            result,
            out_path=pdf,
            spec=load_spec(spec_path),
            profile_paths=profile_paths,
            sign_p12=p12,
            passphrase=passphrase,
            signer_role="Incoming inspection (demo)",
            demo_key=True,
        )
        store.append_check(result, report_sha256=info.sha256, signer=info.signer)
        run.reports.append((case, result.verdict, pdf))
        flag = "" if result.verdict == case.expected else f"  (documented: {case.expected})"
        echo(f"  {result.verdict.upper():<14} {case.spec:<42} -> {pdf.name}{flag}")

    first = run.reports[0][2]
    check = verify_report(first, trust=[pem])
    run.verified = "intact and recomputed" if check.ok else "; ".join(check.problems)
    echo(f"verify {first.name}: {run.verified}")

    plan_path = build_demo_lot(root / "lot", ground_profile=ground_profile)
    lot = inspect_lot(load_plan(plan_path), root / "lot" / "data", workers=1)
    run.lot_report = reports / "lot-ARD-2611-014.pdf"
    lot_sha = write_lot_report(
        lot,
        out_path=run.lot_report,
        plan_raw=plan_path.read_bytes(),
        sign_p12=p12,
        passphrase=passphrase,
        plan=load_plan(plan_path),
        data_dir=root / "lot" / "data",
        demo_key=True,
    )
    store.append_lot(lot, report_sha256=lot_sha, signer="DEMO KEY")
    run.lot_disposition = lot.disposition
    echo(
        f"lot {lot.lot.get('id')}: {lot.disposition.upper()} ({lot.reason})"
        f" -> {run.lot_report.name}"
    )

    audit = store.audit()
    run.audit_ok = audit.intact
    echo(f"records: {run.records} ({'chain intact' if audit.intact else 'AUDIT FAILED'})")
    _replay_revision(run, store, specs, echo)
    store.close()
    echo(f"reports: {reports}  (signed with a throwaway demo key; trust {pem.name} to verify)")
    return run
