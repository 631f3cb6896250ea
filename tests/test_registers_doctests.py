"""The small examples in the docstrings of the register and timing modules run as tests."""

import doctest
import importlib

import pytest

MODULES = ["planner.electrical.timing", "planner.mapping.registers", "planner.mapping.timing",
           "planner.report.timing_text"]


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    result = doctest.testmod(importlib.import_module(name))
    assert result.attempted > 0 and result.failed == 0
