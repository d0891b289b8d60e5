"""ISO 25178-72 X3P files holding a profile (FeatureType PRF): reader and writer.

An X3P file is a ZIP archive with ``main.xml`` (ISO5436_2 document), ``md5checksum.hex`` (MD5 of
main.xml) and, for binary data, ``bindata/data.bin`` (+ optional ``bindata/valid.bin``). Units
are metres, numbers little-endian. speccheck reads profiles (N × 1 × 1) with an incremental X
axis; Z data types I (int16), L (int32), F (float32), D (float64). Integer Z is scaled by the Z
axis Increment and Offset; float Z too when they differ from 1 and 0 (from memory: files
normally carry 1 and 0 for float types). NaN (float types) or a cleared bit in valid.bin marks
an invalid point. Both MD5 checksums are checked.

Safety: main.xml is parsed with defusedxml (no DTD entities, no external references); archive
member names that leave the archive (``..``, absolute paths) are refused; the total
uncompressed size is capped at :data:`MAX_UNCOMPRESSED_BYTES`, main.xml at
:data:`MAX_MAIN_XML_BYTES`, and members larger than 1 MiB may not compress better than
:data:`MAX_COMPRESSION_RATIO` to 1; sizes are read from the archive's directory before anything
is decompressed, and each member is then read to at most its stated size. The MD5 checksum of
main.xml is verified before main.xml is parsed.
"""

from __future__ import annotations

import hashlib
import io
import re
import zipfile
import zlib
from html import escape as _html_escape
from pathlib import Path, PurePosixPath
from typing import Any

import numpy as np

from speccheck._atomic import atomic_write_bytes
from speccheck.errors import InputError
from speccheck.profile import InstrumentMeta, Profile, SourceInfo
from speccheck.readers._common import (
    MAX_ABS_HEIGHT_UM,
    MAX_POINTS,
    MAX_Z_SCALE_M,
    MIN_Z_SCALE_M,
    check_scale,
    check_spacing,
    profile_from_heights,
)

__all__ = [
    "MAX_UNCOMPRESSED_BYTES",
    "MAX_COMPRESSION_RATIO",
    "MAX_MAIN_XML_BYTES",
    "X3P_NAMESPACE",
    "parse_x3p",
    "write_x3p",
]

# Largest total uncompressed size of an X3P archive (512 MiB: 64 million float64 points, far
# beyond any profile) and largest compression ratio of a member above 1 MiB (zip bombs reach
# ratios of 1000 and more; measured height data compresses less than 10 to 1).
MAX_UNCOMPRESSED_BYTES = 512 * 1024 * 1024
MAX_COMPRESSION_RATIO = 100
# Largest main.xml (32 MiB: its metadata is a few kB; an inline DataList of 10^6 points takes
# about 30 MB, binary data goes to bindata/). Checked before it is decompressed.
MAX_MAIN_XML_BYTES = 32 * 1024 * 1024
_MAX_CHECKSUM_BYTES = 4096
_RATIO_CHECK_ABOVE_BYTES = 1024 * 1024

X3P_NAMESPACE = "http://www.opengps.eu/2008/ISO5436_2"
_DTYPES = {"I": "<i2", "L": "<i4", "F": "<f4", "D": "<f8"}
_UM_PER_M = 1e6
# Record2 requires a Date; write_x3p writes this when the profile has none, and the reader
# treats it as "no date".
_NO_DATE = "1970-01-01T00:00:00"
_NO_PROBE = ("Software", "speccheck")
# Record2/Instrument children (ISO 25178-72; the openGPS ISO5436_2 schema, Record2Type)
_INSTRUMENT_KEYS = ("Manufacturer", "Model", "Serial", "Version")


def escape(text: str) -> str:
    """XML character data: &, < and > escaped (what xml.sax.saxutils.escape does, without
    importing urllib and http along with it)."""
    return _html_escape(text, quote=False)


def _local(tag: str) -> str:
    return tag.rsplit("}", 1)[-1]


def _find(elem, path: str):
    """Child element by a '/'-separated path of local names (namespace-agnostic), or None."""
    for part in path.split("/"):
        if elem is None:
            return None
        elem = next((c for c in elem if _local(c.tag) == part), None)
    return elem


def _text(elem, path: str) -> str | None:
    e = _find(elem, path)
    if e is None or e.text is None:
        return None
    return e.text.strip() or None


