"""The expression parser: random text never escapes as anything but InputError, and
well-formed expressions mean what a reference evaluator built here says they mean."""

from __future__ import annotations

import itertools

import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

from planner.formula import Formula, symbol, to_sympy
from planner.spec import MAX_EXPRESSION_DEPTH, InputError, is_valid_name, parse_expression

NAMES = ("a", "b", "c", "d")
ALPHABET = "abcd01~&|^() notandxor_$+!\t\n'\"[]{};."


@settings(max_examples=600, deadline=None)
@given(st.text(alphabet=ALPHABET, max_size=60))
def test_random_text_raises_only_input_error(text):
    try:
        result = parse_expression(text)
    except InputError as problem:
        assert str(problem).startswith("<expression>:1: ")
    else:
        assert isinstance(result, Formula)
        assert all(is_valid_name(name) for name in result.names)


# A tree is ("var", name) | ("const", 0/1) | ("not", t) | (op, left, right) with op in and/xor/or.
def trees():
    leaves = st.one_of(st.sampled_from(NAMES).map(lambda n: ("var", n)),
                       st.sampled_from((0, 1)).map(lambda v: ("const", v)))
    return st.recursive(
        leaves,
        lambda inner: st.one_of(
            inner.map(lambda t: ("not", t)),
            st.tuples(st.sampled_from(("and", "xor", "or")), inner, inner)),
        max_leaves=12)


def evaluate(tree, env) -> int:
    """The reference meaning, by Python's own integer operators (independent of sympy)."""
    kind = tree[0]
    if kind == "var":
        return env[tree[1]]
    if kind == "const":
        return tree[1]
    if kind == "not":
        return 1 - evaluate(tree[1], env)
    left, right = evaluate(tree[1], env), evaluate(tree[2], env)
    return {"and": left & right, "xor": left ^ right, "or": left | right}[kind]


SYMBOLS = {"not": ("~", "not "), "and": ("&", "and"), "xor": ("^", "xor"), "or": ("|", "or")}


def render(tree, draw) -> str:
    """Text for ``tree``, fully parenthesised, with random operator spellings and spacing."""
    kind = tree[0]
    if kind == "var":
        return tree[1]
    if kind == "const":
        return str(tree[1])
    space = draw(st.sampled_from(("", " ", "  ")))
    if kind == "not":
        word = draw(st.sampled_from(SYMBOLS["not"]))
        return f"{word}{space}({render(tree[1], draw)})"
    word = draw(st.sampled_from(SYMBOLS[kind]))
    return f"({render(tree[1], draw)}) {word}{space} ({render(tree[2], draw)})"


@settings(max_examples=300, deadline=None)
@given(trees(), st.data())
def test_well_formed_expressions_mean_what_they_say(tree, data):
    text = render(tree, data.draw)
    expr = parse_expression(text)
    for values in itertools.product((0, 1), repeat=len(NAMES)):
        env = dict(zip(NAMES, values))
        got = to_sympy(expr).subs({sympy.Symbol(n): bool(v) for n, v in env.items()})
        assert bool(got) == bool(evaluate(tree, env)), (text, env)


def test_precedence_not_and_xor_or():
    # Precedence as documented in docs/formats.md: not > and > xor > or.
    for text, tree in [
        ("a | b ^ c & d", ("or", ("var", "a"), ("xor", ("var", "b"), ("and", ("var", "c"), ("var", "d"))))),
        ("~a & b", ("and", ("not", ("var", "a")), ("var", "b"))),
        ("not a xor b or c", ("or", ("xor", ("not", ("var", "a")), ("var", "b")), ("var", "c"))),
        ("a ^ b ^ c", ("xor", ("xor", ("var", "a"), ("var", "b")), ("var", "c"))),
    ]:
        expr = parse_expression(text)
        for values in itertools.product((0, 1), repeat=4):
            env = dict(zip(NAMES, values))
            got = to_sympy(expr).subs({sympy.Symbol(n): bool(v) for n, v in env.items()})
            assert bool(got) == bool(evaluate(tree, env))


def test_five_thousand_parentheses_parse():
    assert parse_expression("(" * 5000 + "a" + ")" * 5000) == symbol("a")


def test_deep_operator_nesting_is_a_clear_message():
    text = "a"
    for _index in range(MAX_EXPRESSION_DEPTH + 5):
        text = f"(b | {text}) & c"
    try:
        parse_expression(text)
    except InputError as problem:
        assert "split it into named signals" in str(problem)
    else:
        raise AssertionError("deep nesting was accepted")


def test_five_thousand_nots_are_a_clear_message_or_parse():
    try:
        result = parse_expression("~" * 5000 + "a")
    except InputError as problem:
        assert "deep" in str(problem)
    else:
        assert result == sympy.Symbol("a")
