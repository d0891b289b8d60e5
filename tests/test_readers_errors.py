"""Bad input files: one line naming the file and the place, exit status 2, no traceback.

Each case runs ``speccheck info FILE`` and checks the exact message (behaviour specified by
speccheck's own error contract, DEVELOPERS.md "Errors from input").
"""

from __future__ import annotations

import hashlib
import io
import zipfile

import pytest
from test_readers import _x3p_bytes, hand_x3p, sdf_text, sine

from speccheck.errors import InputError
from speccheck.readers import read_profile, write_x3p
from speccheck.readers import x3p as x3p_module


def _csv(n=20, step=0.0005):
    return "x [mm],z [um]\n" + "".join(f"{i * step:.4f},{i % 3}\n" for i in range(n))


def check(run_cli, path, expected, *extra):
    status, out, err = run_cli("info", path, *extra)
    assert status == 2
    assert out == ""
    assert err == f"speccheck: error: {path}:{expected}\n"


@pytest.mark.parametrize(
    "content, expected",
    [
        (b"", " file is empty"),
        (b"\n  \n", " file is empty"),
        (b"x [mm],z [um]\n", "1: header but no data rows"),
        (b"# comment: nothing\n", " no header and no data (only comment lines)"),
        (
            _csv().replace("0.0015,0", "0.0015,abc").encode(),
            "5:2: not a number: 'abc'",
        ),
        (
            _csv().replace("0.0015,0", "0.0015,1_0").encode(),
            "5:2: not a number: '1_0'",
        ),
        (
            _csv().replace("0.0015,0", "0.0010,0").encode(),
            "5: x repeats (x = 0.001 mm after 0.001 mm); x must increase at every point",
        ),
        (
            _csv().replace("0.0015,0", "0.0005,0").encode(),
            "5: x goes backwards (x = 0.0005 mm after 0.001 mm); x must increase at every point",
        ),
        (
            _csv().replace("0.0015,0", "0.0016,0").encode(),
            "5: x spacing 0.6 µm differs from the mean spacing 0.5 µm by more than 1%; "
            "speccheck needs uniformly sampled profiles",
        ),
        (_csv(n=15).encode(), "1: only 15 points; a profile needs at least 16"),
        (
            ("x [mm],z [um]\n" + "".join(f"{i * 0.0005:.4f},nan\n" for i in range(20))).encode(),
            "1: all 20 points are invalid (no measured height)",
        ),
        (
            _csv().encode()[:40] + b"\x00\x01\x02" + _csv().encode()[40:],
            "4: binary data (NUL byte) in a text file",
        ),
        (
            b"x [mm],z [um]\n0.0,\xff\xfe\n",
            "2: not UTF-8 text (byte 0xFF); is this a binary file?",
        ),
        (
            _csv().replace("z [um]", "z [furlong]").encode(),
            "1:2: unknown length unit 'furlong' (known: µm, m, mm, um, nm, in, uin)",
        ),
        (
            _csv().replace("z [um]", "z").encode(),
            "1:2: column 'z' has no unit; write e.g. 'z [um]' in the header or 'z=N[um]' with "
            "--columns",
        ),
        (
            _csv().replace("z [um]", "y [um]").encode(),
            "1: no height column in the header; name it 'z [um]' or pick it with --columns z=NAME",
        ),
        (
            _csv().replace("x [mm],z [um]\n", "").encode(),
            "1: no header line; name the columns and their units first, e.g. 'x [mm],z [um]', "
            "or give them with --columns x=1[mm],z=2[um]",
        ),
        (_csv().replace("0.0015,0", "0.0015,0,7").encode(), "5: 3 fields, the header names 2"),
        (
            ("x [mm],z [um]\n" + "".join(f"0,{i:04d},0,5\n" for i in range(20))).encode(),
            "2: 4 fields, the header names 2 "
            "(decimal commas? use ';' between fields and decimal ',')",
        ),
        (
            _csv().replace(",", ";").replace("0.0015;0", "0.0015;0,5").encode(),
            "5:2: decimal comma in '0,5'; read the file with decimal ','",
        ),
    ],
)
def test_bad_text_files(tmp_path, run_cli, content, expected):
    f = tmp_path / "bad.csv"
    f.write_bytes(content)
    check(run_cli, f, expected)


