"""The small examples in the electrical package's docstrings run as tests."""

import doctest
import importlib

import pytest

MODULES = ["eseries", "roots", "listing", "family", "template"]


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    module = importlib.import_module(f"planner.electrical.{name}")
    result = doctest.testmod(module)
    assert result.attempted > 0 and result.failed == 0