class _Archive:
    """Checked access to the members of an X3P zip."""

    def __init__(self, data: bytes, path: str):
        self.path = path
        if not zipfile.is_zipfile(io.BytesIO(data)):
            raise InputError("not an X3P file (not a ZIP archive)", path=path)
        try:
            self.zip = zipfile.ZipFile(io.BytesIO(data))
            infos = self.zip.infolist()
        except (zipfile.BadZipFile, OSError, ValueError) as exc:
            raise InputError(f"corrupt X3P archive ({exc})", path=path) from exc
        total = 0
        self.members: dict[str, zipfile.ZipInfo] = {}
        for info in infos:
            name = info.filename
            pure = PurePosixPath(name.replace("\\", "/"))
            if pure.is_absolute() or ".." in pure.parts or re.match(r"^[A-Za-z]:", name):
                raise InputError(
                    "archive member leaves the archive (unsafe name)", path=path, where=name
                )
            total += info.file_size
            if total > MAX_UNCOMPRESSED_BYTES:
                raise InputError(
                    f"archive expands to more than {MAX_UNCOMPRESSED_BYTES} bytes",
                    path=path,
                    where=name,
                )
            if (
                info.file_size > _RATIO_CHECK_ABOVE_BYTES
                and info.file_size > MAX_COMPRESSION_RATIO * max(info.compress_size, 1)
            ):
                raise InputError(
                    f"member compresses more than {MAX_COMPRESSION_RATIO} to 1 (refused as unsafe)",
                    path=path,
                    where=name,
                )
            self.members[str(pure)] = info

    def has(self, name: str) -> bool:
        return str(PurePosixPath(name.replace("\\", "/"))) in self.members

    def read(
        self, name: str, *, limit: int | None = None, size: int | None = None, what: str = ""
    ) -> bytes:
        """The bytes of member ``name``; its size (from the archive's directory, before
        anything is decompressed) must be at most ``limit`` or exactly ``size``."""
        info = self.members.get(str(PurePosixPath(name.replace("\\", "/"))))
        if info is None:
            raise InputError("missing archive entry", path=self.path, where=name)
        if limit is not None and info.file_size > limit:
            raise InputError(
                f"entry is {info.file_size} bytes, more than the {limit} bytes allowed",
                path=self.path,
                where=name,
            )
        if size is not None and info.file_size != size:
            raise InputError(
                f"{info.file_size} bytes where {what} need {size}",
                path=self.path,
                where=name,
            )
        try:
            with self.zip.open(info) as f:
                data = f.read(info.file_size + 1)
        except (zipfile.BadZipFile, OSError, ValueError, EOFError, RuntimeError, zlib.error) as exc:
            raise InputError(f"corrupt archive entry ({exc})", path=self.path, where=name) from exc
        except NotImplementedError as exc:
            raise InputError(
                f"unsupported compression ({exc})", path=self.path, where=name
            ) from exc
        if len(data) > info.file_size:
            raise InputError("entry is larger than the archive says", path=self.path, where=name)
        return data


def _checksum_name(xml: bytes, archive: _Archive) -> str:
    """The checksum file's name, read from main.xml's bytes without parsing them."""
    m = re.search(rb"<(?:\w+:)?ChecksumFile>\s*([^<\s]{1,200})\s*</", xml)
    if m is not None:
        name = m.group(1).decode("ascii", "replace")
        if archive.has(name):
            return name
    return "md5checksum.hex"


def _parse_xml(xml: bytes, path: str):
    import defusedxml
    import defusedxml.ElementTree as ET

    try:
        return ET.fromstring(xml, forbid_dtd=False, forbid_entities=True, forbid_external=True)
    except defusedxml.DefusedXmlException as exc:
        raise InputError(
            "main.xml declares XML entities or external references, refused "
            f"({type(exc).__name__})",
            path=path,
            where="main.xml",
        ) from exc
    except ET.ParseError as exc:
        line = getattr(exc, "position", (None,))[0]
        where = f"main.xml line {line}" if line else "main.xml"
        raise InputError(
            f"main.xml is not well-formed XML ({exc.msg if hasattr(exc, 'msg') else exc})",
            path=path,
            where=where,
        ) from exc


def _float(root, key: str, path: str, *, default: float | None = None) -> float:
    text = _text(root, key)
    if text is None:
        if default is not None:
            return default
        raise InputError("missing element", path=path, where=f"main.xml {key}")
    try:
        return float(text)
    except ValueError:
        raise InputError(f"not a number: {text!r}", path=path, where=f"main.xml {key}") from None


