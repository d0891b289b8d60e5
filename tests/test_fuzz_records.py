"""Fuzzing record verification: a genuine signed record mutated byte by byte, and rebuilt with
hostile attachments (JSON of any shape, renamed or missing files). The contract
(_fuzz.holds_contract) is a verification outcome or the project's report error naming the
file. Verifying recomputes the result, so this target runs a tenth of the budget."""

from __future__ import annotations

import json
import tempfile
from pathlib import Path

import numpy as np
import pytest
from _fuzz import EXAMPLES, FUZZ, holds_contract, hostile_file, mutated
from hypothesis import given, settings
from hypothesis import strategies as st

from speccheck.evaluation.evaluator import evaluate_files
from speccheck.profile import Profile
from speccheck.readers import write_csv
from speccheck.report import new_key, verify_report, write_report
from speccheck.report.pdf import EmbeddedFile, embed_files, read_embedded_files, render_pdf
from speccheck.spec.loader import load_spec

PASS = b"kestrel-fuzz-pass"
SPEC = b'spec_version: 1\npart: {number: KFP-2041, revision: C, surface: seal seat}\n' \
       b'measurement: {ls: none}\nrequirements:\n  - "Ra 0.8"\n'  # fmt: skip


@pytest.fixture(scope="module")
def record() -> tuple[bytes, dict[str, bytes]]:
    """A genuine signed record of a sine (Ra = 2A/π) and its attachments."""
    with tempfile.TemporaryDirectory() as d:
        d = Path(d)
        (d / "spec.yaml").write_bytes(SPEC)
        x_um = np.arange(11201) * 0.5
        write_csv(d / "p.csv", Profile(0.5 * np.sin(2 * np.pi * x_um / 50.0), 0.5))
        key = new_key(d / "k.p12", name="Dana Whitfield", passphrase=PASS)
        result = evaluate_files(d / "spec.yaml", [d / "p.csv"])
        pdf = write_report(
            result,
            out_path=d / "r.pdf",
            spec=load_spec(d / "spec.yaml"),
            profile_paths=[d / "p.csv"],
            sign_p12=key.p12_path,
            passphrase=PASS,
        ).path.read_bytes()
    return pdf, read_embedded_files(pdf)


JSON = st.recursive(
    st.one_of(st.none(), st.booleans(), st.integers(), st.floats(), st.text(max_size=12)),
    lambda inner: st.one_of(
        st.lists(inner, max_size=3), st.dictionaries(st.text(max_size=10), inner, max_size=4)
    ),
    max_leaves=10,
)
RECORD_FUZZ = settings(FUZZ, max_examples=max(EXAMPLES // 10, 8))


@st.composite
def edits(draw: st.DrawFn, files: dict[str, bytes]) -> dict[str, bytes | None]:
    """Attachments replaced by JSON of any shape, one field of the genuine JSON replaced, or
    removed; possibly an extra one."""
    out: dict[str, bytes | None] = {}
    for name in draw(st.sets(st.sampled_from(sorted(files)), min_size=1, max_size=2)):
        how = draw(st.sampled_from(["json", "field", "remove", "bytes"]))
        if how == "json":
            out[name] = json.dumps(draw(JSON)).encode()
        elif how == "field" and name.endswith(".json"):
            doc = json.loads(files[name])
            doc[draw(st.sampled_from(sorted(doc)))] = draw(JSON)
            out[name] = json.dumps(doc).encode()
        elif how == "remove":
            out[name] = None
        else:
            out[name] = draw(mutated(files[name]))
    if draw(st.booleans()):
        out[draw(st.text(min_size=1, max_size=12))] = draw(st.binary(max_size=32))
    return out


@RECORD_FUZZ
@given(data=st.data())
def test_record_verification_holds_the_contract(record, data):
    pdf, files = record
    if data.draw(st.booleans(), label="bytes or attachments"):
        case = data.draw(mutated(pdf), label="mutated PDF")
    else:
        changes = data.draw(edits(files), label="attachments")
        kept = {**files, **changes}
        case = embed_files(
            render_pdf("<p>KFP-2041 record</p>"),
            [EmbeddedFile(k, v) for k, v in kept.items() if v is not None],
        )
    with hostile_file("record.pdf", case) as p:
        holds_contract("record", p, verify_report)
