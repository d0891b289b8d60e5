"""A seeded corpus of hostile files, generated here (never stored as binaries), run through
the command line: ``speccheck info`` for profiles, ``speccheck check`` for specs. Each run is
exit 0 (or 1/3, a verdict) or the one-line error naming the file; the file is unchanged."""

from __future__ import annotations

import random

import pytest
from _contract import assert_refused, fingerprint, run_speccheck
from test_fuzz_readers import SEED_CSV, SEED_SDF, SEED_X3P, _x3p_archive
from test_fuzz_spec import SEEDS as SPEC_SEEDS

from speccheck.readers import write_csv

HANDMADE = {
    "empty.csv": b"",
    "nul.csv": b"x,z\n0,\x001\n",
    "bom-only.csv": b"\xef\xbb\xbf",
    "huge-values.csv": b"z\n" + b"1e999\n" * 400,
    "one-point.csv": b"x,z\n0,1\n",
    "utf16.csv": "x,z\n0,1\n0.5,2\n".encode("utf-16"),
    "not-xml.x3p": _x3p_archive(b"\x00not xml", b""),
    "entity.x3p": _x3p_archive(
        b'<?xml version="1.0"?><!DOCTYPE a [<!ENTITY e "x">]><a>&e;</a>', b""
    ),
    "not-zip.x3p": b"PK\x03\x04" + b"\xff" * 64,
    "no-star.sdf": b"aISO-1.0\nNumPoints = 3\n",
    "negative-count.sdf": SEED_SDF.replace(b"NumPoints = 400", b"NumPoints = -400"),
}
HOSTILE_SPECS = {
    "deep.yaml": b"a: " + b"[" * 500 + b"]" * 500 + b"\n",
    "laughs.yaml": b'a: &a ["x","x","x","x"]\n'
    + b"".join(
        f"{c}: &{c} [*{p},*{p},*{p},*{p}]\n".encode()
        for p, c in zip("abcdefg", "bcdefgh", strict=True)
    ),
    "tabs.yaml": b"spec_version: 1\n\tpart: x\n",
    "nul.yaml": b"spec_version: 1\x00\n",
    "surrogate.yaml": b'spec_version: 1\npart: {number: "\\ud800"}\n',
    "list.yaml": b"- 1\n- 2\n",
}


def _mutate(rng: random.Random, data: bytes) -> bytes:
    b = bytearray(data)
    for _ in range(rng.randint(1, 5)):
        i = rng.randrange(max(len(b), 1))
        op = rng.choice("fidt")
        if op == "f" and b:
            b[i] = rng.randrange(256)
        elif op == "i":
            b[i:i] = rng.randbytes(rng.randint(1, 8))
        elif op == "d":
            del b[i : i + rng.randint(1, 40)]
        else:
            del b[i:]
    return bytes(b)


def corpus(seed: int = 2041, per_seed: int = 12) -> dict[str, bytes]:
    """Handmade hostile files and seeded mutations of genuine ones."""
    rng = random.Random(seed)
    files = dict(HANDMADE)
    for ext, data in (("csv", SEED_CSV), ("x3p", SEED_X3P), ("sdf", SEED_SDF)):
        files.update({f"mutant{k}.{ext}": _mutate(rng, data) for k in range(per_seed)})
    return files


def spec_corpus(seed: int = 3310, per_seed: int = 3) -> dict[str, bytes]:
    rng = random.Random(seed)
    files = dict(HOSTILE_SPECS)
    for n, data in enumerate(SPEC_SEEDS):
        files.update({f"mutant{n}-{k}.yaml": _mutate(rng, data) for k in range(per_seed)})
    return files


def _holds(status: int, err: str, path) -> None:
    if status == 2:
        assert_refused(status, err, [path])
    else:
        assert status in (0, 1, 3) and "Traceback" not in err and "Warning" not in err, err


@pytest.mark.parametrize("name", sorted(corpus()))
def test_profile_corpus_through_info(run_cli, tmp_path, name):
    p = tmp_path / name
    p.write_bytes(corpus()[name])
    before = fingerprint([p])
    status, _, err = (
        run_cli("info", p, "--dx", "0.5um") if name.endswith(".csv") else run_cli("info", p)
    )
    _holds(status, err, p)
    assert fingerprint([p]) == before


@pytest.mark.parametrize("name", sorted(spec_corpus()))
def test_spec_corpus_through_check(run_cli, tmp_path, name):
    import numpy as np

    from speccheck.profile import Profile

    spec = tmp_path / name
    spec.write_bytes(spec_corpus()[name])
    prof = tmp_path / "p.csv"
    write_csv(prof, Profile(0.5 * np.sin(2 * np.pi * np.arange(11201) * 0.5 / 50.0), 0.5))
    before = fingerprint([spec, prof])
    status, _, err = run_cli("check", spec, prof)
    _holds(status, err, spec)
    assert fingerprint([spec, prof]) == before


def test_a_sample_through_the_real_command_line(tmp_path):
    """A few corpus files in a separate process: no traceback reaches the terminal."""
    names = sorted(corpus())[::8]
    for name in names:
        p = tmp_path / name
        p.write_bytes(corpus()[name])
    status, _, err = run_speccheck(["info", *[tmp_path / n for n in names]])
    assert status in (0, 2) and "Traceback" not in err and "internal error" not in err, err
