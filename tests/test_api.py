"""The public Python API (speccheck.api): its examples run as doctests, every public name is
documented with an example, and a whole check runs from numpy arrays and a dict.

Expected values: Ra of a sine of amplitude A is 2A/π (handbook formula; the sampled closed form
is in tests/test_cli_check.py).
"""

from __future__ import annotations

import doctest
import inspect
from pathlib import Path

import numpy as np

from speccheck import api


def test_the_api_examples_run_as_doctests():
    failures, attempted = doctest.testmod(api, optionflags=doctest.ELLIPSIS)
    assert attempted >= 10
    assert failures == 0


def test_every_public_name_has_a_docstring_with_an_example():
    for name in api.__all__:
        obj = getattr(api, name)
        doc = inspect.getdoc(obj) or ""
        assert doc, f"speccheck.api.{name} has no docstring"
        if inspect.isfunction(obj):
            assert ">>>" in doc, f"speccheck.api.{name} has no example"


def test_the_module_docstring_example_is_a_whole_check():
    assert ">>> result = api.evaluate(" in (api.__doc__ or "")


def test_parameters_are_indexable_by_name_with_units():
    x_um = np.arange(11201) * 0.5
    amplitude = 0.5
    p = api.profile_from_arrays(
        amplitude * np.sin(2 * np.pi * x_um / 50.0), z_unit="um", dx="0.5um"
    )
    params = api.parameters(p, cutoff="0.8mm", ls=None)
    assert abs(params["Ra"].value - 2 * amplitude / np.pi) < 1e-3 * amplitude
    assert params["Ra"].unit == "µm" and params["RSm"].unit == "mm"
    assert "Rq" in params and len(params) == len(list(params))


def test_profile_units_are_applied():
    p = api.profile_from_arrays([1.0, 2.0], z_unit="mm", dx="1mm")
    assert p.z_um.tolist() == [1000.0, 2000.0] and p.dx_um == 1000.0


def test_spec_from_yaml_errors_name_the_place():
    import pytest

    from speccheck.errors import SpecError

    with pytest.raises(SpecError) as e:
        api.spec_from_yaml("spec_version: 1\nrequirements: [Ra 0.8 mm]\n", name="dwg.yaml")
    assert e.value.one_line().startswith("dwg.yaml:")


def test_the_readme_api_examples_run():
    """The README's ```pycon blocks are doctests of the API (run here, so they cannot rot)."""
    import re

    text = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    blocks = re.findall(r"```pycon\n(.+?)```", text, flags=re.S)
    assert blocks
    parser, runner = doctest.DocTestParser(), doctest.DocTestRunner(optionflags=doctest.ELLIPSIS)
    for i, block in enumerate(blocks):
        runner.run(parser.get_doctest(block, {}, f"README block {i + 1}", "README.md", 0))
    assert runner.summarize(verbose=False).failed == 0
