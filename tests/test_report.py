"""The conformance record PDF: content read back with pypdf, attachments, atomic writes, plots.

Results are built by hand (tests/test_report_support.py) so the report is tested on its own.
"""

from __future__ import annotations

import hashlib
import json
import re
import xml.etree.ElementTree as ET
from dataclasses import replace
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest
from test_report_support import (
    PASSPHRASE,
    SPEC_YAML,
    requirement,
    result_for,
    spec_for,
    write_sine_csv,
)

from speccheck.errors import ReportError
from speccheck.evaluation.result import CheckResult
from speccheck.report import new_key, read_embedded_files, write_report
from speccheck.report import plots as P
from speccheck.report._resources import template_text
from speccheck.report.view import SignatureView, build_view, format_number, plain_number
from speccheck.report.writer import (
    MANIFEST_NAME,
    RESULT_NAME,
    attachment_names,
    profiles_for_plot,
    render_html,
)


def page_text(pdf_path: Path, page: int | None = None) -> str:
    from pypdf import PdfReader

    pages = PdfReader(pdf_path).pages
    chosen = pages if page is None else [pages[page]]
    return "\n".join(p.extract_text() for p in chosen)


def headline(pdf_path: Path) -> str:
    m = re.search(r"OVERALL VERDICT\s*(NONCONFORMING|CONFORMING|UNDECIDED)", page_text(pdf_path, 0))
    assert m, "no overall verdict on page 1"
    return m.group(1)


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    d = tmp_path_factory.mktemp("report")
    (d / "kfp-2041.yaml").write_bytes(SPEC_YAML)
    profiles = [write_sine_csv(d / f"seat-{i}.csv", amplitude_um=0.6 + 0.05 * i) for i in (1, 2)]
    return d, profiles


@pytest.fixture(scope="module")
def key(tmp_path_factory):
    d = tmp_path_factory.mktemp("report-key")
    return new_key(
        d / "qa.p12", name="Riley Chen", organisation="Kestrel Fluid Power", passphrase=PASSPHRASE
    )


def _quick_spec(d: Path):
    """A spec without roughness requirements: no plots, so the verdict tests render fast."""
    return spec_for(d / "kfp-2041.yaml", requirements=[requirement("Wa", text="Wa 2")])


@pytest.mark.parametrize(
    ("verdict", "values", "next_step", "word"),
    [
        ("conforming", [0.45, 0.50], None, "CONFORMING"),
        ("nonconforming", [0.95, 0.90], None, "NONCONFORMING"),
        (
            "undecided",
            [0.70, 0.85],
            "measure 4 more traces where the highest values are expected",
            "UNDECIDED",
        ),
    ],
)
def test_one_report_per_verdict(files, tmp_path, verdict, values, next_step, word):
    d, profiles = files
    spec = _quick_spec(d)
    result = result_for(
        spec,
        profiles,
        verdict=verdict,
        values=values,
        next_step=next_step,
        reason="more-measurements" if verdict == "undecided" else None,
    )
    info = write_report(
        result, out_path=tmp_path / f"{verdict}.pdf", spec=spec, profile_paths=profiles
    )
    assert headline(info.path) == word
    text = page_text(info.path)
    for v in values:  # every value, 4 significant digits
        assert f"{v:.4f} µm" in text
    assert f"test explanation for a {verdict} requirement" in text
    if next_step:  # the next step is on page 1, next to the verdict
        assert f"Requirement 1 (Ra 0.8): {next_step}" in page_text(info.path, 0).replace("\n", " ")
    assert info.sha256 == hashlib.sha256(info.path.read_bytes()).hexdigest()


def test_unsigned_report_says_not_signed_on_page_one(files, tmp_path):
    d, profiles = files
    spec = _quick_spec(d)
    info = write_report(
        result_for(spec, profiles), out_path=tmp_path / "u.pdf", spec=spec, profile_paths=profiles
    )
    assert not info.signed and info.signer is None
    first = page_text(info.path, 0)
    assert "NOT SIGNED" in first
    assert "applicable standards take precedence over this record" in first.replace("\n", " ")
    text = page_text(info.path)
    for caution in (
        "calibrated",
        "qualified personnel",
        "take precedence",
        "does not replace the inspector's judgement",
        "customer's quality requirements",
    ):
        assert caution in text


