"""Shared parts of the fuzz suite: the hypothesis budget, the contract check and hostile seeds.

Budget: ``SPECCHECK_FUZZ_EXAMPLES`` cases per fuzz test (default 40, the CI budget); a long run
sets it, e.g. ``SPECCHECK_FUZZ_EXAMPLES=2500`` (DEVELOPERS.md, "Fuzzing"). Short runs are
derandomised, so CI is reproducible; long runs draw fresh cases each time. No example database
is written into the tree.
"""

from __future__ import annotations

import contextlib
import hashlib
import os
import tempfile
import warnings
from collections.abc import Callable, Iterator
from pathlib import Path
from typing import Any

from hypothesis import HealthCheck, settings
from hypothesis import strategies as st

from speccheck.errors import SpeccheckError

EXAMPLES = int(os.environ.get("SPECCHECK_FUZZ_EXAMPLES", "40"))
LONG = "SPECCHECK_FUZZ_EXAMPLES" in os.environ

FUZZ = settings(
    max_examples=EXAMPLES,
    deadline=None,
    database=None,
    derandomize=not LONG,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large],
)

#: Cases run per target in this process, for the long run's figures (printed with -s).
COUNTS: dict[str, list[int]] = {}


@contextlib.contextmanager
def hostile_file(name: str, data: bytes) -> Iterator[Path]:
    """``data`` written to a fresh folder as ``name``; yields its path."""
    with tempfile.TemporaryDirectory(prefix="speccheck-fuzz-") as d:
        p = Path(d) / name
        p.write_bytes(data)
        yield p


def holds_contract(target: str, path: Path, call: Callable[[Path], Any]) -> Any:
    """``call(path)`` returns, or raises the project's own error naming ``path`` in one line;
    no other exception, no warning, and the file's bytes unchanged. Returns the result or the
    error."""
    before = hashlib.sha256(path.read_bytes()).hexdigest()
    counts = COUNTS.setdefault(target, [0, 0])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        try:
            out: Any = call(path)
            counts[0] += 1
        except SpeccheckError as exc:
            line = exc.one_line()
            assert str(path) in line, line
            assert "\n" not in line and line.strip(), line
            counts[1] += 1
            out = exc
    assert hashlib.sha256(path.read_bytes()).hexdigest() == before, "the input changed"
    return out


def mutated(seed: bytes) -> st.SearchStrategy[bytes]:
    """``seed`` with a few bytes replaced, inserted, deleted, or cut short."""

    @st.composite
    def build(draw: st.DrawFn) -> bytes:
        b = bytearray(seed)
        for _ in range(draw(st.integers(1, 6))):
            op = draw(st.sampled_from(["flip", "insert", "delete", "truncate", "repeat"]))
            i = draw(st.integers(0, max(len(b) - 1, 0)))
            if op == "flip" and b:
                b[i] = draw(st.integers(0, 255))
            elif op == "insert":
                b[i:i] = draw(st.binary(min_size=1, max_size=16))
            elif op == "delete":
                del b[i : i + draw(st.integers(1, 64))]
            elif op == "truncate":
                del b[i:]
            elif op == "repeat":
                j = draw(st.integers(i, min(len(b), i + 200)))
                b[i:i] = b[i:j] * draw(st.integers(1, 4))
        return bytes(b)

    return build()


#: Number-like text a careless export or a hostile file may carry.
NUMBER_TEXT = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(-(10**30), 10**30).map(str),
    st.sampled_from(
        ["1e999", "-1e999", "nan", "NaN", "inf", "-inf", "", " ", "0x1p3", "1,5", "1.2.3",
         "١٢", "1e-400", "--1", "+", "e5", "0" * 400, "\x00", "\ufeff1", "1_000"]
    ),
)  # fmt: skip
