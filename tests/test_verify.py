"""Verification of conformance records: signature, coverage, trust and recomputation.

The records are made by the real evaluator from sine profiles (Ra of a sine = 2A/π, domain notes
section 4, [calc]); the expected verdicts follow from that closed form and the 16 % rule (ISO
4288:1996 5.2: accept when the first value is ≤ 70 % of the limit).
"""

from __future__ import annotations

import json
import math
import textwrap
from io import BytesIO
from pathlib import Path

import numpy as np
import pytest

from speccheck.cli.main import main
from speccheck.errors import ReportError
from speccheck.evaluation.evaluator import evaluate_files
from speccheck.profile import Profile
from speccheck.readers.delimited import write_csv
from speccheck.report import new_key, sign_pdf, verify_report, write_report
from speccheck.report.pdf import EmbeddedFile, embed_files, read_embedded_files, render_pdf
from speccheck.report.verify import compare_results
from speccheck.report.writer import MANIFEST_NAME, RESULT_NAME
from speccheck.spec.loader import load_spec

PASS = b"kestrel-verify-pass"
DX_UM = 0.5
WAVELENGTH_UM = 50.0


def sine_profile(path: Path, ra_um: float, points: int = 12000) -> Path:
    """Sine with Ra = ra_um: amplitude A = Ra·π/2 (Ra = 2A/π for a sine)."""
    x_um = np.arange(points) * DX_UM
    z = ra_um * math.pi / 2 * np.sin(2 * np.pi * x_um / WAVELENGTH_UM)
    write_csv(path, Profile(z, DX_UM))
    return path


@pytest.fixture(scope="module")
def world(tmp_path_factory):
    """Spec, three profiles, two keys, a signed record and an unsigned one (made once)."""
    d = tmp_path_factory.mktemp("verify")
    spec = d / "kfp-2041.yaml"
    spec.write_text(
        textwrap.dedent("""\
        spec_version: 1
        part: {number: KFP-2041, revision: C, surface: seal seat}
        requirements:
          - "Ra 0.8"
        """),
        encoding="utf-8",
    )
    profiles = [sine_profile(d / f"m{i}.csv", ra) for i, ra in enumerate((0.40, 0.45, 0.50), 1)]
    other = sine_profile(d / "other.csv", 0.95)
    key = new_key(
        d / "inspector.p12",
        name="Dana Whitfield",
        organisation="Kestrel Fluid Power",
        passphrase=PASS,
    )
    stranger = new_key(d / "stranger.p12", name="Someone Else", passphrase=PASS)
    result = evaluate_files(spec, profiles)
    loaded = load_spec(spec)
    signed = write_report(
        result,
        out_path=d / "signed.pdf",
        spec=loaded,
        profile_paths=profiles,
        sign_p12=key.p12_path,
        passphrase=PASS,
        signer_role="Incoming inspection",
    )
    unsigned = write_report(
        result, out_path=d / "unsigned.pdf", spec=loaded, profile_paths=profiles
    )
    return dict(
        d=d,
        spec=spec,
        profiles=profiles,
        other=other,
        key=key,
        stranger=stranger,
        result=result,
        signed=signed.path,
        unsigned=unsigned.path,
    )


def test_genuine_record_verifies_with_and_without_trust(world):
    r = verify_report(world["signed"], trust=[world["key"].pem_path])
    assert r.ok and r.equal and r.differences == [] and r.problems == []
    assert r.signature.intact and r.signature.whole_file and r.signature.trusted is True
    assert "Dana Whitfield" in r.signature.signer
    assert r.recorded_verdict == r.recomputed_verdict == "conforming"
    untrusted = verify_report(world["signed"])
    assert untrusted.ok and untrusted.signature.trusted is None
    assert any(
        w.startswith("signer's identity unproven: no --trust given") for w in untrusted.warnings
    )