def test_signed_report_and_demo_key_label(files, key, tmp_path):
    d, profiles = files
    spec = _quick_spec(d)
    info = write_report(
        result_for(spec, profiles),
        out_path=tmp_path / "s.pdf",
        spec=spec,
        profile_paths=profiles,
        sign_p12=key.p12_path,
        passphrase=PASSPHRASE,
        signer_role="Incoming inspection",
        demo_key=True,
    )
    assert info.signed and info.signer == "Riley Chen"
    first = page_text(info.path, 0)
    assert "DIGITALLY SIGNED (demonstration key)" in first
    assert "Riley Chen (Kestrel Fluid Power), Incoming inspection" in first
    assert "THROWAWAY DEMONSTRATION KEY" in first
    assert key.sha256_fingerprint in page_text(info.path).replace("\n", "")


def test_attachments_exactly_as_read(files, tmp_path):
    d, profiles = files
    spec = _quick_spec(d)
    result = result_for(spec, profiles)
    info = write_report(
        result,
        out_path=tmp_path / "a.pdf",
        spec=spec,
        profile_paths=profiles,
        read_options={"fmt": "csv", "dx": None, "decimal": "."},
    )
    att = read_embedded_files(info.path.read_bytes())
    assert att["kfp-2041.yaml"] == SPEC_YAML
    for p in profiles:
        assert att[p.name] == p.read_bytes()
    back = CheckResult.from_dict(json.loads(att[RESULT_NAME]))
    assert back == result
    manifest = json.loads(att[MANIFEST_NAME])
    assert manifest["read_options"] == {"fmt": "csv", "decimal": "."}
    assert [e["sha256"] for e in manifest["profiles"]] == [m.sha256 for m in result.measurements]


def test_clashing_file_names_are_numbered():
    spec_name, names = attachment_names(
        "/a/spec.yaml", ["/x/seat.csv", "/y/seat.csv", "/z/speccheck-result.json"]
    )
    assert spec_name == "spec.yaml"
    assert names == ["seat.csv", "m2-seat.csv", "m3-speccheck-result.json"]


def test_failed_write_keeps_old_file_and_leaves_nothing(files, key, tmp_path):
    d, profiles = files
    spec = _quick_spec(d)
    out = tmp_path / "old.pdf"
    out.write_bytes(b"previous record")
    with pytest.raises(ReportError, match="cannot open the key: wrong passphrase"):
        write_report(
            result_for(spec, profiles),
            out_path=out,
            spec=spec,
            profile_paths=profiles,
            sign_p12=key.p12_path,
            passphrase=b"wrong-passphrase",
        )
    assert out.read_bytes() == b"previous record"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["old.pdf"]


def test_changed_profile_is_refused(files, tmp_path):
    d, profiles = files
    spec = _quick_spec(d)
    result = result_for(spec, profiles)
    changed = tmp_path / profiles[0].name
    changed.write_bytes(profiles[0].read_bytes() + b"0.0,0.0\n")
    with pytest.raises(ReportError, match=r"the file changed since it was evaluated") as e:
        write_report(
            result, out_path=tmp_path / "x.pdf", spec=spec, profile_paths=[changed, profiles[1]]
        )
    assert e.value.path == str(changed)
    assert not (tmp_path / "x.pdf").exists()


def test_full_report_with_plots_and_features(files, tmp_path):
    d, profiles = files
    spec = spec_for(
        d / "kfp-2041.yaml",
        requirements=[requirement(), requirement("Rk", text="Rk 1.5", upper=1.5)],
    )
    result = result_for(
        spec,
        profiles,
        diagnostics=[
            {
                "message": "a valley that dominates Rv",
                "severity": "warning",
                "features": [
                    {
                        "measurement": 1,
                        "kind": "valley",
                        "x_mm": 3.0,
                        "depth_um": 2.5,
                        "width_um": 6.0,
                    }
                ],
            }
        ],
    )
    info = write_report(result, out_path=tmp_path / "full.pdf", spec=spec, profile_paths=profiles)
    text = page_text(info.path)
    assert "Measurement 2: seat-2.csv" in text
    assert "Isolated features" in text and "3.000 mm" in text and "2.500 µm deep" in text
    assert "Material ratio curve" in text and "Height distribution" in text


