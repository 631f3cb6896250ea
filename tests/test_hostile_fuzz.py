"""Hostile input: fuzzed design files, stock files and expressions never escape as anything
but our InputError. The default run draws 500+ examples per target; the marker
``fuzz_long`` (``pytest -m fuzz_long``) draws 10,000. Every file here is invented."""

from __future__ import annotations

import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from planner.spec import InputError, parse_expression
from planner.spec.design import design_from_yaml
from planner.spec.stock import stock_from_yaml
from planner.spec.yamlfile import parse_yaml_text

from conftest import GOOD_DESIGN, GOOD_STOCK

SHORT = settings(max_examples=500, deadline=None, suppress_health_check=[HealthCheck.too_slow])
LONG = settings(max_examples=10_000, deadline=None, suppress_health_check=[HealthCheck.too_slow])

DESIGN_KEYS = ["design", "inputs", "signals", "outputs", "name", "complement", "minterms", "dont_care",
               "over", "expr", "a", "b", "s", "y", "n1", "~a"]
STOCK_KEYS = ["supplies", "plate", "bias", "heater", "volts", "max_ma", "max_amps", "id", "tubes", "12AU7",
              "5915", "6AL5", "count", "reserve", "scarce", "condition", "unit_price", "diodes", "objective",
              "envelopes", "heater_watts", "mode", "limits", "max_branches_per_stage", "custom_types",
              "prices", "resistor", "H1"]
SCALARS = st.one_of(st.none(), st.booleans(), st.integers(-10**6, 10**6),
                    st.floats(allow_nan=True, allow_infinity=True), st.text(max_size=12),
                    st.sampled_from(["a & b", "~a | (b ^ c)", "a &", "((a)", "0", "1", "-95", "6.3",
                                     "solid-state", "none", "weighted", "lexicographic", "a", "b"]))


def documents(keys):
    return st.recursive(
        SCALARS,
        lambda inner: st.one_of(st.lists(inner, max_size=5),
                                st.dictionaries(st.sampled_from(keys), inner, max_size=6)),
        max_leaves=25)


def _only_input_errors(text: str, reader) -> None:
    try:
        reader(parse_yaml_text(text, "fuzz.yaml"))
    except InputError as problem:
        assert str(problem).startswith("fuzz.yaml:")


def _mutations(base: str):
    """Texts near a valid file: a line dropped, duplicated or cut, characters inserted."""
    lines = base.splitlines(keepends=True)
    return st.one_of(
        st.integers(0, len(lines) - 1).map(lambda i: "".join(lines[:i] + lines[i + 1:])),
        st.integers(0, len(lines) - 1).map(lambda i: "".join(lines[:i + 1] + lines[i:])),
        st.tuples(st.integers(0, len(base)), st.text(alphabet="{}[]:&|~-!*&#'\"\n\t ab01", max_size=6)).map(
            lambda pair: base[:pair[0]] + pair[1] + base[pair[0]:]),
        st.integers(0, len(base)).map(lambda i: base[:i]),
    )


def _design_text(doc) -> str:
    return yaml.safe_dump(doc, sort_keys=False)


def check_design(doc):
    _only_input_errors(_design_text(doc), design_from_yaml)


def check_stock(doc):
    _only_input_errors(yaml.safe_dump(doc, sort_keys=False), stock_from_yaml)


def check_design_text(text):
    _only_input_errors(text, design_from_yaml)


def check_stock_text(text):
    _only_input_errors(text, stock_from_yaml)


def check_expression(text):
    try:
        parse_expression(text)
    except InputError:
        pass


TARGETS = [
    ("design structures", documents(DESIGN_KEYS), check_design),
    ("stock structures", documents(STOCK_KEYS), check_stock),
    ("design text mutations", _mutations(GOOD_DESIGN), check_design_text),
    ("stock text mutations", _mutations(GOOD_STOCK), check_stock_text),
    ("design raw text", st.text(max_size=200), check_design_text),
    ("expressions", st.text(alphabet="abc01~&|^() notandxor", max_size=80), check_expression),
]


@pytest.mark.parametrize("name,strategy,check", TARGETS, ids=[t[0] for t in TARGETS])
def test_fuzz(name, strategy, check):
    SHORT(given(strategy)(check))()


@pytest.mark.fuzz_long
@pytest.mark.parametrize("name,strategy,check", TARGETS, ids=[t[0] for t in TARGETS])
def test_fuzz_long(name, strategy, check):
    LONG(given(strategy)(check))()
