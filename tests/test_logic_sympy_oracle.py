"""Against sympy's SOPform and POSform on seeded random functions with don't-cares.

Reference library: sympy (``sympy.logic.SOPform`` / ``POSform``, Quine-McCluskey
with a covering heuristic).  Ours must always be equivalent on the care set and
never use more literals: SOPform for f, and POSform's De Morgan dual (an SOP of
~f with the same literal count) for the complement.
"""

import pytest
import sympy
from sympy.logic import POSform, SOPform

from logic_helpers import literal_count, minterms, random_table
from planner.logic import forms, table_from_expr

# 230 functions: most at 2-6 inputs, some at 7 and 8 (SOPform's time grows fast).
CASES = ([(n, seed) for n in range(2, 7) for seed in range(40)]
         + [(7, seed) for seed in range(20)] + [(8, seed) for seed in range(10)])


@pytest.mark.parametrize("n", sorted({n for n, _ in CASES}))
def test_never_worse_than_sympy(n):
    for size, seed in CASES:
        if size != n:
            continue
        table = random_table(n, seed=1000 * n + seed, p_on=0.35 + 0.02 * (seed % 10), p_dc=0.15)
        symbols = sympy.symbols(table.names)
        on, dc = minterms(table.on), minterms(table.dc)
        ref_sop = SOPform(symbols, on, dc)
        ref_pos = POSform(symbols, on, dc)
        ours = forms(table, cover_budget_s=None)  # proven whatever the machine's load
        for expr in (ref_sop, ref_pos, ours.sop.to_expr(), ~ours.inverted.to_expr()):
            got = table_from_expr(expr, table.names)
            assert got.on & table.care == table.on, (n, seed, expr)  # equal on the care set
        assert ours.sop.literals <= literal_count(ref_sop), (n, seed)  # sympy SOPform
        assert ours.inverted.literals <= literal_count(ref_pos), (n, seed)  # sympy POSform, dualised
        assert ours.exact
