"""The demo: every example spec gives, on the demo profiles, the verdict and exit status
documented in rules_examples/README.md; the whole demo runs end to end.

The demo data are invented (speccheck/demo/data.py); these tests check the demo itself, not
the numerics (those are checked against closed forms and standards elsewhere).
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from speccheck.cli.main import main
from speccheck.demo.data import prepare_demo_folder
from speccheck.demo.run import DEMO_CASES, example_spec_path, run_demo

README = Path(__file__).resolve().parents[1] / "rules_examples" / "README.md"
EXIT = {"conforming": 0, "nonconforming": 1, "undecided": 3}


@pytest.fixture(scope="module")
def demo_data(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("demo") / "profiles"
    prepare_demo_folder(folder)
    return folder


def documented_verdicts() -> dict[str, tuple[str, int]]:
    rows = {}
    for line in README.read_text(encoding="utf-8").splitlines():
        m = re.match(r"\| `([\w.-]+\.yaml)` \| [^|]+ \| (\w+) \| (\d) \|", line)
        if m:
            rows[m[1]] = (m[2], int(m[3]))
    return rows


def test_every_demo_case_is_documented():
    doc = documented_verdicts()
    assert {c.spec for c in DEMO_CASES} == set(doc)
    for case in DEMO_CASES:
        assert doc[case.spec] == (case.expected, EXIT[case.expected])


@pytest.mark.parametrize("case", DEMO_CASES, ids=lambda c: c.spec)
def test_check_gives_the_documented_verdict(case, demo_data, capsys):
    status = main(
        ["check", str(example_spec_path(case.spec)), *[str(demo_data / p) for p in case.profiles]]
    )
    out = capsys.readouterr().out
    assert status == EXIT[case.expected]
    assert f"Result: {case.expected.upper()}" in out


def test_whole_demo_runs(tmp_path):
    lines: list[str] = []
    run = run_demo(tmp_path / "demo", echo=lines.append)
    assert [v for _, v, _ in run.reports] == [c.expected for c in DEMO_CASES]
    assert all(p.is_file() and p.read_bytes().startswith(b"%PDF") for _, _, p in run.reports)
    assert run.verified == "intact and recomputed"
    assert run.lot_disposition == "reject"  # two rough shafts of five, acceptance number 1
    assert run.audit_ok is True
    # a second run in the same folder reuses the demo key and appends to the same records
    run2 = run_demo(tmp_path / "demo", echo=lines.append)
    assert run2.audit_ok is True


def test_demo_replay_answers_the_revision_question_on_a_local_cluster(tmp_path, run_cli):
    """Revision E relaxes Ra 0.4 to Ra 0.8 and Rz max 3.2 to Rz max 6.3 (speccheck.lot.demo).

    By construction of the demo data, the two rough shafts of lot ARD-2611-014 (generated Ra
    0.55-0.57 µm, DEMO_LOT_ROUGH) and the undecided ISO 21920 check (its tighter Rz) are the only
    verdicts that change, and the lot, rejected for those two shafts, would be accepted.
    A 2-worker Dask LocalCluster must give exactly what the demo's local pool gave.
    """
    import json

    from distributed import LocalCluster

    from speccheck.lot.demo import DEMO_LOT_ROUGH

    run = run_demo(tmp_path / "demo", echo=lambda _line: None)
    lot_record = len(DEMO_CASES) + 1
    iso21920 = 1 + [c.spec for c in DEMO_CASES].index("kfp-2041-iso21920.yaml")
    expected = {str(iso21920)} | {f"{lot_record}/{s}" for s in DEMO_LOT_ROUGH}
    pool = run.replay
    assert {f["key"] for f in pool["flips"]} == expected
    assert all(f["after"] == "conforming" for f in pool["flips"])
    (lot,) = pool["lots"]
    assert (lot["lot"], lot["before"], lot["after"]) == ("ARD-2611-014", "reject", "accept")

    out = tmp_path / "replay.json"
    with LocalCluster(
        n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1", dashboard_address=None
    ) as cluster:
        status, _, err = run_cli(
            "replay",
            "--db",
            str(run.records),
            "--archive",
            str(run.folder),
            "--spec",
            str(run.revised_spec),
            "--scheduler",
            cluster.scheduler_address,
            "--json",
            str(out),
        )
    assert status == 1, err  # some verdict and one lot disposition would change
    dask = json.loads(out.read_text(encoding="utf-8"))
    assert dask["scheduler"] == cluster.scheduler_address
    for key in ("checks", "replayed", "before", "after", "flips", "suppliers", "lots"):
        assert dask[key] == pool[key], key
