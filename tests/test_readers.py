"""Readers and writers: round trips and hand-written files of each format.

Check values come from closed forms (a sine of known amplitude), exact unit definitions (NIST
SP 811 B.8: 1 in = 25.4 mm), the file layouts of ISO 25178-72 (X3P) and ISO 25178-71 (SDF) as
summarised in the domain notes §7, and reference libraries (hashlib for SHA-256 and MD5).
"""

from __future__ import annotations

import hashlib
import io
import zipfile

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from speccheck.errors import InputError
from speccheck.profile import Profile, SourceInfo
from speccheck.readers import read_profile, write_csv, write_sdf, write_x3p
from speccheck.units import Length

NS = "http://www.opengps.eu/2008/ISO5436_2"


def sine(n=400, dx_um=0.5, amplitude_um=1.25, wavelength_um=80.0, holes=()):
    """z = A sin(2π x / λ): closed form."""
    z = amplitude_um * np.sin(2 * np.pi * np.arange(n) * dx_um / wavelength_um)
    z[list(holes)] = np.nan
    return Profile(
        z_um=z,
        dx_um=dx_um,
        source=SourceInfo(instrument="stylus 2 µm tip", date="2026-11-30", comment="seal seat 0°"),
    )


def test_csv_round_trip_is_bit_exact_with_metadata_and_hash(tmp_path):
    p = sine(holes=(7, 8))
    f = tmp_path / "a.csv"
    write_csv(f, p)
    q = read_profile(f)
    assert np.array_equal(q.z_um, p.z_um, equal_nan=True)
    assert q.dx_um == 0.5 and q.n_invalid == 2
    src = q.source
    assert (src.format, src.instrument, src.date, src.comment) == (
        "csv",
        "stylus 2 µm tip",
        "2026-11-30",
        "seal seat 0°",
    )
    assert src.sha256 == hashlib.sha256(f.read_bytes()).hexdigest()  # reference: hashlib
    assert src.path == str(f)


def _rows(n=40, dx_mm=0.0005):
    x = np.arange(n) * dx_mm
    z = 1.25 * np.sin(2 * np.pi * x / 0.08)
    return x.tolist(), z.tolist()


def test_tsv_and_whitespace_and_dat(tmp_path):
    x, z = _rows()
    body_tab = "x [mm]\tz [um]\n" + "".join(f"{a:.4f}\t{b!r}\n" for a, b in zip(x, z, strict=True))
    body_ws = "x [mm]   z [µm]\n" + "".join(
        f"  {a:.4f}   {b!r}\n" for a, b in zip(x, z, strict=True)
    )
    (tmp_path / "a.tsv").write_text(body_tab)
    (tmp_path / "a.txt").write_text(body_ws)
    (tmp_path / "a.dat").write_text(body_ws)
    for name, fmt in (("a.tsv", "tsv"), ("a.txt", "txt"), ("a.dat", "txt")):
        q = read_profile(tmp_path / name)
        assert q.source.format == fmt
        assert q.dx_um == 0.5
        assert np.array_equal(q.z_um, z)


def test_units_in_header_are_converted_exactly(tmp_path):
    # 1 in = 25 400 µm, 1 µin = 0.0254 µm (NIST SP 811 B.8); 1 nm = 0.001 µm (SI).
    lines = ["x [in],z [uin]"] + [f"{i * 0.0001:.4f},{i % 7}" for i in range(20)]
    (tmp_path / "a.csv").write_text("\n".join(lines) + "\n")
    q = read_profile(tmp_path / "a.csv")
    assert q.dx_um == pytest.approx(2.54, rel=1e-12)
    np.testing.assert_array_equal(q.z_um, np.array([i % 7 for i in range(20)]) * 0.0254)
    lines = ["z (nm)"] + [str(i) for i in range(20)]
    (tmp_path / "b.csv").write_text("\n".join(lines) + "\n")
    q = read_profile(tmp_path / "b.csv", dx=Length.of(2, "um"))
    np.testing.assert_array_equal(q.z_um, np.arange(20) * 1e-3)


