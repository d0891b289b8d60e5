"""Benchmark: write a signed 3-measurement conformance record (not part of the test run).

    python bench/report_bench.py            # median of 3 after one warm-up
    python bench/report_bench.py --repeats 5

Case: spec with Ra, Rz and Rk requirements (λc 0.8 mm, λs 2.5 µm), three 6 mm traces at
dx 0.5 µm (12 000 points, a plateau-honed profile in closed form + seeded noise), evaluated once,
then ``write_report`` timed: plots (profile, material ratio curve, histogram per measurement),
HTML, weasyprint, attachments and a PAdES signature with a fresh RSA-3072 key.
Also times ``verify_report`` (signature check + recomputation). Target: report ≤ 3 s.
The plots are timed separately so that a slow phase is visible; the CPU time of the process is
printed too, because wall time on a shared machine mostly measures the other processes.
"""

from __future__ import annotations

import argparse
import os
import platform
import sys
import tempfile
import textwrap
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

from _timing import median_seconds  # noqa: E402

TARGET_S = 3.0
PASS = b"bench-passphrase"


def _honed(n: int, dx_um: float, seed: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    x = np.arange(n) * dx_um
    z = 0.15 * rng.normal(size=n) + 0.2 * np.sin(2 * np.pi * x / 90.0)
    z[(x % 150.0) < 12.0] -= 3.0
    return z


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeats", type=int, default=3)
    args = ap.parse_args()

    from speccheck.evaluation.evaluator import evaluate_files
    from speccheck.profile import Profile
    from speccheck.readers.delimited import write_csv
    from speccheck.report import new_key, verify_report, write_report
    from speccheck.report import writer as W
    from speccheck.spec.loader import load_spec

    d = Path(tempfile.mkdtemp(prefix="speccheck-bench-"))
    spec = d / "kfp-3310.yaml"
    spec.write_text(
        textwrap.dedent("""\
        spec_version: 1
        part: {number: KFP-3310, revision: A, surface: bore}
        measurement: {cutoff: 0.8mm}
        requirements:
          - "Ra 0.8"
          - "Rz 6.3"
          - "Rk 1.5"
        """),
        encoding="utf-8",
    )
    profiles = []
    for i in range(3):
        p = d / f"bore-{i + 1}.csv"
        write_csv(p, Profile(_honed(12000, 0.5, 3310 + i), 0.5))
        profiles.append(p)
    key = new_key(d / "k.p12", name="Bench Signer", passphrase=PASS)
    result = evaluate_files(spec, profiles)
    loaded = load_spec(spec)

    def report():
        return write_report(
            result,
            out_path=d / "r.pdf",
            spec=loaded,
            profile_paths=profiles,
            sign_p12=key.p12_path,
            passphrase=PASS,
        )

    t0 = time.perf_counter()
    report()  # first call in the process: imports matplotlib, weasyprint, pyHanko
    cold = time.perf_counter() - t0
    # time the HTML → PDF and signing phases inside the timed calls (wrappers cost nothing)
    from speccheck.report import signing as S

    phase = {"pdf": 0.0, "sign": 0.0}

    def timed(name, fn):
        def wrapper(*a, **k):
            t = time.perf_counter()
            try:
                return fn(*a, **k)
            finally:
                phase[name] += time.perf_counter() - t

        return wrapper

    W.render_pdf, S.sign_pdf = timed("pdf", W.render_pdf), timed("sign", S.sign_pdf)
    c0 = time.process_time()
    t_report, info = median_seconds(report, args.repeats, warmup=0)
    cpu_report = (time.process_time() - c0) / max(1, args.repeats)
    t_pdf, t_sign = (phase[k] / max(1, args.repeats) for k in ("pdf", "sign"))
    t_plots, _ = median_seconds(lambda: W._plots(result, loaded, profiles, {}), args.repeats)
    t_verify, vr = median_seconds(lambda: verify_report(info.path), args.repeats)

    print(
        f"# report benchmark ({platform.python_version()}, {platform.machine()}, "
        f"load average {os.getloadavg()[0]:.1f} on {os.cpu_count()} CPUs)\n"
    )
    print("| case | median s | target | |")
    print("|---|---|---|---|")
    ok = "ok" if t_report <= TARGET_S else "SLOW"
    print(f"| write_report, 3 measurements, signed (warm) | {t_report:.2f} | ≤ {TARGET_S} | {ok} |")
    print(f"| same, CPU time of this process (mean) | {cpu_report:.2f} | | |")
    print(f"| of which plots (9 SVG) | {t_plots:.2f} | | |")
    print(f"| of which HTML → PDF with attachments (weasyprint, mean) | {t_pdf:.2f} | | |")
    print(f"| of which signing (pyHanko, mean) | {t_sign:.2f} | | |")
    print(f"| first call in a fresh process (imports) | {cold:.2f} | | |")
    print(
        f"| verify_report (signature + recomputation) | {t_verify:.2f} | | "
        f"{'verified' if vr.ok else 'NOT VERIFIED'} |"
    )
    print(f"\nPDF size {info.path.stat().st_size / 1024:.0f} KiB")


if __name__ == "__main__":
    main()
