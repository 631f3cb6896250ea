"""The formula type against sympy, the reference library whose canonical form it keeps.

sympy (PyPI ``sympy``, ``sympy.logic.boolalg``) is the outside source: every random
formula built by our constructors must convert to exactly the expression sympy's
own ``Not``/``And``/``Or``/``Xor`` build from the same operands, use the same names,
have the same tree shape, and evaluate the same.
"""

from __future__ import annotations

import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

from planner.formula import (FALSE, TRUE, Formula, as_formula, conjoin, disjoin, exclusive, from_sympy, negate,
                             shape, substitute, symbol, to_sympy)

NAMES = ("a", "b", "c", "d")

# A random expression as a recipe: (op, operands...) with names and constants at the leaves.
leaves = st.sampled_from(NAMES + ("0", "1"))
recipes = st.recursive(leaves, lambda inner: st.one_of(
    st.tuples(st.just("not"), inner),
    st.tuples(st.sampled_from(("and", "or", "xor")), inner, inner),
    st.tuples(st.sampled_from(("and", "or", "xor")), inner, inner, inner)), max_leaves=14)


def ours(recipe) -> Formula:
    if isinstance(recipe, str):
        return {"0": FALSE, "1": TRUE}[recipe] if recipe in "01" else symbol(recipe)
    op, *args = recipe
    built = [ours(a) for a in args]
    return {"not": lambda: negate(built[0]), "and": lambda: conjoin(*built), "or": lambda: disjoin(*built),
            "xor": lambda: exclusive(*built)}[op]()


def theirs(recipe) -> sympy.Basic:
    if isinstance(recipe, str):
        return {"0": sympy.false, "1": sympy.true}[recipe] if recipe in "01" else sympy.Symbol(recipe)
    op, *args = recipe
    built = [theirs(a) for a in args]
    return {"not": sympy.Not, "and": sympy.And, "or": sympy.Or, "xor": sympy.Xor}[op](*built)


def sympy_shape(expr) -> tuple[int, int]:
    if not expr.args:
        return (1, 0)
    shapes = [sympy_shape(a) for a in expr.args]
    return (1 + sum(n for n, _ in shapes), 1 + max(d for _, d in shapes))


@settings(max_examples=400, deadline=None)
@given(recipes)
def test_same_canonical_form_as_sympy(recipe):
    formula, reference = ours(recipe), theirs(recipe)
    # sympy.logic.boolalg: the same node, argument for argument (srepr compares the whole tree)
    assert sympy.srepr(to_sympy(formula)) == sympy.srepr(reference)
    assert from_sympy(reference) == formula
    assert formula.names == {s.name for s in reference.free_symbols}
    assert shape(formula) == sympy_shape(reference)


@settings(max_examples=200, deadline=None)
@given(recipes, recipes)
def test_equal_exactly_when_sympy_is(left, right):
    # Structural equality as sympy's ==, and text as the identity
    assert (ours(left) == ours(right)) == (theirs(left) == theirs(right))
    assert (ours(left).text == ours(right).text) == (ours(left) == ours(right))


@settings(max_examples=200, deadline=None)
@given(recipes, recipes)
def test_substitute_as_sympy_xreplace(recipe, definition):
    # sympy's xreplace rebuilds each node with its constructor, as substitute does
    replaced = substitute(ours(recipe), {"a": ours(definition)})
    assert replaced == from_sympy(theirs(recipe).xreplace({sympy.Symbol("a"): theirs(definition)}))


def test_other_sympy_connectives_are_rewritten():
    a, b, c = sympy.symbols("a b c")
    assert from_sympy(sympy.Nand(a, b)) == ~(symbol("a") & symbol("b"))
    assert from_sympy(sympy.ITE(a, b, c)) == symbol("a") & symbol("b") | ~symbol("a") & symbol("c")
    assert as_formula(symbol("a")) is not None


def test_text_is_design_syntax_with_needed_parentheses():
    a, b, c = symbol("a"), symbol("b"), symbol("c")
    assert str(~(a & b) | c ^ (a | b)) == "(a | b) ^ c | ~(a & b)"
    assert repr(a ^ TRUE) == "Formula('~a')"