def test_z_only_with_dx_text(tmp_path):
    (tmp_path / "z.txt").write_text(
        "# comment: z only\nz [um]\n" + "\n".join(map(str, range(30))) + "\n"
    )
    q = read_profile(tmp_path / "z.txt", dx="0.5um")
    assert q.dx_um == 0.5 and q.n_points == 30 and q.source.comment == "z only"
    assert read_profile(tmp_path / "z.txt", dx="1.5 µm").length_mm == pytest.approx(29 * 1.5e-3)


def test_decimal_comma_with_semicolons_tabs_and_spaces(tmp_path):
    x, z = _rows()
    for sep in (";", "\t", " "):
        text = f"x [mm]{sep}z [um]\n" + "".join(
            f"{a:.4f}{sep}{b:.6f}\n".replace(".", ",") for a, b in zip(x, z, strict=True)
        )
        (tmp_path / "c.csv").write_text(text)
        q = read_profile(tmp_path / "c.csv", decimal=",")
        np.testing.assert_allclose(q.z_um, z, atol=5e-7)  # 6 decimals written
        assert q.dx_um == 0.5


def test_missing_values_become_invalid_points(tmp_path):
    x, z = _rows()
    rows = [f"{a:.4f},{b!r}" for a, b in zip(x, z, strict=True)]
    rows[3] = f"{x[3]:.4f},"
    rows[4] = f"{x[4]:.4f},nan"
    rows[5] = f"{x[5]:.4f},NaN"
    (tmp_path / "m.csv").write_text("x [mm],z [um]\n" + "\n".join(rows) + "\n")
    q = read_profile(tmp_path / "m.csv")
    assert q.n_invalid == 3 and not q.valid[3:6].any() and q.valid[6:].all()


def test_latin1_micro_sign_accepted(tmp_path):
    x, z = _rows()
    text = "x [mm],z [\xb5m]\n" + "".join(f"{a:.4f},{b!r}\n" for a, b in zip(x, z, strict=True))
    (tmp_path / "l.csv").write_bytes(text.encode("latin-1"))
    assert np.array_equal(read_profile(tmp_path / "l.csv").z_um, z)


@pytest.mark.parametrize("inline", [False, True])
def test_x3p_float64_rewrite_is_bit_exact(tmp_path, inline):
    # Heights read from an X3P file are metres × 1e6; writing them again stores the same metres,
    # so write -> read -> write -> read is the identity bit for bit.
    write_x3p(tmp_path / "a.x3p", sine(holes=(3,)), inline=inline)
    first = read_profile(tmp_path / "a.x3p")
    write_x3p(tmp_path / "b.x3p", first, inline=inline)
    second = read_profile(tmp_path / "b.x3p")
    assert np.array_equal(first.z_um, second.z_um, equal_nan=True)
    assert second.dx_um == first.dx_um == 0.5
    assert (second.source.instrument, second.source.comment) == ("stylus 2 µm tip", "seal seat 0°")
    assert second.source.date == "2026-11-30T00:00:00"


def test_x3p_float64_round_trip_within_one_ulp(tmp_path):
    # Heights are stored in metres (ISO 25178-72); µm -> m -> µm cannot be the identity for
    # every float64 (µm values in the top ~5 % of each binade have no exact preimage), so the
    # bound is 1 unit in the last place.
    rng = np.random.default_rng(7)
    p = Profile(z_um=rng.normal(0, 3, 5000), dx_um=0.5)
    write_x3p(tmp_path / "r.x3p", p)
    q = read_profile(tmp_path / "r.x3p")
    np.testing.assert_array_max_ulp(q.z_um, p.z_um, maxulp=1)
    assert np.mean(q.z_um == p.z_um) > 0.9


