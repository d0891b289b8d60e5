"""Plan files: lint at file:line:col, explain's sampling figures against ISO 2859-1 and scipy."""

from __future__ import annotations

import re
from pathlib import Path

import pytest
from scipy import stats

from speccheck.cli.main import main
from speccheck.demo.data import ground_profile
from speccheck.lot.demo import build_demo_lot
from speccheck.lot.explain import explain_plan, oc_key_points
from speccheck.lot.lint import lint_plan
from speccheck.lot.plan import load_plan, plan_json_schema

SPEC = """\
spec_version: 1
part:
  number: T-1
  revision: A
  surface: face
requirements:
  - Ra 0.8
"""

GOOD = """\
plan_version: 1
lot:
  id: L-1
  supplier: Example Works
  part: T-1
  size: {size}
  received: 2026-01-05
surfaces:
  face:
    spec: face.yaml
    measurements: 2
sampling:
  inspection_level: II
  acceptance_number: {c}
"""


def _write(tmp_path: Path, text: str, spec: str = SPEC) -> Path:
    (tmp_path / "face.yaml").write_text(spec, encoding="utf-8")
    plan = tmp_path / "plan.yaml"
    plan.write_text(text, encoding="utf-8")
    return plan


def _run(capsys, *args: str) -> tuple[int, str]:
    code = main(list(args))
    out = capsys.readouterr()
    return code, out.out + out.err


@pytest.mark.parametrize(
    ("edit", "line", "col", "words"),
    [
        (("  size: {size}", "  size: twenty"), 6, 3, "lot.size"),  # wrong type
        (("  received:", "  colour: red\n  received:"), 7, 3, "unknown key 'colour'"),
        (
            ("sampling:\n  inspection_level: II\n  acceptance_number: {c}\n", ""),
            1,
            1,
            "missing key 'sampling'",
        ),
        (("    spec: face.yaml", "    spec: nowhere.yaml"), 10, 5, "not found"),
        (("    measurements: 2", "    measurements: 0"), 11, 5, "measurements"),
    ],
)
def test_lint_reports_malformed_plans_at_file_line_col(tmp_path, capsys, edit, line, col, words):
    plan = _write(tmp_path, GOOD.replace(*edit).format(size=20, c=1))
    code, out = _run(capsys, "lint", str(plan))
    assert code == 2, out
    first = out.splitlines()[0]
    assert first.startswith(f"{plan}:{line}:{col}: "), first
    assert words in first
    assert "Traceback" not in out


def test_lint_reports_every_error_not_only_the_first(tmp_path):
    text = GOOD.replace("  received:", "  colour: red\n  received:").replace(
        "    measurements: 2", "    measurements: 0"
    )
    findings = lint_plan(_write(tmp_path, text.format(size=20, c=1)))
    assert [(f.line, f.severity) for f in findings] == [(7, "error"), (12, "error")]


def test_lint_of_a_plan_lints_its_specs_naming_the_plan_line(tmp_path, capsys):
    plan = _write(tmp_path, GOOD.format(size=20, c=1), spec=SPEC.replace("Ra 0.8", "Ra 0.8 q"))
    code, out = _run(capsys, "lint", str(plan))
    assert code == 2, out
    spec_line = next(ln for ln in out.splitlines() if "face.yaml:" in ln)
    assert re.match(r".*face\.yaml:7:\d+: ", spec_line), spec_line
    assert f"surface face, named at {plan}:10:5" in spec_line


def test_lint_warns_when_the_plan_cannot_reject(tmp_path, capsys):
    # lot of 20 -> code letter C, n = 5; c = 5 accepts whatever the sample shows
    code, out = _run(capsys, "lint", str(_write(tmp_path, GOOD.format(size=20, c=5))))
    assert code == 0, out
    assert "warning: acceptance number c = 5 with sample size n = 5" in out


def test_demo_plan_lints_clean(tmp_path, capsys):
    plan = build_demo_lot(tmp_path / "demo", ground_profile=ground_profile)
    assert lint_plan(plan) == []
    code, out = _run(capsys, "lint", str(plan))
    assert code == 0 and out.strip() == f"{plan}: ok"


