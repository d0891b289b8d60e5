"""Bounded resources: special files refused before they are opened, sizes checked before
reading or decompressing, the X3P checksum verified before main.xml is parsed, and memory held
within the budget stated in the README (the reader run in a subprocess under
``resource.setrlimit``).

Budgets are ours (README "Reading profiles"); the X3P structure is ISO 25178-72 (domain notes
§7), the ZIP directory's uncompressed sizes are PKWARE APPNOTE 4.3.12 (from memory).
"""

from __future__ import annotations

import hashlib
import io
import os
import resource
import zipfile

import numpy as np
import pytest
from _contract import assert_refused, fingerprint, run_speccheck
from test_readers import _x3p_bytes, hand_x3p

from speccheck.readers import MAX_MAIN_XML_BYTES, MAX_POINTS


def _int16(n=20):
    return (np.arange(n, dtype="<i2") - n // 2).tobytes()


def test_a_fifo_is_refused_without_opening_it(tmp_path):
    # Opening a FIFO for reading blocks until a writer appears; the run must not hang.
    fifo = tmp_path / "p.csv"
    os.mkfifo(fifo)
    status, _, err = run_speccheck(["info", fifo], timeout=30)
    assert "FIFO" in assert_refused(status, err, [fifo])


def test_a_device_is_refused_before_reading(tmp_path):
    # /dev/zero never ends: reading it would grow until memory runs out.
    status, _, err = run_speccheck(["info", "/dev/zero", "--format", "csv"], timeout=30)
    assert "device" in assert_refused(status, err, ["/dev/zero"])


def test_a_folder_is_refused(tmp_path):
    folder = tmp_path / "p.csv"
    folder.mkdir()
    status, _, err = run_speccheck(["info", folder])
    assert "is a folder" in assert_refused(status, err, [folder])


def test_x3p_checksum_is_verified_before_main_xml_is_parsed(tmp_path, monkeypatch):
    # main.xml that is not even XML but whose checksum does not match: refused for the
    # checksum, proving the parser never saw it.
    bad_xml = "<not xml" * 100
    f = tmp_path / "p.x3p"
    f.write_bytes(_x3p_bytes(bad_xml, {}, md5="0" * 32))
    import speccheck.readers.x3p as x3p

    parsed = []
    monkeypatch.setattr(x3p, "_parse_xml", lambda *a: parsed.append(a))
    from speccheck.errors import InputError
    from speccheck.readers import read_profile

    with pytest.raises(InputError) as info:
        read_profile(f)
    assert info.value.where == "md5checksum.hex" and "MD5 checksum mismatch" in info.value.message
    assert parsed == []


def test_x3p_main_xml_size_is_checked_before_decompressing(tmp_path):
    # A main.xml of MAX_MAIN_XML_BYTES + 1 bytes, stored: its size is in the ZIP directory, so
    # it is refused without being read (compressed, the ratio check refuses it first).
    xml = hand_x3p(_int16(), z_inc="1e-8", z_off="0")
    xml = xml.replace("</p:ISO5436_2>", " " * (MAX_MAIN_XML_BYTES + 1) + "</p:ISO5436_2>")
    f = tmp_path / "big.x3p"
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_STORED) as zf:
        zf.writestr("main.xml", xml)
        zf.writestr("md5checksum.hex", hashlib.md5(xml.encode()).hexdigest() + " *main.xml\n")
    f.write_bytes(buf.getvalue())
    status, _, err = run_speccheck(["info", f])
    line = assert_refused(status, err, [f"{f}:main.xml"])
    assert f"more than the {MAX_MAIN_XML_BYTES} bytes allowed" in line


def test_x3p_point_count_beyond_the_budget_is_refused_before_reading(tmp_path):
    xml = hand_x3p(_int16(), z_inc="1e-8", z_off="0", n=MAX_POINTS + 1)
    f = tmp_path / "p.x3p"
    f.write_bytes(_x3p_bytes(xml, {"bindata/data.bin": _int16()}))
    status, _, err = run_speccheck(["info", f])
    line = assert_refused(status, err, [f"{f}:main.xml Record3/MatrixDimension/SizeX"])
    assert f"at most {MAX_POINTS} points" in line