@pytest.mark.parametrize(
    "dtype, atol_um",
    [
        ("F", None),  # float32: relative 2^-24 (IEEE 754 binary32)
        ("L", 0.0005),  # int32 at 1 nm increment: rounding to half an increment
        ("I", 1.25 / 30000 / 2 * 1.0001),  # int16 at A/30000 increment: half an increment
    ],
)
@pytest.mark.parametrize("inline", [False, True])
def test_x3p_other_dtypes(tmp_path, dtype, atol_um, inline):
    p = sine(holes=(10, 11))
    write_x3p(tmp_path / "d.x3p", p, dtype=dtype, inline=inline)
    q = read_profile(tmp_path / "d.x3p")
    assert q.n_invalid == 2 and not q.valid[10:12].any()
    ok = p.valid
    if atol_um is None:
        np.testing.assert_allclose(q.z_um[ok], p.z_um[ok], rtol=2**-24, atol=1e-12)
    else:
        np.testing.assert_allclose(q.z_um[ok], p.z_um[ok], rtol=0, atol=atol_um)


def _x3p_bytes(main_xml: str, files: dict[str, bytes], *, md5: str | None = None) -> bytes:
    xml = main_xml.encode()
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as zf:
        zf.writestr("main.xml", xml)
        zf.writestr("md5checksum.hex", f"{md5 or hashlib.md5(xml).hexdigest()} *main.xml\n")
        for name, data in files.items():
            zf.writestr(name, data)
    return buf.getvalue()


def hand_x3p(
    values: bytes,
    *,
    dtype="I",
    z_inc="1e-8",
    z_off="2e-7",
    n=20,
    extra_r3="",
    data_md5=None,
    feature="PRF",
    record2="",
):
    """An X3P written from the ISO 25178-72 structure (domain notes §7), not by write_x3p."""
    md5 = data_md5 or hashlib.md5(values).hexdigest()
    xml = f"""<?xml version="1.0" encoding="UTF-8"?>
<p:ISO5436_2 xmlns:p="{NS}">
 <Record1><Revision>ISO5436 - 2000</Revision><FeatureType>{feature}</FeatureType>
  <Axes>
   <CX><AxisType>I</AxisType><DataType>D</DataType><Increment>2e-06</Increment><Offset>0</Offset></CX>
   <CY><AxisType>I</AxisType><DataType>D</DataType><Increment>1</Increment><Offset>0</Offset></CY>
   <CZ><AxisType>A</AxisType><DataType>{dtype}</DataType><Increment>{z_inc}</Increment><Offset>{z_off}</Offset></CZ>
  </Axes></Record1>{record2}
 <Record3><MatrixDimension><SizeX>{n}</SizeX><SizeY>1</SizeY><SizeZ>1</SizeZ></MatrixDimension>
  <DataLink><PointDataLink>bindata/data.bin</PointDataLink>
   <MD5ChecksumPointData>{md5}</MD5ChecksumPointData>{extra_r3}
  </DataLink></Record3>
 <Record4><ChecksumFile>md5checksum.hex</ChecksumFile></Record4>
</p:ISO5436_2>
"""
    return xml


def test_hand_written_x3p_int16_scaled_by_increment_and_offset(tmp_path):
    # Integer Z: metres = value × Increment + Offset (ISO 25178-72; domain notes §7).
    raw = np.arange(-10, 10, dtype="<i2")
    record2 = (
        "<Record2><Date>2026-11-30T08:15:00</Date><Instrument><Manufacturer>Maker"
        "</Manufacturer><Model>P-1</Model><Serial>77</Serial><Version>2</Version></Instrument>"
        "<CalibrationDate>2026-01-01T00:00:00</CalibrationDate><ProbingSystem><Type>Contacting"
        "</Type><Identification>tip 2 um</Identification></ProbingSystem>"
        "<Comment>bore 3 o'clock</Comment></Record2>"
    )
    xml = hand_x3p(raw.tobytes(), record2=record2)
    (tmp_path / "h.x3p").write_bytes(_x3p_bytes(xml, {"bindata/data.bin": raw.tobytes()}))
    q = read_profile(tmp_path / "h.x3p")
    np.testing.assert_allclose(q.z_um, (np.arange(-10, 10) * 1e-8 + 2e-7) * 1e6, rtol=1e-14)
    assert q.dx_um == pytest.approx(2.0, rel=1e-15)
    assert q.source.instrument == "Maker P-1 serial 77 version 2"
    assert (q.source.date, q.source.comment) == ("2026-11-30T08:15:00", "bore 3 o'clock")


