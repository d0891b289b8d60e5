"""The bench page in a real browser: Playwright driving the system Chromium (never a download).

Screenshots at 1366x768 go to $SPECCHECK_SHOTS when set (outside the repository).
"""

from __future__ import annotations

import os
import socket
import subprocess
import sys
import threading
import time
from pathlib import Path

import pytest

playwright = pytest.importorskip("playwright.sync_api")
CHROMIUM = "/usr/bin/chromium"
ARGS = [
    "--no-sandbox",
    "--disable-gpu",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--no-first-run",
]


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.fixture(scope="module")
def server(tmp_path_factory):
    import shutil

    import uvicorn
    from test_web_routes import _more_ardent

    from speccheck.demo.data import write_demo_data
    from speccheck.demo.run import example_spec_path
    from speccheck.report import new_key
    from speccheck.web.app import create_app
    from speccheck.web.config import BenchConfig

    root = tmp_path_factory.mktemp("browser")
    write_demo_data(root / "profiles")
    (root / "specs").mkdir()
    shutil.copyfile(example_spec_path("kfp-2041-iso21920.yaml"), root / "specs" / "k.yaml")
    more = _more_ardent(root)
    p12 = root / "k.p12"
    new_key(p12, name="Browser test key (throwaway)", organisation="test", passphrase=b"pw-987654")
    port = _free_port()
    cfg = BenchConfig(
        data_dir=root / "data",
        specs_dir=root / "specs",
        db=root / "r.db",
        port=port,
        sign_p12=p12,
        passphrase=b"pw-987654",
        signer="Browser test key (throwaway)",
    )
    srv = uvicorn.Server(
        uvicorn.Config(create_app(cfg), host="127.0.0.1", port=port, log_level="warning")
    )
    t = threading.Thread(target=srv.run, daemon=True)
    t.start()
    for _ in range(100):
        if srv.started:
            break
        time.sleep(0.05)
    yield {"url": f"http://127.0.0.1:{port}/", "root": root, "more": more, "p12": p12}
    srv.should_exit = True
    t.join(10)


@pytest.fixture(scope="module")
def browser():
    if not Path(CHROMIUM).exists():
        pytest.fail(f"{CHROMIUM} missing: run scripts/system-packages.sh")
    with playwright.sync_playwright() as p:
        b = p.chromium.launch(executable_path=CHROMIUM, args=ARGS)
        yield b
        b.close()


def _shot(page, name: str) -> None:
    folder = os.environ.get("SPECCHECK_SHOTS")
    if folder:
        Path(folder).mkdir(parents=True, exist_ok=True)
        page.screenshot(path=str(Path(folder) / f"{name}.png"), full_page=False)


def test_technician_flow(server, browser, tmp_path):
    ctx = browser.new_context(viewport={"width": 1366, "height": 768}, accept_downloads=True)
    page = ctx.new_page()
    page.goto(server["url"])
    _shot(page, "01-start")
    page.fill("#serial", "S-1001")
    page.fill("#operator", "A. Tester")
    page.fill("#part", "KFP-2041")
    page.keyboard.press("Enter")
    page.wait_for_selector("#trace")
    prof = server["root"] / "profiles"
    page.set_input_files(
        "#trace",
        [
            str(prof / n)
            for n in ("kfp-2041_ardent_01.x3p", "kfp-2041_ardent_02.x3p", "kfp-2041_ardent_03.csv")
        ],
    )
    page.get_by_text("Traces (3)").wait_for(timeout=60000)
    assert "measure 3 more" in page.inner_text("#headline").lower()
    _shot(page, "02-measure-3-more")
    page.set_input_files("#trace", [str(p) for p in server["more"]])
    page.get_by_text("Traces (6)").wait_for(timeout=60000)
    word = page.inner_text("#verdict .word")
    assert word in ("CONFORMING", "NONCONFORMING")
    _shot(page, "03-decided")
    page.click("#sign")
    page.wait_for_selector("#download")
    _shot(page, "04-recorded")
    with page.expect_download() as dl:
        page.click("#download")
    out = tmp_path / "record.pdf"
    dl.value.save_as(out)
    # `speccheck verify` as an auditor runs it (its own process: pyHanko runs its own loop)
    run = subprocess.run(
        [
            sys.executable,
            "-m",
            "speccheck",
            "verify",
            str(out),
            "--trust",
            str(server["p12"].with_suffix(".pem")),
        ],
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert run.returncode == 0, run.stdout + run.stderr
    ctx.close()


def test_hostile_upload_and_missing_csrf(server, browser):
    ctx = browser.new_context(viewport={"width": 1366, "height": 768})
    page = ctx.new_page()
    page.goto(server["url"])
    page.fill("#part", "KFP-2041")
    page.keyboard.press("Enter")
    page.wait_for_selector("#trace")
    page.set_input_files(
        "#trace", files=[{"name": "evil.exe", "mimeType": "application/x", "buffer": b"MZ\x90\x00"}]
    )
    page.wait_for_selector(".msg")
    assert "evil.exe: not a profile file type" in page.inner_text(".msg")
    _shot(page, "05-hostile-upload")
    r = page.request.post(server["url"] + "record", form={"x": "1"})
    assert r.status == 403 and "CSRF" in r.text()
    ctx.close()


def test_two_contexts_do_not_interfere(server, browser):
    prof = server["root"] / "profiles"
    a = browser.new_context().new_page()
    b = browser.new_context().new_page()
    for page, serial in ((a, "A-1"), (b, "B-2")):
        page.goto(server["url"])
        page.fill("#serial", serial)
        page.fill("#part", "KFP-2041")
        page.keyboard.press("Enter")
        page.wait_for_selector("#trace")
    a.set_input_files("#trace", [str(prof / "kfp-2041_ardent_01.x3p")])
    a.get_by_text("Traces (1)").wait_for(timeout=60000)
    b.reload()
    assert "Traces (0)" in b.inner_text("body") and b.inner_text("#ident-serial") == "B-2"
    assert a.inner_text("#ident-serial") == "A-1"