def _int(root, key: str, path: str) -> int:
    text = _text(root, key)
    if text is None:
        raise InputError("missing element", path=path, where=f"main.xml {key}")
    try:
        return int(text)
    except ValueError:
        raise InputError(f"not an integer: {text!r}", path=path, where=f"main.xml {key}") from None


def _check_md5(data: bytes, expected: str | None, *, path: str, where: str, what: str) -> None:
    if expected is None:
        raise InputError(f"no MD5 checksum for {what}", path=path, where=where)
    if hashlib.md5(data).hexdigest() != expected.strip().lower():
        raise InputError(f"MD5 checksum mismatch ({what})", path=path, where=where)


def _iso_date(text: str | None) -> str | None:
    """YYYY-MM-DD of an xsd:dateTime (the date as written, any zone kept out), else None."""
    if text and text != _NO_DATE and re.match(r"^\d{4}-\d{2}-\d{2}(T|$)", text):
        return text[:10]
    return None


def _instrument_meta(r2) -> InstrumentMeta:
    """Record2's Instrument, CalibrationDate and ProbingSystem (ISO 25178-72), field by field.

    The placeholders :func:`write_x3p` writes when it knows nothing (no calibration date, the
    probing system 'Software'/'speccheck') read back as absent.
    """
    fields = {k.lower(): _text(r2, f"Instrument/{k}") for k in _INSTRUMENT_KEYS}
    kind, ident = _text(r2, "ProbingSystem/Type"), _text(r2, "ProbingSystem/Identification")
    probe = None
    if ident and (kind, ident) != _NO_PROBE:
        probe = f"{ident} ({kind})" if kind else ident
    return InstrumentMeta(
        **{k: v or None for k, v in fields.items()},
        probing_system=probe,
        calibration_date=_iso_date(_text(r2, "CalibrationDate")),
    )


def _record2(root) -> dict[str, Any]:
    meta: dict[str, Any] = {}
    r2 = _find(root, "Record2")
    if r2 is None:
        return meta
    parts = [_text(r2, f"Instrument/{k}") for k in ("Manufacturer", "Model")]
    serial, version = _text(r2, "Instrument/Serial"), _text(r2, "Instrument/Version")
    instrument = " ".join(p for p in parts if p)
    if serial:
        instrument += f" serial {serial}"
    if version:
        instrument += f" version {version}"
    if instrument.strip():
        meta["instrument"] = instrument.strip()
    if (date := _text(r2, "Date")) and date != _NO_DATE:
        meta["date"] = date
    if comment := _text(r2, "Comment"):
        meta["comment"] = " ".join(comment.split())
    meta["instrument_meta"] = _instrument_meta(r2)
    return meta


