"""Truth tables as bitsets: bit order, evaluation against sympy, deep nesting."""

import itertools
import sys
import threading

import pytest
import sympy
from sympy.logic.boolalg import ITE, Equivalent, Implies, Nand, Nor, Xnor

from logic_helpers import eval_design_text
from planner.logic import (
    TruthTable, counterexample, equivalent, format_expr, minimise, symbol_names, table_from_expr, table_from_minterms,
)

a, b, c, d = sympy.symbols("a b c d")


def test_first_name_is_most_significant_bit():
    # a is 1 in assignments 2 and 3 of (a, b): bits 0b1100.
    assert table_from_expr(a, ("a", "b")).on == 0b1100
    assert table_from_expr(b, ("a", "b")).on == 0b1010
    assert table_from_minterms(("a", "b"), [2, 3]).on == table_from_expr(a, ("a", "b")).on


@pytest.mark.parametrize("expr", [
    a & ~b | c, a ^ b ^ c, ~(a | b) & (c ^ d), Nand(a, b, c), Nor(a, d), Xnor(a, b, c),
    Implies(a, b), Equivalent(a, b, c), ITE(a, b, c), sympy.true, sympy.false, a & sympy.true,
])
def test_table_matches_sympy_substitution(expr):
    # Reference: sympy's own evaluation of the expression at each assignment (subs).
    names = ("a", "b", "c", "d")
    table = table_from_expr(expr, names)
    for i, values in enumerate(itertools.product([False, True], repeat=4)):
        expected = bool(expr.subs(dict(zip(sympy.symbols(names), values))))
        assert bool(table.on >> i & 1) == expected, (expr, values)


def test_dont_care_wins_over_on():
    t = table_from_expr(a | b, ("a", "b"), dont_care=a & b)
    assert t.on == 0b0110 and t.dc == 0b1000 and t.off == 0b0001
    assert t.care == 0b0111


def test_bad_tables_are_refused():
    with pytest.raises(ValueError, match="not among the inputs"):
        table_from_expr(a & c, ("a", "b"))
    with pytest.raises(ValueError, match="outside"):
        table_from_minterms(("a",), [2])
    with pytest.raises(ValueError, match="both on and don't-care"):
        table_from_minterms(("a", "b"), [1, 2], dont_care=[2])
    with pytest.raises(ValueError, match=r"^input names repeat: \('a', 'a'\)$"):
        TruthTable(("a", "a"), 0)
    with pytest.raises(ValueError, match=r"^an assignment is in both the on-set and the don't-care set$"):
        TruthTable(("a",), 0b1, 0b1)


def _deep(depth: int, raw: bool) -> sympy.Basic:
    """a & (b | (c & (d | (a & ...)))), built from the inside out.

    sympy's own And/Or constructors sort their arguments by node count, which
    recurses through the whole subtree, so with ``raw=False`` the caller must
    raise the recursion limit; ``raw=True`` builds the same tree with
    ``Basic.__new__`` (no argument processing), so any depth can be made.
    """
    names = [a, b, c, d]
    expr = sympy.Symbol("d")
    for level in range(depth - 1, -1, -1):
        x = names[level % 4]
        op = sympy.And if level % 2 == 0 else sympy.Or
        expr = sympy.Basic.__new__(op, x, expr) if raw else op(x, expr)
    return expr


def _deep_value(depth: int, values: dict[str, bool]) -> bool:
    """The same expression evaluated by a plain loop from the innermost term out."""
    order = "abcd"
    v = values["d"]
    for level in range(depth - 1, -1, -1):
        x = values[order[level % 4]]
        v = (x and v) if level % 2 == 0 else (x or v)
    return v


def _check_deep(expr: sympy.Basic, depth: int) -> None:
    names = ("a", "b", "c", "d")
    table = table_from_expr(expr, names)
    for i, values in enumerate(itertools.product([False, True], repeat=4)):
        assert bool(table.on >> i & 1) == _deep_value(depth, dict(zip(names, values)))
    assert symbol_names(expr) == frozenset(names)
    text = format_expr(expr)
    for values in itertools.product([False, True], repeat=4):
        point = dict(zip(names, values))
        assert eval_design_text(text, point) == _deep_value(depth, point)
    cover = minimise(table)
    assert equivalent(cover.to_expr(), expr, names)
    assert counterexample(cover.to_expr() ^ a, expr, names) is not None


def test_deep_nesting_built_by_sympy_constructors():
    """Built with a raised recursion limit in a thread; then used at the default limit."""
    depth = 1500  # past the default recursion limit of 1000
    out = []
    old_limit = sys.getrecursionlimit()
    old_stack = threading.stack_size()
    try:
        sys.setrecursionlimit(20 * depth)
        threading.stack_size(256 * 1024 * 1024)
        worker = threading.Thread(target=lambda: out.append(_deep(depth, raw=False)))
        worker.start()
        worker.join()
    finally:
        sys.setrecursionlimit(old_limit)
        threading.stack_size(old_stack)
    _check_deep(out[0], depth)


def test_very_deep_nesting_has_no_recursion_limit():
    _check_deep(_deep(20000, raw=True), 20000)


def test_budget_stopped_cover_is_correct_and_reports_its_gap():
    """A 10-input function (seeded, invented) whose cyclic core CBC cannot finish in 0.01 s:
    the cover returned is still a cover (checked here against the truth table, independently of
    the minimiser's own check), not marked proven, and its gap is (literals - bound) / literals
    with a bound no higher than the proven minimum found without a budget."""
    import random

    from planner.logic import minimise, table_from_minterms

    rng = random.Random(1)
    on, dc = [], []
    for i in range(1 << 10):
        u = rng.random()
        if u < 0.2:
            dc.append(i)
        elif u < 0.6:
            on.append(i)
    table = table_from_minterms([f"x{k}" for k in range(10)], on, dc)
    stopped = minimise(table, cover_budget_s=0.01)
    bits = stopped.bits()
    assert not table.on & ~bits and not bits & table.off
    assert not stopped.exact and stopped.literal_bound is not None
    assert stopped.gap == (stopped.literals - stopped.literal_bound) / stopped.literals > 0
    proven = minimise(table, cover_budget_s=None)
    assert proven.exact and proven.gap == 0.0
    assert stopped.literal_bound <= proven.literals <= stopped.literals