def test_sdf_point_count_beyond_the_budget_is_refused(tmp_path):
    from test_readers import sdf_text

    text = sdf_text([str(i) for i in range(20)]).replace(
        "NumPoints = 20", f"NumPoints = {MAX_POINTS + 1}"
    )
    f = tmp_path / "p.sdf"
    f.write_text(text, encoding="utf-8")
    status, _, err = run_speccheck(["info", f])
    assert f"outside 1 .. {MAX_POINTS} points" in assert_refused(status, err, [f"{f}:5:"])


def test_csv_line_count_beyond_the_budget_is_refused_before_parsing(tmp_path):
    # MAX_POINTS + 2 one-character lines: about 40 MB of text that would become 320 MB of
    # float64 and far more as Python objects; refused by counting line breaks.
    f = tmp_path / "p.txt"
    with open(f, "wb") as out:
        out.write(b"z [um]\n")
        out.write(b"1\n" * (MAX_POINTS + 2))
    before = fingerprint([f])
    status, _, err = run_speccheck(["info", f, "--dx", "0.5um"])
    assert f"at most {MAX_POINTS} points" in assert_refused(status, err, [f"{f}:1:"])
    assert fingerprint([f]) == before


# --- memory -------------------------------------------------------------------------------------

N_POINTS = 2_000_000
# Address space the interpreter, numpy and speccheck's imports take before any file is read
# (measured: about 110 MiB on CPython 3.11 + numpy 2), with headroom, plus the README budget
# for reading: the file's size plus 64 bytes per point.
BASE_BYTES = 256 << 20
READ_BYTES_PER_POINT = 64


def _limits(file_bytes: int) -> dict[int, int]:
    limit = BASE_BYTES + file_bytes + READ_BYTES_PER_POINT * N_POINTS
    return {resource.RLIMIT_AS: limit}


@pytest.fixture(scope="module")
def big_csv(tmp_path_factory):
    f = tmp_path_factory.mktemp("big") / "p.csv"
    rng = np.random.default_rng(11)
    z = np.round(0.5 * np.sin(np.arange(N_POINTS) * 0.01) + rng.normal(0, 0.05, N_POINTS), 5)
    x = np.arange(N_POINTS) * 0.0005
    with open(f, "w", encoding="utf-8") as out:
        out.write("# comment: memory budget\nx [mm],z [µm]\n")
        np.savetxt(out, np.column_stack([x, z]), fmt="%.4f,%.5f")
    return f


def test_a_large_csv_is_read_within_the_memory_budget(big_csv):
    env = {"OPENBLAS_NUM_THREADS": "1", "OMP_NUM_THREADS": "1"}
    status, out, err = run_speccheck(
        ["info", big_csv], env=env, limits=_limits(big_csv.stat().st_size)
    )
    assert status == 0, err
    assert f"{N_POINTS}" in out.replace(",", "").replace(" ", "")


def test_a_large_csv_with_a_comment_inside_is_read_within_the_memory_budget(tmp_path, big_csv):
    # A comment line in the data sends the reader row by row: still one array, no list of rows.
    f = tmp_path / "c.csv"
    data = big_csv.read_bytes()
    cut = data.index(b"\n", len(data) // 2) + 1
    f.write_bytes(data[:cut] + b"# operator changed\n" + data[cut:])
    del data
    env = {"OPENBLAS_NUM_THREADS": "1", "OMP_NUM_THREADS": "1"}
    status, _, err = run_speccheck(
        ["info", f], env=env, limits=_limits(f.stat().st_size), timeout=300
    )
    assert status == 0, err


def test_running_out_of_memory_is_an_error_naming_the_file(big_csv):
    # Below the budget the read fails: one line naming the file, exit 2, never "internal error".
    # 120 MiB covers the imports (about 110 MiB measured), the file's bytes fit, the array not.
    env = {"OPENBLAS_NUM_THREADS": "1", "OMP_NUM_THREADS": "1"}
    limits = {resource.RLIMIT_AS: (120 << 20) + big_csv.stat().st_size}
    status, _, err = run_speccheck(["info", big_csv], env=env, limits=limits)
    assert "not enough memory to read this file" in assert_refused(status, err, [big_csv])
