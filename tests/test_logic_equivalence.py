"""Equivalence checking: exhaustive up to 20 inputs, SAT (CaDiCaL through python-sat) above."""

import functools
import operator

import pytest
import sympy

from planner.logic import EXHAUSTIVE_LIMIT, counterexample, equivalent


def _xs(n):
    return sympy.symbols(" ".join(f"x{k}" for k in range(n)))


def _ripple_carry(a, b):
    """Carry out of a ripple-carry adder (common practice: c' = ab | c(a ^ b))."""
    carry = sympy.false
    for x, y in zip(a, b):
        carry = x & y | carry & (x ^ y)
    return carry


def _lookahead_carry(a, b):
    """The same carry as a sum of generate/propagate products (common practice)."""
    terms = []
    for i in range(len(a)):
        g = a[i] & b[i]
        props = [a[j] ^ b[j] for j in range(i + 1, len(a))]
        terms.append(sympy.And(g, *props))
    return sympy.Or(*terms)


@pytest.mark.parametrize("bits", [4, 10, 12])
def test_adder_carry_forms_agree(bits):
    # 2*bits inputs: 8 and 20 exhaustive, 24 by SAT.
    a, b = _xs(bits), sympy.symbols(" ".join(f"y{k}" for k in range(bits)))
    assert equivalent(_ripple_carry(a, b), _lookahead_carry(a, b))
    wrong = _lookahead_carry(a, b) | (a[0] & ~b[-1] & a[-1])
    cex = counterexample(_ripple_carry(a, b), wrong)
    assert cex is not None
    point = {sympy.Symbol(k): v for k, v in cex.items()}
    assert bool(_ripple_carry(a, b).subs(point)) != bool(wrong.subs(point))


def test_sat_path_above_the_exhaustive_limit():
    n = EXHAUSTIVE_LIMIT + 6
    xs = _xs(n)
    parity = functools.reduce(operator.xor, xs)
    # De Morgan on a wide AND, and parity rebuilt from its two halves (common practice).
    assert equivalent(~sympy.And(*xs), sympy.Or(*[~x for x in xs]))
    halves = functools.reduce(operator.xor, xs[: n // 2]) ^ functools.reduce(operator.xor, xs[n // 2:])
    assert equivalent(parity, halves)
    # Differ only where all inputs are 1; a care set that excludes that point hides it.
    broken = parity ^ sympy.And(*xs)
    cex = counterexample(parity, broken)
    assert cex == {f"x{k}": True for k in range(n)}
    assert equivalent(parity, broken, care=~sympy.And(*xs))


def test_counterexample_is_the_lowest_assignment_in_the_exhaustive_range():
    x, y, z = sympy.symbols("x y z")
    # x | y and x ^ y differ only at x = y = 1 (assignments 6 and 7 of (x, y, z)); 6 is lowest.
    assert counterexample(x | y, x ^ y, names=("x", "y", "z")) == {"x": True, "y": True, "z": False}
    assert equivalent(x & ~x, sympy.false) and not equivalent(x, y)
    with pytest.raises(ValueError, match="not among the inputs"):
        equivalent(x, y, names=("x",))


def test_sat_and_exhaustive_paths_agree():
    # The same small miters, once over their own 4 inputs (exhaustive) and once with
    # unused inputs added past the limit (SAT); the answers must match.
    p, q, r, s = sympy.symbols("p q r s")
    pad = tuple(f"u{k}" for k in range(EXHAUSTIVE_LIMIT))
    pairs = [
        (p & (q | r), p & q | p & r),
        (p ^ q ^ r, (p ^ r) ^ q),
        (p ^ q, p | q),
        (~(p & q & r & s), ~p | ~q | ~r | ~s),
        (p & q | ~p & r, (p | r) & (~p | q)),
        (p & q | ~p & r, (p | r) & (~p | s)),
    ]
    for f, g in pairs:
        small = equivalent(f, g, names=("p", "q", "r", "s"))
        wide = counterexample(f, g, names=("p", "q", "r", "s") + pad)
        assert small == (wide is None), (f, g)
        if wide is not None:
            point = {sympy.Symbol(k): v for k, v in wide.items() if k in "pqrs"}
            assert bool(f.subs(point)) != bool(g.subs(point))


@pytest.mark.parametrize("solver", ["cadical", "sympy-dpll"])
def test_both_sat_solvers_give_the_same_verdicts(solver):
    # The small miters of test_sat_and_exhaustive_paths_agree, padded past the limit, by each
    # solver: the verdict matches the exhaustive one (the reference), and every counterexample
    # re-evaluates by sympy's subs as a real difference.
    p, q, r, s = sympy.symbols("p q r s")
    pad = tuple(f"u{k}" for k in range(EXHAUSTIVE_LIMIT))
    pairs = [(p ^ q ^ r, (p ^ r) ^ q), (p ^ q, p | q), (p & q | ~p & r, (p | r) & (~p | s))]
    for f, g in pairs:
        small = equivalent(f, g, names=("p", "q", "r", "s"))
        wide = counterexample(f, g, names=("p", "q", "r", "s") + pad, sat_solver=solver)
        assert small == (wide is None), (f, g)
        if wide is not None:
            point = {sympy.Symbol(k): v for k, v in wide.items() if k in "pqrs"}
            assert bool(f.subs(point)) != bool(g.subs(point))
    with pytest.raises(ValueError, match="unknown SAT solver"):
        counterexample(p, q, sat_solver="guess")