def parse_x3p(data: bytes, *, path: str, sha256: str) -> Profile:
    """Read an X3P archive (bytes) holding one profile; every error names the entry."""
    archive = _Archive(data, path)
    xml = archive.read("main.xml", limit=MAX_MAIN_XML_BYTES)
    # The checksum is verified before main.xml is parsed: a damaged or swapped document is
    # never parsed. The checksum file is md5checksum.hex unless main.xml names another one.
    checksum_name = _checksum_name(xml, archive)
    line = archive.read(checksum_name, limit=_MAX_CHECKSUM_BYTES).decode("ascii", "replace")
    _check_md5(
        xml,
        line.strip().split()[0] if line.strip() else "",
        path=path,
        where=checksum_name,
        what="main.xml",
    )
    root = _parse_xml(xml, path)
    if _local(root.tag) != "ISO5436_2":
        raise InputError(
            f"root element is {_local(root.tag)!r}, not ISO5436_2", path=path, where="main.xml"
        )

    feature = _text(root, "Record1/FeatureType")
    if feature != "PRF":
        raise InputError(
            f"FeatureType is {feature!r}; speccheck reads profiles (PRF)",
            path=path,
            where="main.xml Record1/FeatureType",
        )
    if (_text(root, "Record1/Axes/CX/AxisType") or "I") != "I":
        raise InputError(
            "only an incremental X axis (AxisType I) is supported",
            path=path,
            where="main.xml Record1/Axes/CX/AxisType",
        )
    dx_m = _float(root, "Record1/Axes/CX/Increment", path)
    check_spacing(dx_m * _UM_PER_M, path=path, where="main.xml Record1/Axes/CX/Increment")
    dtype_code = _text(root, "Record1/Axes/CZ/DataType") or "D"
    if dtype_code not in _DTYPES:
        raise InputError(
            f"unknown Z DataType {dtype_code!r} (expected I, L, F or D)",
            path=path,
            where="main.xml Record1/Axes/CZ/DataType",
        )
    z_inc = _float(root, "Record1/Axes/CZ/Increment", path, default=1.0)
    check_scale(
        z_inc,
        what="Z increment",
        unit="m",
        lo=MIN_Z_SCALE_M,
        hi=MAX_Z_SCALE_M,
        path=path,
        where="main.xml Record1/Axes/CZ/Increment",
    )
    z_off = _float(root, "Record1/Axes/CZ/Offset", path, default=0.0)
    if not abs(z_off) <= MAX_ABS_HEIGHT_UM / _UM_PER_M:
        raise InputError(
            f"Z offset {z_off!r} m is not a finite height within ±{MAX_ABS_HEIGHT_UM / 1e3:g} mm",
            path=path,
            where="main.xml Record1/Axes/CZ/Offset",
        )
    size_x = _int(root, "Record3/MatrixDimension/SizeX", path)
    size_y = _int(root, "Record3/MatrixDimension/SizeY", path)
    size_z = _int(root, "Record3/MatrixDimension/SizeZ", path)
    if size_y != 1 or size_z != 1 or size_x < 1:
        raise InputError(
            f"matrix is {size_x} × {size_y} × {size_z}; a profile is N × 1 × 1",
            path=path,
            where="main.xml Record3/MatrixDimension",
        )
    if size_x > MAX_POINTS:
        raise InputError(
            f"SizeX {size_x}; a profile has at most {MAX_POINTS} points",
            path=path,
            where="main.xml Record3/MatrixDimension/SizeX",
        )

    dtype = np.dtype(_DTYPES[dtype_code])
    valid: np.ndarray | None = None
    link = _find(root, "Record3/DataLink")
    if link is not None:
        name = _text(link, "PointDataLink")
        if name is None:
            raise InputError(
                "missing element", path=path, where="main.xml Record3/DataLink/PointDataLink"
            )
        raw = archive.read(
            name, size=size_x * dtype.itemsize, what=f"{size_x} points of type {dtype_code}"
        )
        _check_md5(
            raw,
            _text(link, "MD5ChecksumPointData"),
            path=path,
            where=name,
            what="MD5ChecksumPointData in main.xml",
        )
        values = np.frombuffer(raw, dtype=dtype).astype(np.float64)
        valid_name = _text(link, "ValidPointsLink")
        if valid_name is not None:
            vraw = archive.read(valid_name, limit=(size_x + 7) // 8 + _MAX_CHECKSUM_BYTES)
            vsum = _text(link, "MD5ChecksumValidPoints")
            if vsum is not None:
                _check_md5(
                    vraw,
                    vsum,
                    path=path,
                    where=valid_name,
                    what="MD5ChecksumValidPoints in main.xml",
                )
            if len(vraw) < (size_x + 7) // 8:
                raise InputError(
                    f"{len(vraw)} bytes, too few for {size_x} points", path=path, where=valid_name
                )
            # One bit per point, first point in the least significant bit (from memory).
            bits = np.unpackbits(np.frombuffer(vraw, dtype=np.uint8), bitorder="little")
            valid = bits[:size_x].astype(bool)
    else:
        datalist = _find(root, "Record3/DataList")
        if datalist is None:
            raise InputError("neither DataLink nor DataList", path=path, where="main.xml Record3")
        data_elems = [d for d in datalist if _local(d.tag) == "Datum"]
        if len(data_elems) != size_x:
            raise InputError(
                f"{len(data_elems)} Datum elements where SizeX is {size_x}",
                path=path,
                where="main.xml Record3/DataList",
            )
        values = np.full(size_x, np.nan)
        for i, d in enumerate(data_elems):
            text = (d.text or "").strip()
            if not text:
                continue
            try:
                values[i] = float(text.split(";")[-1])
            except ValueError:
                raise InputError(
                    f"not a number: {text!r}",
                    path=path,
                    where=f"main.xml Record3/DataList/Datum[{i + 1}]",
                ) from None
    with np.errstate(over="ignore", invalid="ignore"):  # overflow: inf, refused below
        if dtype_code in ("I", "L"):
            z_m = values * z_inc + z_off
        else:
            z_m = values if (z_inc == 1.0 and z_off == 0.0) else values * z_inc + z_off
        z_um = z_m * _UM_PER_M
    source = SourceInfo(path=path, sha256=sha256, format="x3p", **_record2(root))
    place = "main.xml Record3/DataList/Datum[{}]" if link is None else f"{name} point {{}}"
    return profile_from_heights(
        z_um,
        dx_m * _UM_PER_M,
        source=source,
        valid=valid,
        where="main.xml Record3",
        locate=lambda i: place.format(i + 1),
    )


def _metres_exact(z_um: np.ndarray) -> np.ndarray:
    """Metres m with ``m * 1e6 == z_um`` wherever such a float64 exists (nearest otherwise).

    Dividing by 1e6 and multiplying back returns the same float64 for about 97 % of values; a
    neighbour of the quotient fixes most of the rest. A few per cent of float64 values in
    micrometres have no float64 in metres that maps back to them exactly; they are written to
    the nearest (one unit in the last place).
    """
    m = z_um / _UM_PER_M
    for direction in (np.inf, -np.inf):
        miss = (m * _UM_PER_M != z_um) & np.isfinite(z_um)
        if not miss.any():
            break
        cand = np.nextafter(m[miss], direction)
        hit = cand * _UM_PER_M == z_um[miss]
        idx = np.flatnonzero(miss)[hit]
        m[idx] = cand[hit]
    return m


def _instrument_xml(src: SourceInfo) -> str:
    """Record2's Instrument, CalibrationDate and ProbingSystem from the profile's source."""
    im = src.instrument_meta
    fields = {k: getattr(im, k.lower()) or "" for k in _INSTRUMENT_KEYS}
    if not any(fields.values()):
        fields["Manufacturer"] = src.instrument or ""
    cal = f"{im.calibration_date}T00:00:00" if im.calibration_date else _NO_DATE
    kind, ident = _NO_PROBE
    if im.probing_system:
        m = re.fullmatch(r"(.*) \((Contacting|NonContacting|Software)\)", im.probing_system)
        kind, ident = (m.group(2), m.group(1)) if m else ("Contacting", im.probing_system)
    return (
        "    <Instrument>\n"
        + "".join(f"      <{k}>{escape(v)}</{k}>\n" for k, v in fields.items())
        + "    </Instrument>\n"
        f"    <CalibrationDate>{cal}</CalibrationDate>\n"
        f"    <ProbingSystem><Type>{kind}</Type><Identification>{escape(ident)}</Identification>"
        "</ProbingSystem>\n"
    )


def _main_xml(
    profile: Profile,
    *,
    dtype: str,
    inline: bool,
    values: np.ndarray,
    z_inc: float,
    data_md5: str | None,
    valid_md5: str | None,
) -> bytes:
    src = profile.source
    n = profile.n_points
    r2 = ""
    im = src.instrument_meta
    if src.instrument or src.date or src.comment or im.stated():
        date = src.date or ""
        if re.fullmatch(r"\d{4}-\d{2}-\d{2}", date):
            date += "T00:00:00"
        comment = src.comment or ""
        if date and not re.match(r"^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}", date):
            comment = f"{comment} (date: {date})".strip()
            date = ""
        r2 = (
            "  <Record2>\n"
            f"    <Date>{escape(date or _NO_DATE)}</Date>\n"
            + _instrument_xml(src)
            + (f"    <Comment>{escape(comment)}</Comment>\n" if comment else "")
            + "  </Record2>\n"
        )
    if inline:
        datums = "".join(
            "      <Datum/>\n" if not np.isfinite(v) else f"      <Datum>{v!r}</Datum>\n"
            for v in values.tolist()
        )
        r3_data = f"    <DataList>\n{datums}    </DataList>\n"
    else:
        r3_data = (
            "    <DataLink>\n"
            "      <PointDataLink>bindata/data.bin</PointDataLink>\n"
            f"      <MD5ChecksumPointData>{data_md5}</MD5ChecksumPointData>\n"
            + (
                "      <ValidPointsLink>bindata/valid.bin</ValidPointsLink>\n"
                f"      <MD5ChecksumValidPoints>{valid_md5}</MD5ChecksumValidPoints>\n"
                if valid_md5
                else ""
            )
            + "    </DataLink>\n"
        )
    xml = (
        '<?xml version="1.0" encoding="UTF-8"?>\n'
        f'<p:ISO5436_2 xmlns:p="{X3P_NAMESPACE}">\n'
        "  <Record1>\n"
        "    <Revision>ISO5436 - 2000</Revision>\n"
        "    <FeatureType>PRF</FeatureType>\n"
        "    <Axes>\n"
        f"      <CX><AxisType>I</AxisType><DataType>D</DataType>"
        f"<Increment>{profile.dx_um / _UM_PER_M!r}</Increment><Offset>0</Offset></CX>\n"
        "      <CY><AxisType>I</AxisType><DataType>D</DataType>"
        "<Increment>1</Increment><Offset>0</Offset></CY>\n"
        f"      <CZ><AxisType>A</AxisType><DataType>{dtype}</DataType>"
        f"<Increment>{z_inc!r}</Increment><Offset>0</Offset></CZ>\n"
        "    </Axes>\n"
        "  </Record1>\n"
        f"{r2}"
        "  <Record3>\n"
        f"    <MatrixDimension><SizeX>{n}</SizeX><SizeY>1</SizeY><SizeZ>1</SizeZ>"
        "</MatrixDimension>\n"
        f"{r3_data}"
        "  </Record3>\n"
        "  <Record4><ChecksumFile>md5checksum.hex</ChecksumFile></Record4>\n"
        "</p:ISO5436_2>\n"
    )
    return xml.encode("utf-8")


def write_x3p(
    path: str | Path, profile: Profile, *, dtype: str = "D", inline: bool = False
) -> None:
    """Write ``profile`` as an ISO 25178-72 X3P archive (PRF), atomically.

    Parameters
    ----------
    path:
        Destination file (conventionally ``.x3p``).
    profile:
        The profile; invalid points become NaN (F, D) or cleared bits in ``valid.bin`` (I, L).
    dtype:
        Z data type: ``"D"`` float64 (default), ``"F"`` float32, ``"L"`` int32, ``"I"`` int16.
        Integer types use a Z increment of 1 nm (L) or one 30000th of the largest height (I).
    inline:
        Write the heights as a ``DataList`` in main.xml instead of ``bindata/data.bin``.

    Notes
    -----
    Heights are stored in metres. For ``"D"`` each height is stored as the float64 that reads
    back to the same micrometre value wherever one exists (see ``_metres_exact``).

    References
    ----------
    ISO 25178-72:2017 (XML file format x3p); domain notes §7.
    """
    if dtype not in _DTYPES:
        raise ValueError(f"dtype must be one of I, L, F, D, got {dtype!r}")
    z_um = np.asarray(profile.z_um, dtype=np.float64)
    valid = np.asarray(profile.valid, dtype=bool)
    z_inc = 1.0
    if dtype == "D":
        values = _metres_exact(z_um)
    elif dtype == "F":
        values = (z_um / _UM_PER_M).astype("<f4")
    else:
        peak = float(np.nanmax(np.abs(z_um))) if valid.any() else 0.0
        z_inc = 1e-9 if dtype == "L" else max(peak, 1e-6) / 30000 / _UM_PER_M
        if dtype == "L" and peak / (z_inc * _UM_PER_M) > 2**31 - 1:
            raise ValueError("heights too large for int32 at 1 nm resolution")
        values = np.where(valid, np.round(np.nan_to_num(z_um) / (z_inc * _UM_PER_M)), 0)
        values = values.astype(_DTYPES[dtype])
    data_bin = values.astype(_DTYPES[dtype]).tobytes()
    valid_bin = None
    if dtype in ("I", "L") and not valid.all():
        valid_bin = np.packbits(valid, bitorder="little").tobytes()
    xml = _main_xml(
        profile,
        dtype=dtype,
        inline=inline,
        values=np.where(valid, values.astype(np.float64), np.nan) if inline else values,
        z_inc=z_inc,
        data_md5=None if inline else hashlib.md5(data_bin).hexdigest(),
        valid_md5=hashlib.md5(valid_bin).hexdigest() if valid_bin is not None else None,
    )
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", compression=zipfile.ZIP_DEFLATED) as zf:

        def put(name: str, payload: bytes) -> None:
            zf.writestr(
                zipfile.ZipInfo(name, date_time=(1980, 1, 1, 0, 0, 0)),
                payload,
                compress_type=zipfile.ZIP_DEFLATED,
            )

        put("main.xml", xml)
        put("md5checksum.hex", f"{hashlib.md5(xml).hexdigest()} *main.xml\n".encode("ascii"))
        if not inline:
            put("bindata/data.bin", data_bin)
            if valid_bin is not None:
                put("bindata/valid.bin", valid_bin)
    atomic_write_bytes(Path(path), buf.getvalue())