@pytest.mark.parametrize(
    ("size", "letter", "n"),
    [
        # ISO 2859-1:1999 Table 1, level II: lot 16-25 -> C; Table 2-A: C -> n = 5
        (20, "C", 5),
        # Table 1, level II: 91-150 -> F; Table 2-A: F -> n = 20
        (150, "F", 20),
        # Table 1, level II: 501-1 200 -> J; Table 2-A: J -> n = 80
        (1000, "J", 80),
        # Table 1, level II: 3 201-10 000 -> L; Table 2-A: L -> n = 200
        (5000, "L", 200),
    ],
)
def test_explain_states_code_letter_sample_size_and_c(tmp_path, capsys, size, letter, n):
    plan = _write(tmp_path, GOOD.format(size=size, c=2))
    code, out = _run(capsys, "explain", str(plan))
    assert code == 0, out
    assert f"Lot size: N = {size} part(s)" in out
    assert "general inspection level II" in out
    assert f"Sample size code letter: {letter} " in out
    assert f"Sample size: n = {n} part(s)" in out
    assert "Acceptance number: c = 2" in out
    assert "face: spec face.yaml, at least 2 profile(s) per part" in out
    assert "- Ra 0.8" in out


def test_explain_oc_points_agree_with_scipy_binomial(tmp_path):
    # lot 1000 -> J, n = 80 (ISO 2859-1:1999 Tables 1 and 2-A); n/N = 0.08: binomial
    plan = load_plan(_write(tmp_path, GOOD.format(size=1000, c=2)))
    at_pa, at_p = oc_key_points(plan.sampling)
    for pa, p in at_pa:  # p solved for Pa, put back into scipy's binomial cdf
        assert stats.binom.cdf(2, 80, p) == pytest.approx(pa, abs=1e-9)
    for p, pa in at_p:
        assert pa == pytest.approx(stats.binom.cdf(2, 80, p), rel=1e-12)
    text = explain_plan(plan)
    p95 = at_pa[0][1]
    assert f"accepted with probability 95 % at {100 * p95:.3g} % nonconforming" in text
    assert "binomial" in text


def test_explain_demo_plan_uses_hypergeometric_oc(tmp_path):
    # demo: lot 20 -> C, n = 5, c = 1; n/N = 0.25 > 0.1: drawn without replacement
    plan = load_plan(build_demo_lot(tmp_path / "demo", ground_profile=ground_profile))
    text = explain_plan(plan)
    pa = stats.hypergeom.cdf(1, 20, 2, 5)  # 2 of 20 nonconforming, 5 drawn, at most 1 found
    assert (
        f"a lot with 2 of 20 parts nonconforming is accepted with probability {100 * pa:.1f} %"
        in text
    )
    assert "hypergeometric" in text


def test_plan_schema_documents_every_field():
    schema = plan_json_schema()
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    models = [schema, *schema["$defs"].values()]
    for model in models:
        assert model.get("description"), model.get("title")
        for name, field in model["properties"].items():
            assert field.get("description"), f"{model.get('title')}.{name}"


def test_readme_documents_every_plan_key_with_the_demo_plan():
    from speccheck.lot.demo import PLAN_YAML

    readme = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    section = readme.split("### Plan files", 1)[1].split("\n### ", 1)[0]
    assert f"```yaml\n{PLAN_YAML}```" in section
    schema = plan_json_schema()
    keys = set(schema["properties"])
    for prefix, ref in (("lot", "Lot"), ("data", "Data"), ("sampling", "Sampling")):
        keys |= {f"{prefix}.{k}" for k in schema["$defs"][ref]["properties"]}
    keys |= {f"surfaces.NAME.{k}" for k in schema["$defs"]["Surface"]["properties"]}
    keys -= {"lot", "data", "sampling", "surfaces"}
    missing = sorted(k for k in keys if f"`{k}`" not in section)
    assert not missing, missing
