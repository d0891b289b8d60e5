"""Fuzzing the profile readers: delimited text, X3P and SDF.

Each case is a file built from a strategy or mutated from a genuine file written by our own
writers; the contract (_fuzz.holds_contract) is a Profile or the project's input error naming
the file, nothing else, no warning, the input unchanged. Budget: see tests/_fuzz.py.
"""

from __future__ import annotations

import hashlib
import io
import zipfile

import numpy as np
from _fuzz import FUZZ, NUMBER_TEXT, holds_contract, hostile_file, mutated
from hypothesis import given
from hypothesis import strategies as st

from speccheck.profile import Profile
from speccheck.readers import read_profile, write_sdf, write_x3p


def _seed_profile() -> Profile:
    x = np.arange(400) * 0.5
    return Profile(0.4 * np.sin(2 * np.pi * x / 40.0), 0.5)


def _seed_csv() -> bytes:
    x = np.arange(400) * 0.5
    z = 0.4 * np.sin(2 * np.pi * x / 40.0)
    rows = "\n".join(f"{i * 0.0005:.4f},{v:.5f}" for i, v in enumerate(z))
    return ("# KFP-2041 seal seat, trace 1\nx [mm],z [um]\n" + rows + "\n").encode()


SEED_CSV = _seed_csv()


@st.composite
def delimited_text(draw: st.DrawFn) -> bytes:
    """A header (or none), rows of number-like text, mixed separators and line ends."""
    sep = draw(st.sampled_from([",", ";", "\t", " ", "  "]))
    header = draw(
        st.sampled_from(
            ["", "x,z\n", "x [mm];z [um]\n", "z\n", "x\tz\tflag\n", "# c\n\n", "z [nm]\n"]
        )
    )
    rows = draw(st.lists(st.lists(NUMBER_TEXT, min_size=1, max_size=4), min_size=0, max_size=300))
    end = draw(st.sampled_from(["\n", "\r\n", "\r"]))
    text = header + end.join(sep.join(r) for r in rows)
    return text.encode(draw(st.sampled_from(["utf-8", "utf-16", "latin-1"])), "replace")


@FUZZ
@given(data=st.one_of(delimited_text(), mutated(SEED_CSV)), dx=st.sampled_from([None, "0.5um"]))
def test_delimited_reader_holds_the_contract(data, dx):
    with hostile_file("trace.csv", data) as p:
        holds_contract("delimited", p, lambda q: read_profile(q, dx=dx))


def _x3p_archive(main_xml: bytes, data_bin: bytes) -> bytes:
    """An X3P zip with a correct md5checksum.hex, so the case reaches the parser."""
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as z:
        z.writestr("main.xml", main_xml)
        z.writestr("md5checksum.hex", hashlib.md5(main_xml).hexdigest() + " *main.xml\n")
        z.writestr("bindata/data.bin", data_bin)
    return buf.getvalue()


def _seed_x3p() -> tuple[bytes, bytes, bytes]:
    import tempfile
    from pathlib import Path

    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "seed.x3p"
        write_x3p(p, _seed_profile())
        raw = p.read_bytes()
    z = zipfile.ZipFile(io.BytesIO(raw))
    return raw, z.read("main.xml"), z.read("bindata/data.bin")


SEED_X3P, SEED_MAIN_XML, SEED_BIN = _seed_x3p()
X3P_VALUES = st.one_of(
    NUMBER_TEXT, st.sampled_from(["D", "F", "I", "L", "A", "I ", "PRF", "SUR", "PCL", "-1"])
)


@st.composite
def x3p_edited(draw: st.DrawFn) -> bytes:
    """The genuine main.xml with element texts replaced, the checksum kept right."""
    import re

    xml = SEED_MAIN_XML.decode()
    texts = list(re.finditer(r">([^<>]+)<", xml))
    for _ in range(draw(st.integers(1, 4))):
        m = draw(st.sampled_from(texts))
        xml = xml.replace(m.group(0), f">{draw(X3P_VALUES)}<", 1)
    data_bin = draw(st.one_of(st.just(SEED_BIN), mutated(SEED_BIN), st.binary(max_size=64)))
    return _x3p_archive(xml.encode("utf-8", "replace"), data_bin)


@FUZZ
@given(data=st.one_of(x3p_edited(), mutated(SEED_X3P)))
def test_x3p_reader_holds_the_contract(data):
    with hostile_file("trace.x3p", data) as p:
        holds_contract("x3p", p, read_profile)


def _seed_sdf() -> bytes:
    import tempfile
    from pathlib import Path

    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "seed.sdf"
        write_sdf(p, _seed_profile())
        return p.read_bytes()


SEED_SDF = _seed_sdf()
SDF_KEYS = "Version NumPoints NumProfiles Xscale Yscale Zscale Zresolution Compression DataType \
CheckType ManufacID CreateDate ModDate".split()


@st.composite
def sdf_edited(draw: st.DrawFn) -> bytes:
    """The genuine header with values replaced, keys dropped or repeated; heights as drawn."""
    head, _, body = SEED_SDF.decode().partition("*")
    lines = head.splitlines()
    for _ in range(draw(st.integers(1, 4))):
        key = draw(st.sampled_from(SDF_KEYS))
        action = draw(st.sampled_from(["set", "drop", "repeat"]))
        value = draw(X3P_VALUES)
        if action == "drop":
            lines = [ln for ln in lines if not ln.startswith(key)]
        elif action == "repeat":
            lines.append(f"{key} = {value}")
        else:
            lines = [f"{key} = {value}" if ln.startswith(key) else ln for ln in lines]
    if draw(st.booleans()):
        body = "\n" + "\n".join(draw(st.lists(NUMBER_TEXT, max_size=500))) + "\n"
    return ("\n".join(lines) + "\n*" + body).encode("utf-8", "replace")


@FUZZ
@given(data=st.one_of(sdf_edited(), mutated(SEED_SDF)))
def test_sdf_reader_holds_the_contract(data):
    with hostile_file("trace.sdf", data) as p:
        holds_contract("sdf", p, read_profile)
