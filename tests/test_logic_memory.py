"""The heuristic minimiser in bounded memory: Minato's irredundant cover as its start, and a
clear refusal (exit 2) for a block past its limits, never a MemoryError."""

import random

import sympy

import planner.logic.heuristic as heuristic
from planner.logic import minimise, table_from_expr
from planner.logic.isop import isop_cubes


def _random_sop(n, terms, seed):
    """A seeded random sum of products over n inputs (invented data)."""
    rng = random.Random(seed)
    xs = sympy.symbols(" ".join(f"x{k}" for k in range(n)))
    products = []
    for _ in range(terms):
        chosen = rng.sample(xs, rng.randint(3, 5))
        products.append(sympy.And(*[x if rng.random() < 0.5 else ~x for x in chosen]))
    return sympy.Or(*products), tuple(str(x) for x in xs)


def test_irredundant_cover_equals_the_function_by_sympy():
    """Reference: sympy's own evaluation of the expression (subs) at every assignment, and of
    the cover's expression; no cube of the cover can be dropped (irredundant)."""
    expr, names = _random_sop(6, 7, seed=4)
    dont = sympy.Symbol("x0") & sympy.Symbol("x5") & sympy.Symbol("x3")
    table = table_from_expr(expr, names, dont)
    cubes = isop_cubes(table, 1000)
    symbols = sympy.symbols(names)

    def product(mask, value):
        n = len(names)
        return sympy.And(*[symbols[k] if value >> (n - 1 - k) & 1 else ~symbols[k]
                           for k in range(n) if mask >> (n - 1 - k) & 1])

    cover = sympy.Or(*[product(m, v) for m, v in cubes])
    for index in range(1 << len(names)):
        point = {s: bool(index >> (len(names) - 1 - k) & 1) for k, s in enumerate(symbols)}
        if bool(dont.subs(point)):
            continue
        assert bool(cover.subs(point)) == bool(expr.subs(point)), index
    for drop in range(len(cubes)):
        rest = sympy.Or(*[product(m, v) for k, (m, v) in enumerate(cubes) if k != drop])
        assert sympy.satisfiable(expr & ~dont & ~rest) is not False  # dropping any cube loses a point


def test_start_from_the_irredundant_cover_when_bitsets_would_not_fit(monkeypatch):
    # A memory budget too small for a bitset per minterm: the start is Minato's cover; the
    # result is still checked against the table inside minimise (it raises otherwise).
    expr, names = _random_sop(12, 9, seed=7)
    table = table_from_expr(expr, names)
    normal = minimise(table)
    monkeypatch.setattr(heuristic, "MEMORY_BUDGET_BYTES", 64 * 1024)
    small = minimise(table)
    assert small.bits() & table.care == table.on
    assert small.literals <= 1.2 * normal.literals  # invented bound on the quality lost
    monkeypatch.setattr(heuristic, "MEMORY_BUDGET_BYTES", 1)  # not even a bitset per cube
    bare = minimise(table)
    assert bare.bits() & table.care == table.on and not bare.exact


def test_a_block_past_the_limits_exits_2_with_a_clear_message(write, run_cli, monkeypatch):
    monkeypatch.setattr(heuristic, "MEMORY_BUDGET_BYTES", 1)
    monkeypatch.setattr(heuristic, "MAX_COVER_CUBES", 10)
    names = [f"x{k}" for k in range(11)]
    path = write("design.yaml", f"""\
        design: parity
        inputs: [{", ".join(names)}]
        outputs:
          p: {" ^ ".join(names)}
        """)
    status, out, err = run_cli("logic", path)
    assert status == 2
    assert err.splitlines()[-1].startswith(f"{path}:4:")
    assert "beyond the minimiser's limits" in err and "Traceback" not in err
