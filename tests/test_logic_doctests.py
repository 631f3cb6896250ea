"""The small examples in planner.logic's docstrings are run as tests."""

import doctest
import importlib

import pytest

MODULES = ["cover", "equivalence", "exact", "heuristic", "listing", "minimise", "primes", "table", "text"]


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    module = importlib.import_module(f"planner.logic.{name}")
    result = doctest.testmod(module)
    assert result.attempted > 0 and result.failed == 0
