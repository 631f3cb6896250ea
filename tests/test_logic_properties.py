"""Hypothesis property tests: random tables up to 8 inputs with don't-cares."""

import sympy
from hypothesis import HealthCheck, event, given, settings
from hypothesis import strategies as st

from logic_helpers import eval_design_text
from planner.logic import (
    Cube, TruthTable, equivalent, format_expr, forms, minimise, minimise_complement, table_from_expr,
)
from planner.logic.table import Space


@st.composite
def tables(draw, max_inputs=8):
    """A table drawn row by row: each assignment on, off or don't-care."""
    n = draw(st.integers(0, max_inputs))
    p_dc = draw(st.sampled_from([0.0, 0.1, 0.3]))
    p_on = draw(st.floats(0.05, 0.95))
    rng = draw(st.randoms(use_true_random=False))
    on = dc = 0
    for i in range(1 << n):
        u = rng.random()
        if u < p_dc:
            dc |= 1 << i
        elif u < p_dc + (1 - p_dc) * p_on:
            on |= 1 << i
    return TruthTable(tuple(f"v{k}" for k in range(n)), on, dc)


def _check_prime_irredundant(table, cover):
    """Each cube is a prime implicant (inside on|dc, no literal removable) and none is redundant."""
    space = Space(table.n)
    bits = [space.cube_bits(c.mask, c.value) for c in cover.cubes]
    for cube, b in zip(cover.cubes, bits):
        assert not b & table.off
        for p in range(table.n):
            if cube.mask >> p & 1:
                bigger = Cube(cube.mask & ~(1 << p), cube.value & ~(1 << p))
                assert space.cube_bits(bigger.mask, bigger.value) & table.off, "not prime"
    for i, b in enumerate(bits):
        others = 0
        for j, other in enumerate(bits):
            if j != i:
                others |= other
        assert b & table.on & ~others, "redundant cube"


SETTINGS = settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])


@SETTINGS
@given(tables())
def test_exact_cover_is_equivalent_prime_and_irredundant(table):
    event(f"{table.n} inputs")
    cover = minimise(table, cover_budget_s=None)  # no time budget: exactness must not depend on the machine's load
    assert cover.bits() & table.care == table.on
    assert cover.exact
    _check_prime_irredundant(table, cover)
    comp = minimise_complement(table)
    assert comp.bits() & table.care == table.off


@SETTINGS
@given(tables())
def test_heuristic_is_never_wrong_and_never_beats_exact(table):
    heuristic = minimise(table, exact_limit=0)
    assert heuristic.bits() & table.care == table.on
    _check_prime_irredundant(table, heuristic)
    exact = minimise(table, cover_budget_s=None)  # the proven minimum whatever the machine's load
    assert (exact.literals, exact.terms) <= (heuristic.literals, heuristic.terms)
    if heuristic.exact:  # claimed minimum: then it must cost what the exact one costs
        assert (heuristic.literals, heuristic.terms) == (exact.literals, exact.terms)


@SETTINGS
@given(tables(max_inputs=6))
def test_forms_text_denotes_the_function_on_its_care_set(table):
    fm = forms(table)
    names = table.names
    for i in range(1 << table.n):
        if table.dc >> i & 1:
            continue
        point = {name: bool(i >> (table.n - 1 - k) & 1) for k, name in enumerate(names)}
        want = bool(table.on >> i & 1)
        assert eval_design_text(fm.sop_text, point) == want
        assert eval_design_text(fm.inverted_text, point) == want


@st.composite
def expressions(draw):
    names = sympy.symbols("p q r s")
    leaves = st.sampled_from(list(names) + [sympy.true, sympy.false])
    tree = st.recursive(leaves, lambda kids: st.one_of(
        kids.map(sympy.Not),
        st.tuples(kids, kids).map(lambda ab: sympy.And(*ab)),
        st.tuples(kids, kids).map(lambda ab: sympy.Or(*ab)),
        st.tuples(kids, kids).map(lambda ab: sympy.Xor(*ab)),
    ), max_leaves=12)
    return draw(tree)


@SETTINGS
@given(expressions(), expressions())
def test_tables_text_and_equivalence_agree_with_sympy(f, g):
    names = ("p", "q", "r", "s")
    # Reference: sympy's substitution of each assignment.
    table = table_from_expr(f, names)
    for i in range(16):
        point = {sympy.Symbol(n): bool(i >> (3 - k) & 1) for k, n in enumerate(names)}
        assert bool(table.on >> i & 1) == bool(f.subs(point))
        text_value = eval_design_text(format_expr(f), {str(k): v for k, v in point.items()})
        assert text_value == bool(f.subs(point))
    # Reference: sympy's satisfiable on the miter.
    assert equivalent(f, g, names) == (sympy.satisfiable(sympy.Xor(f, g)) is False)


def test_time_limit_keeps_a_correct_cover():
    # With no time for the improvement passes, the first irredundant prime cover
    # is returned: still correct on the care set, not claimed minimum.
    from logic_helpers import random_table

    table = random_table(12, seed=7)
    quick = minimise(table, time_limit_s=0.0)
    assert quick.bits() & table.care == table.on and not quick.exact
    full = minimise(table)
    assert full.literals <= quick.literals