# --- view model and formatting -------------------------------------------------------------


@pytest.mark.parametrize(
    ("value", "text"),
    [
        (0.512, "0.5120 µm"),
        (12.5, "12.50 µm"),
        (0.0, "0 µm"),
        (None, "—"),
        (1234.5, "1234 µm"),
        (float("nan"), "—"),
    ],
)
def test_format_number(value, text):
    assert format_number(value, "µm") == text


def test_plain_number_keeps_limits_as_written():
    assert plain_number(0.8, "µm") == "0.8 µm" and plain_number(6.3) == "6.3"


def test_templates_escape_data(files):
    d, profiles = files
    spec = _quick_spec(d)
    result = result_for(spec, profiles)
    result.requirements[0] = replace(result.requirements[0], text="Ra 0.8 <b>bold</b>")
    sig = SignatureView(False, "NOT SIGNED", "—", "not stated", "—", "—", "")
    html = render_html(build_view(result, signature=sig))
    assert "Ra 0.8 &lt;b&gt;bold&lt;/b&gt;" in html and "<b>bold</b>" not in html
    assert '"DejaVu Sans"' in html  # the style sheet itself is not escaped


def test_template_loader():
    assert "<html" in template_text("report.html")
    with pytest.raises(ReportError, match="report template missing"):
        template_text("no-such-template.html")


# --- plots -----------------------------------------------------------------------------------


def test_decimate_keeps_every_extreme():
    rng = np.random.default_rng(7)
    y = rng.normal(size=100_000)
    x = np.arange(y.size) * 0.0005
    xs, ys = P._decimate(x, y, 500)
    assert ys.size == 1000
    assert ys.max() == y.max() and ys.min() == y.min()
    # each column's extremes, against numpy directly
    cols = np.array_split(y, 500)
    assert [c.min() for c in cols[:3]] == list(ys[0:6:2])
    assert [c.max() for c in cols[:3]] == list(ys[1:6:2])


def test_profiles_for_plot_sections_and_rsk(files):
    from speccheck.parameters.conditions import Conditions
    from speccheck.readers import read_profile

    _, profiles = files
    prof = read_profile(profiles[0])
    cond = Conditions(0.8, 2.5)
    ev = profiles_for_plot(prof.z_um, dx_um=prof.dx_um, conditions=cond)
    # ISO 4288:1996: 5 sections of lr = λc = 0.8 mm
    assert np.allclose(np.diff(ev.section_bounds_mm), 0.8, rtol=0, atol=1e-9)
    assert ev.x_mm.size == 5 * 1600
    # Rsk of a sine is 0 (closed form, domain notes 4); whole periods per section
    assert abs(ev.rsk) < 1e-6
    short = profiles_for_plot(prof.z_um[:4000], dx_um=prof.dx_um, conditions=cond)
    assert short is None


def _svg_texts(svg: bytes) -> str:
    root = ET.fromstring(svg)
    return " ".join(t.text or "" for t in root.iter("{http://www.w3.org/2000/svg}text"))


def test_plots_are_svg_with_labels():
    x = np.arange(8000) * 0.0005
    z = np.sin(2 * np.pi * x / 0.05)
    ev = SimpleNamespace(
        x_mm=x,
        primary_um=z + x,
        mean_line_um=x,
        roughness_um=z,
        section_bounds_mm=(0.0, 0.8, 1.6, 2.4, 3.2, 4.0),
    )
    prof = _svg_texts(P.profile_svg(ev, features=[{"x_mm": 2.0, "depth_um": 1.0}]))
    assert "highest peak 1 µm" in prof and "deepest valley -1 µm" in prof
    assert "isolated feature" in prof and "section boundary" in prof
    mr = _svg_texts(P.material_ratio_svg(z, rk=P.RkConstruction(1.2, 0.3, 0.4, 8.0, 90.0)))
    assert "core line, Rk 1.2 µm" in mr and "Rpk 0.3 µm, Mr1 8 %" in mr
    hist = _svg_texts(P.histogram_svg(z, rsk=-0.25))
    assert "Rsk = -0.25" in hist