def test_cli_exit_statuses(world, capsys):
    assert main(["verify", str(world["signed"]), "--trust", str(world["key"].pem_path)]) == 0
    out = capsys.readouterr().out
    assert out.rstrip().endswith("VERIFIED") and "trusted (chains to a --trust certificate)" in out
    assert main(["verify", str(world["signed"])]) == 0
    out = capsys.readouterr().out
    assert "warning:       signer's identity unproven: no --trust given" in out
    # a certificate that is not the signer's: untrusted is a failure once --trust is given
    assert main(["verify", str(world["signed"]), "--trust", str(world["stranger"].pem_path)]) == 1
    out = capsys.readouterr().out
    assert "NOT VERIFIED" in out and "does not match any --trust certificate" in out
    assert main(["verify", str(world["signed"]), "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["ok"] is True


def test_unsigned_record_fails_but_recomputes(world, capsys):
    r = verify_report(world["unsigned"])
    assert not r.ok and r.equal and not r.signature.present
    assert "the record is not signed" in r.problems
    assert main(["verify", str(world["unsigned"])]) == 1
    assert "signature:     none" in capsys.readouterr().out


def _flip_inside_signed_range(data: bytes) -> bytes:
    """Flip one bit of the first page content stream: inside /ByteRange, still a parsable PDF."""
    start = data.index(b"stream\n", data.index(b"/Contents")) + len(b"stream\n")
    b = bytearray(data)
    b[start + 10] ^= 0x01
    return bytes(b)


def test_flipped_byte_in_signed_range_fails(world, tmp_path, capsys):
    bad = tmp_path / "flipped.pdf"
    bad.write_bytes(_flip_inside_signed_range(world["signed"].read_bytes()))
    r = verify_report(bad, trust=[world["key"].pem_path])
    assert not r.ok and not r.signature.intact
    assert main(["verify", str(bad)]) == 1
    assert "NOT VERIFIED" in capsys.readouterr().out


def test_incremental_update_after_signing_fails(world, tmp_path):
    """Append a replaced profile as an incremental update: the signature no longer covers it."""
    from pyhanko.pdf_utils import embed
    from pyhanko.pdf_utils.incremental_writer import IncrementalPdfFileWriter

    w = IncrementalPdfFileWriter(BytesIO(world["signed"].read_bytes()), strict=False)
    data = world["other"].read_bytes()
    ef = embed.EmbeddedFileObject.from_file_data(w, data)
    embed.embed_file(
        w, embed.FileSpec(file_spec_string="m2.csv", file_name="m2.csv", embedded_data=ef)
    )
    out = BytesIO()
    w.write(out)
    bad = tmp_path / "appended.pdf"
    bad.write_bytes(out.getvalue())
    r = verify_report(bad, trust=[world["key"].pem_path])
    assert not r.ok
    assert r.signature.intact and not r.signature.whole_file
    assert any("added after the signature" in p for p in r.problems)


def _rebuilt_with(record: Path, replace: dict[str, bytes]) -> bytes:
    """The record's pages with its attachments re-embedded, some replaced (an unsigned copy)."""
    from pypdf import PdfReader, PdfWriter

    files = read_embedded_files(record.read_bytes())
    w = PdfWriter()
    for page in PdfReader(record).pages:
        w.add_page(page)
    buf = BytesIO()
    w.write(buf)
    return embed_files(
        buf.getvalue(), [EmbeddedFile(n, replace.get(n, b)) for n, b in files.items()]
    )


def test_replaced_profile_resigned_fails_recomputation(world, tmp_path, capsys):
    """A different profile under the old name, signed with the genuine key: hashes and the
    recomputed result disagree with the recorded result."""
    pdf = _rebuilt_with(world["unsigned"], {"m1.csv": world["other"].read_bytes()})
    resigned = sign_pdf(pdf, p12_path=world["key"].p12_path, passphrase=PASS)
    bad = tmp_path / "resigned.pdf"
    bad.write_bytes(resigned)
    r = verify_report(bad, trust=[world["key"].pem_path])
    assert r.signature.intact and r.signature.whole_file and r.signature.trusted
    assert not r.ok and not r.equal
    assert any("m1.csv (measurement 1) is not the one evaluated" in p for p in r.problems)
    # Ra of the replacement is 0.95 µm > 0.8 µm: the first value no longer decides at step 1
    # (ISO 4288 5.2), so the recomputed verdict changes
    assert r.recomputed_verdict != "conforming"
    assert any(d.startswith("measurements[0].sha256") for d in r.differences)
    assert main(["verify", str(bad)]) == 1
    out = capsys.readouterr().out
    assert "DIFFERS from the record" in out and "  differs: " in out


def test_edited_result_fails_recomputation(world, tmp_path):
    """The recorded result edited (a value lowered), everything else genuine."""
    files = read_embedded_files(world["unsigned"].read_bytes())
    res = json.loads(files[RESULT_NAME])
    res["requirements"][0]["values"][2]["value"] = 0.1
    pdf = _rebuilt_with(world["unsigned"], {RESULT_NAME: json.dumps(res).encode()})
    bad = tmp_path / "edited.pdf"
    bad.write_bytes(sign_pdf(pdf, p12_path=world["key"].p12_path, passphrase=PASS))
    r = verify_report(bad)
    assert not r.ok
    assert r.differences[0].startswith("requirements[0].values[2].value: recorded 0.1")


def test_not_a_pdf_and_not_a_record_exit_2(world, tmp_path, capsys):
    assert main(["verify", str(world["spec"])]) == 2
    assert capsys.readouterr().err == (
        f"speccheck: error: {world['spec']}:byte 0: not a PDF file (no %PDF- header)\n"
    )
    plain = tmp_path / "plain.pdf"
    plain.write_bytes(render_pdf("<p>KFP-1187 flange drawing notes</p>"))
    assert main(["verify", str(plain)]) == 2
    assert capsys.readouterr().err == (
        f"speccheck: error: {plain}: not a speccheck conformance record (no attached result "
        "and manifest)\n"
    )
    missing = tmp_path / "nope.pdf"
    with pytest.raises(ReportError, match="file not found"):
        verify_report(missing)


def test_bad_trust_certificate_exit_2(world, capsys):
    assert main(["verify", str(world["signed"]), "--trust", str(world["spec"])]) == 2
    err = capsys.readouterr().err
    assert err.startswith(f"speccheck: error: {world['spec']}: cannot read the certificate")
    assert err.count("\n") == 1


def test_manifest_names_every_attachment(world):
    files = read_embedded_files(world["signed"].read_bytes())
    manifest = json.loads(files[MANIFEST_NAME])
    assert manifest["spec"]["name"] == "kfp-2041.yaml"
    assert [p["name"] for p in manifest["profiles"]] == ["m1.csv", "m2.csv", "m3.csv"]


# compare_results: the tolerance stated in speccheck.report.verify (relative 1e-9)
@pytest.mark.parametrize(
    ("a", "b", "equal"),
    [
        (0.5, 0.5, True),
        (0.5, 0.5 * (1 + 5e-10), True),  # inside 1e-9 relative
        (0.5, 0.5 * (1 + 2e-9), False),  # outside
        (0.0, 1e-13, True),  # absolute 1e-12 near zero (e.g. Rsk of a symmetric profile)
        (0.0, 1e-11, False),
        ("within", "exceeding", False),
        (True, 1, False),
    ],
)
def test_compare_tolerance(a, b, equal):
    assert (compare_results({"v": a}, {"v": b}) == []) is equal


def test_compare_reports_places():
    diffs = compare_results(
        {"r": [{"v": 1.0}, {"v": 2.0}], "x": 1}, {"r": [{"v": 1.0}, {"v": 3.0}], "y": 1}
    )
    assert diffs == [
        "r[1].v: recorded 2.0, recomputed 3.0",
        "x: recorded 1, missing on recomputation",
        "y: not recorded, recomputed 1",
    ]
