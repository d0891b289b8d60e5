"""Routes of the bench page, driven with Starlette's TestClient on the demo data.

The verdicts shown are checked against the library's own evaluation of the same files
(speccheck.evaluation.evaluator.evaluate_files) and the record against `speccheck verify`.
"""

from __future__ import annotations

import re
import shutil
from pathlib import Path

import pytest

pytest.importorskip("starlette")
from starlette.testclient import TestClient  # noqa: E402

from speccheck.demo.data import write_demo_data  # noqa: E402
from speccheck.demo.run import example_spec_path  # noqa: E402
from speccheck.web.app import create_app  # noqa: E402
from speccheck.web.config import BenchConfig  # noqa: E402

ARDENT = ["kfp-2041_ardent_01.x3p", "kfp-2041_ardent_02.x3p", "kfp-2041_ardent_03.csv"]


@pytest.fixture(scope="module")
def demo(tmp_path_factory) -> Path:
    root = tmp_path_factory.mktemp("bench")
    write_demo_data(root / "profiles")
    (root / "specs").mkdir()
    shutil.copyfile(example_spec_path("kfp-2041-iso21920.yaml"), root / "specs" / "k.yaml")
    return root


def _client(demo: Path, tmp_path: Path) -> TestClient:
    cfg = BenchConfig(data_dir=tmp_path / "data", specs_dir=demo / "specs", db=tmp_path / "r.db")
    return TestClient(create_app(cfg), base_url="http://127.0.0.1")


def _csrf(html: str) -> str:
    return re.search(r'name="csrf-token" content="([^"]+)"', html).group(1)


def _open_part(c: TestClient) -> str:
    token = _csrf(c.get("/").text)
    r = c.post("/part", data={"csrf": token, "part": " kfp-2041 ", "serial": "S-77"})
    assert r.status_code == 200 and "S-77" in r.text
    return token


def test_three_traces_say_measure_three_more(demo, tmp_path):
    from speccheck.evaluation.evaluator import evaluate_files

    c = _client(demo, tmp_path)
    token = _open_part(c)
    for name in ARDENT:
        data = (demo / "profiles" / name).read_bytes()
        r = c.post("/traces", data={"csrf": token}, files={"trace": (name, data)})
        assert r.status_code == 200
    lib = evaluate_files(demo / "specs" / "k.yaml", [demo / "profiles" / n for n in ARDENT])
    assert lib.verdict == "undecided"
    assert "UNDECIDED" in r.text and "measure 3 more" in r.text.lower()
    r = c.post("/record", data={"csrf": token})  # undecided: nothing may be recorded
    assert "not decided yet" in r.text


def test_post_without_csrf_token_is_refused(demo, tmp_path):
    c = _client(demo, tmp_path)
    c.get("/")
    r = c.post("/part", data={"part": "KFP-2041"})
    assert r.status_code == 403 and "CSRF" in r.text


def test_hostile_uploads_refused_with_one_line(demo, tmp_path):
    c = _client(demo, tmp_path)
    token = _open_part(c)
    r = c.post("/traces", data={"csrf": token}, files={"trace": ("../../evil.exe", b"MZ")})
    assert "evil.exe: not a profile file type" in r.text
    r = c.post("/traces", data={"csrf": token}, files={"trace": ("z.x3p", b"PK\x03\x04junk")})
    assert re.search(r"z\.x3p[^<]*", r.text)
    assert "Traces (0)" in r.text
    assert not any((tmp_path / "data" / "traces").rglob("*evil*"))


def test_other_host_header_refused(demo, tmp_path):
    cfg = BenchConfig(data_dir=tmp_path / "d", specs_dir=demo / "specs", db=tmp_path / "r.db")
    c = TestClient(create_app(cfg), base_url="http://attacker.example")
    assert c.get("/").status_code == 400


def test_token_required_when_configured(demo, tmp_path):
    cfg = BenchConfig(
        data_dir=tmp_path / "d",
        specs_dir=demo / "specs",
        db=tmp_path / "r.db",
        token="t" * 24,
    )
    c = TestClient(create_app(cfg), base_url="http://127.0.0.1")
    assert c.get("/").status_code == 401
    assert c.get("/?token=" + "t" * 24).status_code == 200  # cookie set, redirected
    assert c.get("/").status_code == 200


def test_exposure_needs_token():
    from speccheck.errors import SpeccheckError
    from speccheck.web.server import check_exposure

    check_exposure("127.0.0.1", None)
    with pytest.raises(SpeccheckError, match="access token"):
        check_exposure("0.0.0.0", None)


def _more_ardent(folder: Path, n: int = 3) -> list[Path]:
    """Three more shafts of the same demo lot: the demo generator with the catalogue's settings
    (invented data), other seeds."""
    import numpy as np

    from speccheck.demo.data import DEMO_CATALOGUE, TRACE_FOR_CUTOFF, ground_profile
    from speccheck.profile import Profile, SourceInfo
    from speccheck.readers import write_x3p

    entry = DEMO_CATALOGUE["kfp-2041_ardent_01"]
    length_mm, dx_um = TRACE_FOR_CUTOFF[entry["lambda_c_mm"]]
    out = []
    for i in range(n):
        z = ground_profile(
            length_mm=length_mm,
            dx_um=dx_um,
            rng=np.random.default_rng([99, i]),
            **entry["settings"],
        )
        p = folder / f"kfp-2041_ardent_more_{i + 1:02d}.x3p"
        write_x3p(p, Profile(z_um=z, dx_um=dx_um, source=SourceInfo(format="demo")))
        out.append(p)
    return out


def test_six_traces_decide_then_sign_record_and_verify(demo, tmp_path):
    from speccheck.evaluation.evaluator import evaluate_files
    from speccheck.records.store import RecordsStore
    from speccheck.report import new_key, verify_report

    p12 = tmp_path / "k.p12"
    new_key(p12, name="Bench test key (throwaway)", organisation="test", passphrase=b"pw-123456")
    cfg = BenchConfig(
        data_dir=tmp_path / "data",
        specs_dir=demo / "specs",
        db=tmp_path / "r.db",
        sign_p12=p12,
        passphrase=b"pw-123456",
        signer="Bench test key (throwaway)",
    )
    c = TestClient(create_app(cfg), base_url="http://127.0.0.1")
    token = _open_part(c)
    paths = [demo / "profiles" / n for n in ARDENT] + _more_ardent(tmp_path)
    for p in paths:
        r = c.post("/traces", data={"csrf": token}, files={"trace": (p.name, p.read_bytes())})
    lib = evaluate_files(demo / "specs" / "k.yaml", paths)
    assert lib.verdict != "undecided"
    assert lib.verdict.upper() in r.text and "Sign and record" in r.text
    r = c.post("/record", data={"csrf": token})
    rid = int(re.search(r"Recorded as entry (\d+)", r.text).group(1))
    pdf = c.get(f"/record/{rid}.pdf")
    assert pdf.headers["content-type"] == "application/pdf"
    out = tmp_path / "download.pdf"
    out.write_bytes(pdf.content)
    check = verify_report(out, trust=[p12.with_suffix(".pem")])
    assert check.ok, check.problems + check.differences
    with RecordsStore.open(tmp_path / "r.db") as store:
        rec = store.get(rid)
        assert rec.verdict == lib.verdict and rec.result["bench_identity"]["serial"] == "S-77"
        assert store.audit().intact