def _drawn(svg: bytes) -> list[tuple]:
    """Every drawn leaf in document order with the properties in force on it.

    Properties come from the root's attributes, the ``*{...}`` rule, each ancestor's and the
    element's own presentation attributes and ``style`` declarations, in that order (SVG 1.1
    6.4: a ``style`` declaration and the presentation attribute of the same name are
    equivalent; inherited properties pass from a group to its children; a ``*`` rule applies
    to every element and yields to the element's own declarations).
    """
    root = ET.fromstring(svg)
    ns = "{http://www.w3.org/2000/svg}"
    star: dict[str, str] = {}
    for st in root.iter(f"{ns}style"):
        rule = (st.text or "").strip()
        if rule.startswith("*{"):
            star = P._declarations(rule[2:-1])

    def props(el, inherited):
        # a "*" rule reaches every element directly; its own attributes and style beat it
        own = {k: v for k, v in el.attrib.items() if k not in ("style", "id")}
        return {**inherited, **star, **own, **P._declarations(el.get("style", ""))}

    out: list[tuple] = []

    def walk(el, inherited):
        for ch in el:
            if ch.tag in (f"{ns}defs", f"{ns}metadata", f"{ns}clipPath", f"{ns}pattern"):
                continue
            p = props(ch, inherited)
            if ch.tag == f"{ns}g":
                walk(ch, p)
            else:
                out.append((ch.tag, (ch.text or "").strip(), tuple(sorted(p.items()))))

    base = {k: v for k, v in root.attrib.items() if k.startswith("stroke")}
    walk(root, base)
    return out


def test_compacted_svg_draws_the_same(monkeypatch):
    """Fewer nodes, same drawing: every path, marker and text keeps its place and style."""
    x = np.arange(8000) * 0.0005
    z = np.sin(2 * np.pi * x / 0.05)
    ev = SimpleNamespace(
        x_mm=x,
        primary_um=z + x,
        mean_line_um=x,
        roughness_um=z,
        section_bounds_mm=(0.0, 0.8, 1.6, 2.4, 3.2, 4.0),
    )
    makers = [
        lambda: P.profile_svg(ev, features=[{"x_mm": 2.0}]),
        lambda: P.material_ratio_svg(z, rk=P.RkConstruction(1.2, 0.3, 0.4, 8.0, 90.0)),
        lambda: P.histogram_svg(z, rsk=-0.25),
    ]
    for make in makers:
        compact = make()
        monkeypatch.setattr(P, "_compact_svg", lambda svg: svg)
        raw = make()
        monkeypatch.undo()
        assert compact.count(b"<") < raw.count(b"<")
        assert b"style=" not in compact and b"<metadata" not in compact
        root = ET.fromstring(compact)
        bare = [g for g in root.iter("{http://www.w3.org/2000/svg}g") if set(g.attrib) <= {"id"}]
        assert bare == []
        assert _drawn(compact) == _drawn(raw)


def test_render_pdf_attaches_files_exactly(tmp_path):
    """Attachments written with the page content read back byte for byte (pypdf as reader)."""
    from speccheck.report.pdf import EmbeddedFile, render_pdf

    data = bytes(range(256)) * 40
    pdf = render_pdf(
        "<p>x</p>",
        attachments=[EmbeddedFile("trace 1.csv", data), EmbeddedFile("r.json", b"{}\n")],
    )
    assert read_embedded_files(pdf) == {"trace 1.csv": data, "r.json": b"{}\n"}
    with pytest.raises(ReportError, match="not unique"):
        render_pdf("<p>x</p>", attachments=[EmbeddedFile("a", b"1"), EmbeddedFile("a", b"2")])
