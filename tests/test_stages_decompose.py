"""Fan-in decomposition: minimality by exhaustive search, De Morgan on every rewrite."""

from __future__ import annotations

import itertools
import random

import pytest
import sympy
from sympy.logic.inference import satisfiable

from planner.logic import table_from_expr
from planner.stages import SynthesisOptions, simulate
from planner.stages.builder import Builder
from planner.stages.decompose import Decomposer
from planner.stages.simulate import input_patterns, network_exprs


def _min_sections(m: int, fanin: int, max_branches: int, target: int, budget: int) -> bool:
    """True if some stage network of at most ``budget`` sections, over ``m`` inputs given in true
    polarity only, has a net equal to ``target``.  Exhaustive: every stage is any set of at most
    ``max_branches`` branches, each the AND of at most ``fanin`` nets available so far (one
    section a branch); states are sets of functions, so stage order does not matter.
    """
    full = (1 << (1 << m)) - 1
    patterns, _ = input_patterns(tuple(f"x{i}" for i in range(m)))
    start = frozenset(patterns.values())
    seen: dict[frozenset, int] = {}

    def branches(funcs):
        out = {}
        for size in range(1, fanin + 1):
            for combo in itertools.combinations(sorted(funcs), size):
                v = full
                for f in combo:
                    v &= f
                out.setdefault(v, combo)
        return out

    def final_stage(funcs, left):
        # A last stage makes the target when its branches' ORs give exactly ~target.
        off = full & ~target
        useful = sorted({v for v in branches(funcs) if v & target == 0 and v})
        for size in range(1, min(left, max_branches) + 1):
            for combo in itertools.combinations(useful, size):
                acc = 0
                for v in combo:
                    acc |= v
                if acc == off:
                    return True
        return False

    def search(funcs, left):
        if target in funcs:
            return True
        if left < 1 or seen.get(funcs, -1) >= left:
            return False
        seen[funcs] = left
        if final_stage(funcs, left):
            return True
        options = sorted(branches(funcs))
        for size in range(1, min(left - 1, max_branches) + 1):
            for combo in itertools.combinations(options, size):
                acc = 0
                for v in combo:
                    acc |= v
                f = full & ~acc
                if f not in funcs and search(funcs | {f}, left - size):
                    return True
        return False

    return search(start, budget)


def _and_nand(m):
    patterns, full = input_patterns(tuple(f"x{i}" for i in range(m)))
    v = full
    for f in patterns.values():
        v &= f
    return v, full & ~v


@pytest.mark.parametrize("m, fanin, max_branches", [(2, 2, 6), (3, 2, 6), (4, 2, 6), (5, 2, 6), (4, 2, 2),
                                                     (4, 3, 6), (5, 3, 6), (2, 1, 6), (3, 1, 6), (4, 1, 6)])
def test_dynamic_program_is_minimal_for_small_widths(m, fanin, max_branches):
    """The decomposition's section counts for AND-m and NAND-m nets equal the exhaustive minimum
    over all stage networks (inputs in true polarity only).  Source: exhaustive search (this file)."""
    d = Decomposer(fanin=fanin, max_branches=max_branches, branch_cost=lambda j: (1, 0, 0))
    and_bits, nand_bits = _and_nand(m)
    for bits, cost in ((and_bits, d.and_net(0, m)[0][0]), (nand_bits, d.nand_net(0, m)[0][0])):
        assert _min_sections(m, fanin, max_branches, bits, cost), "the DP's structure must exist"
        assert not _min_sections(m, fanin, max_branches, bits, cost - 1), "nothing smaller may exist"


def test_four_literal_product_figures():
    """abcd with dual-control sections: NOT(NAND(a,b) | NAND(c,d)) is an AND-4 net of 4 sections;
    a branch on abcd costs 5 (the AND-4 net plus its own section).  Checked minimal above."""
    d = Decomposer(fanin=2, max_branches=6, branch_cost=lambda j: (1, 0, 0))
    assert d.and_net(0, 4) == ((4, 3, 0), ("groups", ((0, 2), (0, 2))))
    assert d.branch(0, 4)[0][0] == 5


def _sympy_equal(a, b) -> bool:
    """Equality of two expressions by sympy's SAT solver (an outside reference: sympy)."""
    return satisfiable(sympy.Xor(a, b)) is False


def _check_rewrite(builder, inputs, complements, net, expected):
    """Before/after of one rewrite: the sub-network for ``net`` equals ``expected`` by truth table
    (our bit-parallel simulation) and by sympy."""
    network = builder.network(inputs, complements, {"y": net}, {}, {}, {})
    values = simulate(network)
    assert values[network.outputs["y"]] == table_from_expr(expected, inputs).on
    assert _sympy_equal(network_exprs(network)[network.outputs["y"]], expected)   # sympy satisfiable
    for stage in network.stages:
        for b in stage.branches:
            assert len(b.inputs) <= builder.options.fanin
        assert len(stage.branches) <= builder.options.branch_limit
    return network


OPTIONS = [SynthesisOptions(), SynthesisOptions(allow_dual=False), SynthesisOptions(diode_fanin=3),
           SynthesisOptions(mode="nand"), SynthesisOptions(mode="nor"), SynthesisOptions(max_branches=2),
           SynthesisOptions(allow_dual=False, allow_series=True, max_branches=3)]


@pytest.mark.parametrize("options", OPTIONS, ids=lambda o: f"{o.mode}-k{o.fanin}-b{o.branch_limit}")
def test_de_morgan_on_every_rewrite(options):
    """Every rewrite the builder makes keeps the function (De Morgan: AND(L) = NOT(OR ~l),
    NAND(P u Q) = NAND(P) | NAND(Q), NOT(T1|..|Tm) = AND(NOT Ti)); checked per step by truth
    table and by sympy's satisfiable."""
    rng = random.Random(7)
    names = tuple(f"x{i}" for i in range(7))
    syms = {n: sympy.Symbol(n) for n in names}
    for _trial in range(12):
        complements = tuple(n for n in names if rng.random() < 0.4)
        b = Builder(options, {n: "~" + n for n in complements})
        k = rng.randint(1, 7)
        ops = rng.sample(names, k)
        _check_rewrite(b, names, complements, b.and_net(ops), sympy.And(*[syms[o] for o in ops]))
        _check_rewrite(b, names, complements, b.nand_net(ops), sympy.Not(sympy.And(*[syms[o] for o in ops])))
        branch = b.branch_inputs(ops)
        assert len(branch) <= options.fanin
        net = b.stage([branch])
        _check_rewrite(b, names, complements, net, sympy.Not(sympy.And(*[syms[o] for o in ops])))
        terms = [rng.sample(names, rng.randint(1, 4)) for _ in range(rng.randint(1, 9))]
        expected = sympy.Not(sympy.Or(*[sympy.And(*[syms[x] for x in t]) for t in terms]))
        _check_rewrite(b, names, complements, b.aoi_net(terms), expected)
        x = rng.choice(names)
        _check_rewrite(b, names, complements, b.complement(x), sympy.Not(syms[x]))