def test_hand_written_x3p_valid_bits(tmp_path):
    # valid.bin: one bit per point, first point in the least significant bit (from memory).
    raw = np.arange(20, dtype="<i4")
    valid = np.ones(20, dtype=bool)
    valid[[0, 9, 19]] = False
    vbin = np.packbits(valid, bitorder="little").tobytes()
    extra = (
        f"<ValidPointsLink>bindata/valid.bin</ValidPointsLink>"
        f"<MD5ChecksumValidPoints>{hashlib.md5(vbin).hexdigest()}</MD5ChecksumValidPoints>"
    )
    xml = hand_x3p(raw.tobytes(), dtype="L", extra_r3=extra)
    (tmp_path / "v.x3p").write_bytes(
        _x3p_bytes(xml, {"bindata/data.bin": raw.tobytes(), "bindata/valid.bin": vbin})
    )
    q = read_profile(tmp_path / "v.x3p")
    assert np.array_equal(q.valid, valid)


def test_x3p_float_nan_marks_invalid(tmp_path):
    raw = np.linspace(-1e-6, 1e-6, 20).astype("<f8")
    raw[5] = np.nan
    xml = hand_x3p(raw.tobytes(), dtype="D", z_inc="1", z_off="0")
    (tmp_path / "f.x3p").write_bytes(_x3p_bytes(xml, {"bindata/data.bin": raw.tobytes()}))
    q = read_profile(tmp_path / "f.x3p")
    assert q.n_invalid == 1 and not q.valid[5]
    np.testing.assert_array_equal(q.z_um[q.valid], raw[q.valid] * 1e6)


def sdf_text(values, *, xscale="5e-07", zscale="1e-06", n_profiles=1, version="aISO-1.0"):
    """An ASCII SDF from the ISO 25178-71 layout (domain notes §7)."""
    head = (
        f"Version = {version}\nManufacID = Maker P-1\nCreateDate = 301120260815\n"
        f"ModDate = 301120260815\nNumPoints = {len(values)}\nNumProfiles = {n_profiles}\n"
        f"Xscale = {xscale}\nYscale = 0\nZscale = {zscale}\nZresolution = -1\n"
        "Compression = 0\nDataType = 7\nCheckType = 0\n*\n"
    )
    body = "\n".join(" ".join(values[i : i + 5]) for i in range(0, len(values), 5))
    return head + body + "\n*\nComment = flange face\n*\n"


def test_hand_written_sdf(tmp_path):
    # Height = value × Zscale (m); spacing = Xscale (m) (ISO 25178-71; domain notes §7).
    values = [str(i) for i in range(-10, 10)]
    (tmp_path / "s.sdf").write_text(sdf_text(values, xscale="1.5e-06", zscale="1e-08"))
    q = read_profile(tmp_path / "s.sdf")
    np.testing.assert_allclose(q.z_um, np.arange(-10, 10) * 1e-2, rtol=1e-14)
    assert q.dx_um == pytest.approx(1.5, rel=1e-15)
    assert (q.source.instrument, q.source.date, q.source.comment) == (
        "Maker P-1",
        "2026-11-30T08:15",
        "flange face",
    )


def test_sdf_round_trip_is_bit_exact(tmp_path):
    p = sine(holes=(4,))
    write_sdf(tmp_path / "a.sdf", p)
    q = read_profile(tmp_path / "a.sdf")
    assert np.array_equal(q.z_um, p.z_um, equal_nan=True) and q.dx_um == 0.5


