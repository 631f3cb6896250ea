"""Design-syntax text: covers, both polarities, and format_expr."""

import itertools

import pytest
import sympy

from logic_helpers import eval_design_text
from planner.logic import (
    Cover, Cube, equivalent, expr_forms, format_expr, forms, table_from_expr, table_from_minterms,
    used_inputs,
)
from planner.spec import parse_expression

a, b, c, d = sympy.symbols("a b c d")


def test_cover_text_style():
    xor = forms(table_from_minterms(("a", "b"), [1, 2]))
    assert xor.sop_text == "a & ~b | ~a & b"
    assert xor.inverted_text == "~(a & b | ~a & ~b)"
    assert (xor.sop.literals, xor.inverted.literals, xor.exact) == (4, 4, True)
    nand = forms(table_from_minterms(("a", "b"), [0, 1, 2]))
    assert (nand.sop_text, nand.inverted_text) == ("~a | ~b", "~(a & b)")


def test_constant_functions_print_as_0_and_1():
    one = forms(table_from_minterms(("a",), [0, 1]))
    zero = forms(table_from_minterms(("a",), []))
    assert (one.sop_text, one.inverted_text) == ("1", "1")
    assert (zero.sop_text, zero.inverted_text) == ("0", "0")
    assert Cover((), (), exact=True).text() == "0"
    assert Cover(("a",), (Cube(0, 0),), exact=True).to_expr() == sympy.true


def test_cube_order_is_canonical():
    # Input order first, positive before negative, absent last.
    c1 = Cover(("a", "b", "c"), (Cube(0b001, 0b001), Cube(0b110, 0b000), Cube(0b110, 0b100)), exact=False)
    assert c1.text() == "a & ~b | ~a & ~b | c"
    c2 = Cover(("a", "b", "c"), tuple(reversed(c1.cubes)), exact=False)
    assert c2 == c1


@pytest.mark.parametrize("expr, text", [
    ((a & ~b) | (c ^ (a | b)), "(a | b) ^ c | a & ~b"),
    (~(a & b), "~(a & b)"),
    (~(a ^ b), "~(a ^ b)"),
    ((a ^ b) & c, "(a ^ b) & c"),
    (a ^ (b & c), "a ^ b & c"),
    ((a | b) & (c | d), "(a | b) & (c | d)"),
    (sympy.false, "0"),
])
def test_format_expr_parenthesises_only_where_needed(expr, text):
    assert format_expr(expr) == text


@pytest.mark.parametrize("expr", [
    (a & ~b) | (c ^ (a | b)), ~(a | b) & (c ^ d), sympy.Xor(a, b, c) | (a & b & ~d),
    sympy.Nand(a, b) ^ sympy.Implies(c, d), sympy.ITE(a, b, c), sympy.Equivalent(a, b, c),
])
def test_format_round_trips_through_the_design_parser(expr):
    text = format_expr(expr)
    assert equivalent(parse_expression(text), expr)
    names = ("a", "b", "c", "d")
    for values in itertools.product([False, True], repeat=4):
        point = dict(zip(names, values))
        # Reference: sympy's substitution.
        assert eval_design_text(text, point) == bool(expr.subs(dict(zip((a, b, c, d), values))))


def test_forms_text_parses_back_to_the_function():
    f = (a & b) | (c & ~d) | (a & ~c & d)
    dont_care = a & b & c & d
    care = ~dont_care
    fm = expr_forms(f, ("d", "c", "b", "a"), dont_care)
    assert fm.sop.names == ("d", "c", "b", "a")
    for text in (fm.sop_text, fm.inverted_text):
        assert equivalent(parse_expression(text), f, care=care)


def test_used_inputs_keeps_design_order():
    assert used_inputs(("d", "a", "c", "b"), a & c, sympy.false) == ("a", "c")
    with pytest.raises(ValueError, match="not among the inputs"):
        used_inputs(("a",), a & b)
    t = table_from_expr(a | b, used_inputs(("b", "a"), a | b))
    assert t.names == ("b", "a")
