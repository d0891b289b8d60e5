"""Fuzzing the spec loader: YAML built from the spec's own keys with hostile values, and the
genuine example specs mutated byte by byte. The contract (_fuzz.holds_contract) is a loaded
spec or the project's spec error naming the file; budget: see tests/_fuzz.py."""

from __future__ import annotations

from pathlib import Path

import yaml
from _fuzz import FUZZ, NUMBER_TEXT, holds_contract, hostile_file, mutated
from hypothesis import given
from hypothesis import strategies as st

from speccheck.spec import load_spec

EXAMPLES = sorted((Path(__file__).parents[1] / "rules_examples").glob("*.yaml"))
SEEDS = [p.read_bytes() for p in EXAMPLES]

CALLOUTS = st.sampled_from(
    ["Ra 0.8", "Rz max 6.3", "Rpk 0.3", "Ra 0.4 lower", "Rsk -0.5", "Ra 0.8 16%", "Rmr(0.5) 70",
     "Ra", "Ra 0.8 0.8", "Rq -1", "Zz 1", "Ra 1e999", "Ra nan", "Ra 0.8 max max", ""]
)  # fmt: skip
SCALARS = st.one_of(
    NUMBER_TEXT, st.booleans(), st.none(), st.text(max_size=20),
    st.sampled_from(["0.8mm", "2.5um", "-0.8mm", "0mm", "1e999 mm", "robust", "gaussian", "auto",
                     "none", "0123", "1:30", "2024-01-01", "yes", "~", "*a", "&a x"]),
)  # fmt: skip
VALUES = st.recursive(
    SCALARS,
    lambda inner: st.one_of(
        st.lists(inner, max_size=4), st.dictionaries(st.text(max_size=8), inner, max_size=4)
    ),
    max_leaves=12,
)
REQUIREMENT = st.one_of(
    CALLOUTS,
    st.fixed_dictionaries(
        {"parameter": st.sampled_from(["Ra", "Rvk", "Rz", "Rmr", "X", ""])},
        optional={"upper": SCALARS, "lower": SCALARS, "rule": SCALARS, "cutoff": SCALARS},
    ),
    VALUES,
)


@st.composite
def spec_documents(draw: st.DrawFn) -> bytes:
    doc = {
        "spec_version": draw(st.sampled_from([1, 2, "1", None, True])),
        "part": draw(
            st.one_of(
                st.fixed_dictionaries({"number": SCALARS, "revision": SCALARS, "surface": SCALARS}),
                VALUES,
            )
        ),
        "measurement": draw(
            st.dictionaries(
                st.sampled_from(["cutoff", "ls", "filter", "sections", "ends", "periodic", "x"]),
                SCALARS,
                max_size=4,
            )
        ),
        "requirements": draw(st.one_of(st.lists(REQUIREMENT, max_size=4), VALUES)),
    }
    for key in draw(st.sets(st.sampled_from(list(doc)), max_size=2)):
        del doc[key]
    text = yaml.safe_dump(doc, allow_unicode=True, sort_keys=False)
    return text.encode("utf-8", "surrogatepass")


@FUZZ
@given(data=st.one_of(spec_documents(), st.sampled_from(SEEDS).flatmap(mutated)))
def test_spec_loader_holds_the_contract(data):
    with hostile_file("spec.yaml", data) as p:
        holds_contract("spec", p, load_spec)