def test_csv_x3p_sdf_forms_give_the_same_heights(tmp_path):
    p = sine(n=1000, holes=(100, 101))
    write_csv(tmp_path / "p.csv", p)
    write_x3p(tmp_path / "p.x3p", p)
    write_sdf(tmp_path / "p.sdf", p)
    a, b, c = (read_profile(tmp_path / f"p.{e}") for e in ("csv", "x3p", "sdf"))
    for q in (b, c):
        assert q.dx_um == pytest.approx(a.dx_um, rel=1e-15)
        # float64 precision: 1 ulp from the metre storage of X3P (see above)
        np.testing.assert_allclose(q.z_um, a.z_um, rtol=2.3e-16, atol=0, equal_nan=True)
        assert np.array_equal(q.valid, a.valid)


def test_format_option_overrides_extension(tmp_path):
    p = sine()
    write_csv(tmp_path / "p.log", p)
    assert np.array_equal(read_profile(tmp_path / "p.log", fmt="csv").z_um, p.z_um)


def test_written_x3p_is_deterministic_and_has_valid_checksums(tmp_path):
    p = sine()
    write_x3p(tmp_path / "1.x3p", p)
    write_x3p(tmp_path / "2.x3p", p)
    data = (tmp_path / "1.x3p").read_bytes()
    assert data == (tmp_path / "2.x3p").read_bytes()
    with zipfile.ZipFile(io.BytesIO(data)) as zf:
        xml = zf.read("main.xml")
        assert zf.read("md5checksum.hex").decode() == f"{hashlib.md5(xml).hexdigest()} *main.xml\n"
        assert hashlib.md5(zf.read("bindata/data.bin")).hexdigest().encode() in xml


def test_comments_and_blank_lines_between_rows(tmp_path):
    # Slow path: a comment and a blank line inside the data keep the line numbers right.
    x, z = _rows(n=30)
    rows = [f"{a:.4f},{b!r}" for a, b in zip(x, z, strict=True)]
    rows[10:10] = ["# comment: moved probe", ""]
    (tmp_path / "k.csv").write_text("x [mm],z [um]\n" + "\n".join(rows) + "\n\n")
    q = read_profile(tmp_path / "k.csv")
    assert np.array_equal(q.z_um, z) and q.source.comment == "moved probe"
    rows[20] = rows[20].replace(",", ",x")
    (tmp_path / "k.csv").write_text("x [mm],z [um]\n" + "\n".join(rows) + "\n")
    with pytest.raises(InputError, match=r"k\.csv:22:2: not a number: 'x"):
        read_profile(tmp_path / "k.csv")


finite_heights = st.lists(
    st.floats(min_value=-1e4, max_value=1e4, allow_nan=False, allow_subnormal=False),
    min_size=16,
    max_size=60,
)


@settings(max_examples=40, deadline=None)
@given(z=finite_heights, dx=st.sampled_from([0.1, 0.5, 1.5, 2.54, 10.0]))
def test_round_trips_for_any_heights(tmp_path_factory, z, dx):
    # Property: text forms are bit-exact (shortest repr of IEEE 754 doubles reads back exactly);
    # X3P stores metres: within 1 ulp (see test_x3p_float64_round_trip_within_one_ulp), and
    # heights below ~1e-290 µm turn subnormal in metres, hence atol 1e-12 µm (1e-18 m, far
    # below any instrument's resolution).
    folder = tmp_path_factory.mktemp("rt")
    p = Profile(z_um=np.array(z), dx_um=dx)
    write_csv(folder / "p.csv", p)
    write_sdf(folder / "p.sdf", p)
    write_x3p(folder / "p.x3p", p)
    for ext in ("csv", "sdf"):
        q = read_profile(folder / f"p.{ext}")
        assert np.array_equal(q.z_um, p.z_um), ext
        assert q.dx_um == pytest.approx(dx, rel=1e-9)
    x3p = read_profile(folder / "p.x3p").z_um
    np.testing.assert_allclose(x3p, p.z_um, rtol=2.3e-16, atol=1e-12)