def test_decimal_comma_needs_another_separator(tmp_path, run_cli):
    f = tmp_path / "c.csv"
    f.write_text(_csv())
    check(
        run_cli,
        f,
        "1: with decimal commas the fields must be separated by ';', tab or spaces",
        "--decimal",
        ",",
    )


def test_z_only_needs_dx(tmp_path, run_cli):
    f = tmp_path / "z.txt"
    f.write_text("z [um]\n" + "1\n" * 20)
    check(run_cli, f, "1: the file has no x column; give the sampling spacing, e.g. --dx 0.5um")
    status, _, err = run_cli("info", f, "--dx", "0.5 kg")
    assert status == 2
    assert err == f"speccheck: error: {f}: --dx: unknown length unit 'kg' in '0.5 kg'\n"
    assert err.count("\n") == 1


def test_missing_file_and_unknown_extension(tmp_path, run_cli):
    check(run_cli, tmp_path / "none.csv", " file not found")
    f = tmp_path / "p.xyz"
    f.write_text(_csv())
    check(
        run_cli,
        f,
        " unknown file extension '.xyz' (known: .csv, .tsv, .txt, .dat, .x3p, .sdf); "
        "give the format",
    )


def _x3p_file(tmp_path, data: bytes):
    f = tmp_path / "bad.x3p"
    f.write_bytes(data)
    return f


def test_x3p_not_a_zip(tmp_path, run_cli):
    check(
        run_cli,
        _x3p_file(tmp_path, b"PK not really\n" * 10),
        " not an X3P file (not a ZIP archive)",
    )


def test_x3p_main_xml_checksum_mismatch(tmp_path, run_cli):
    raw = bytes(40)
    xml = hand_x3p(raw)
    f = _x3p_file(tmp_path, _x3p_bytes(xml, {"bindata/data.bin": raw}, md5="0" * 32))
    check(run_cli, f, "md5checksum.hex: MD5 checksum mismatch (main.xml)")


def test_x3p_point_data_checksum_mismatch(tmp_path, run_cli):
    raw = bytes(40)
    xml = hand_x3p(raw, data_md5="f" * 32)
    f = _x3p_file(tmp_path, _x3p_bytes(xml, {"bindata/data.bin": raw}))
    check(run_cli, f, "bindata/data.bin: MD5 checksum mismatch (MD5ChecksumPointData in main.xml)")


def test_x3p_missing_entries(tmp_path, run_cli):
    raw = bytes(40)
    f = _x3p_file(tmp_path, _x3p_bytes(hand_x3p(raw), {}))
    check(run_cli, f, "bindata/data.bin: missing archive entry")
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as zf:
        zf.writestr("readme.txt", "hello")
    check(run_cli, _x3p_file(tmp_path, buf.getvalue()), "main.xml: missing archive entry")


def test_x3p_surface_is_not_a_profile(tmp_path, run_cli):
    raw = bytes(40)
    f = _x3p_file(tmp_path, _x3p_bytes(hand_x3p(raw, feature="SUR"), {"bindata/data.bin": raw}))
    check(
        run_cli,
        f,
        "main.xml Record1/FeatureType: FeatureType is 'SUR'; speccheck reads profiles (PRF)",
    )


def test_x3p_wrong_data_size(tmp_path, run_cli):
    raw = bytes(38)
    f = _x3p_file(tmp_path, _x3p_bytes(hand_x3p(raw), {"bindata/data.bin": raw}))
    check(run_cli, f, "bindata/data.bin: 38 bytes where 20 points of type I need 40")


def test_x3p_entity_expansion_is_refused(tmp_path, run_cli):
    # "Billion laughs": nested entity declarations; defusedxml refuses any entity declaration.
    bomb = (
        '<?xml version="1.0"?>\n<!DOCTYPE ISO5436_2 [<!ENTITY a "aaaaaaaaaa">'
        '<!ENTITY b "&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;">'
        '<!ENTITY c "&b;&b;&b;&b;&b;&b;&b;&b;&b;&b;">]>\n'
        f'<p:ISO5436_2 xmlns:p="{x3p_module.X3P_NAMESPACE}"><Record1>&c;</Record1></p:ISO5436_2>\n'
    )
    f = _x3p_file(tmp_path, _x3p_bytes(bomb, {}))
    check(
        run_cli,
        f,
        "main.xml: main.xml declares XML entities or external references, refused "
        "(EntitiesForbidden)",
    )


def test_x3p_path_traversal_is_refused(tmp_path, run_cli):
    raw = bytes(40)
    data = _x3p_bytes(hand_x3p(raw), {"bindata/data.bin": raw, "../evil": b"x"})
    f = _x3p_file(tmp_path, data)
    check(run_cli, f, "../evil: archive member leaves the archive (unsafe name)")
    assert not (tmp_path.parent / "evil").exists()


def test_x3p_zip_bomb_ratio_is_refused(tmp_path, run_cli):
    zeros = bytes(4 * 1024 * 1024)  # 4 MiB of zeros deflates about 1000 to 1
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", compression=zipfile.ZIP_DEFLATED) as zf:
        zf.writestr("main.xml", "<x/>")
        zf.writestr("bindata/data.bin", zeros)
    f = _x3p_file(tmp_path, buf.getvalue())
    check(run_cli, f, "bindata/data.bin: member compresses more than 100 to 1 (refused as unsafe)")


def test_x3p_uncompressed_size_cap(tmp_path, monkeypatch):
    # The cap is a module constant (512 MiB); lowered here so the test stays small.
    write_x3p(tmp_path / "a.x3p", sine())
    monkeypatch.setattr(x3p_module, "MAX_UNCOMPRESSED_BYTES", 1000)
    with pytest.raises(InputError, match=r"a\.x3p:.*: archive expands to more than 1000 bytes"):
        read_profile(tmp_path / "a.x3p")


def test_x3p_corrupt_member(tmp_path, run_cli):
    write_x3p(tmp_path / "a.x3p", sine())
    data = bytearray((tmp_path / "a.x3p").read_bytes())
    start = data.find(b"bindata/data.bin") + len(b"bindata/data.bin")  # local header, then data
    data[start + 10 : start + 60] = bytes(50)
    f = _x3p_file(tmp_path, bytes(data))
    status, out, err = run_cli("info", f)
    assert status == 2 and err.startswith(
        f"speccheck: error: {f}:bindata/data.bin: corrupt archive entry"
    )
    assert err.count("\n") == 1


def test_sdf_errors(tmp_path, run_cli):
    values = [str(i) for i in range(20)]
    f = tmp_path / "bad.sdf"
    f.write_text(sdf_text(values, n_profiles=3))
    check(run_cli, f, "6: NumProfiles is 3; a profile file has exactly 1")
    f.write_text(sdf_text(values, version="bISO-1.0"))
    check(run_cli, f, "1: Version 'bISO-1.0': only ASCII SDF (Version a...) is supported")
    f.write_text(sdf_text(values[:-1] + ["1.2.3"]))
    check(run_cli, f, "18:5: not a number: '1.2.3'")
    f.write_text(sdf_text(values).replace("NumPoints = 20", "NumPoints = 21"))
    check(run_cli, f, "5: 20 heights where NumPoints is 21")
    f.write_text(sdf_text(values).replace("Zscale = 1e-06\n", ""))
    check(run_cli, f, "header: SDF header lacks Zscale")


def test_nothing_is_written_for_bad_input(tmp_path, run_cli):
    f = tmp_path / "bad.csv"
    f.write_bytes(b"x [mm],z [um]\n")
    before = sorted(p.name for p in tmp_path.iterdir())
    run_cli("info", f)
    assert sorted(p.name for p in tmp_path.iterdir()) == before
    assert f.read_bytes() == b"x [mm],z [um]\n"
    assert hashlib.sha256(f.read_bytes()).hexdigest()  # file intact and readable
