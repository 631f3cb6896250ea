"""Random designs (hypothesis): every mode gives a network proven against the design.

The designs are invented by the test (fixtures, not data).  The reference for
each proof is the design's own truth table built by planner.logic, and a second
check by sympy's satisfiable on small cases.
"""

from __future__ import annotations

import pytest
import sympy
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from planner.logic import table_from_expr
from planner.spec import Design, InputSpec, OutputSpec, SignalSpec
from planner.stages import STRATEGIES, SynthesisOptions, prove, repair_fanout, simulate, synthesise

MODES = [
    SynthesisOptions(),
    SynthesisOptions(allow_dual=False),
    SynthesisOptions(diode_fanin=3),
    SynthesisOptions(allow_dual=False, diode_fanin=4),
    SynthesisOptions(mode="nand"),
    SynthesisOptions(mode="nand", diode_fanin=3),
    SynthesisOptions(mode="nor"),
    SynthesisOptions(max_branches=2),
    SynthesisOptions(allow_dual=False, allow_series=True, max_branches=3),
    SynthesisOptions(flatten_limit=4),
]


def expressions(names, depth):
    leaves = st.sampled_from([sympy.Symbol(n) for n in names] + [sympy.true, sympy.false]) \
        if depth == 0 else st.sampled_from([sympy.Symbol(n) for n in names])
    if depth == 0:
        return leaves
    sub = expressions(names, depth - 1)
    return st.one_of(
        leaves,
        st.builds(sympy.Not, sub),
        st.builds(lambda a, b: sympy.And(a, b), sub, sub),
        st.builds(lambda a, b: sympy.Or(a, b), sub, sub),
        st.builds(lambda a, b: sympy.Xor(a, b), sub, sub),
    )


@st.composite
def functions(draw, names):
    """A uniformly random function of up to four of ``names``, as a sum of its minterms."""
    rng = draw(st.randoms(use_true_random=False))
    chosen = rng.sample(names, rng.randint(1, min(4, len(names))))
    bits = rng.getrandbits(1 << len(chosen))
    syms = [sympy.Symbol(n) for n in chosen]
    terms = []
    for m in range(1 << len(chosen)):
        if bits >> m & 1:
            terms.append(sympy.And(*[s if m >> (len(chosen) - 1 - k) & 1 else sympy.Not(s)
                                     for k, s in enumerate(syms)]))
    return sympy.Or(*terms)


@st.composite
def products(draw, names):
    """A don't-care set: a product of two or three literals (a quarter or an eighth of the space)."""
    rng = draw(st.randoms(use_true_random=False))
    chosen = rng.sample(names, min(len(names), rng.randint(2, 3)))
    return sympy.And(*[sympy.Symbol(n) if rng.random() < 0.5 else sympy.Not(sympy.Symbol(n)) for n in chosen])


@st.composite
def designs(draw):
    n = draw(st.integers(1, 6))
    names = [f"i{k}" for k in range(n)]
    inputs = tuple(InputSpec(name, draw(st.booleans())) for name in names)
    signals = []
    known = list(names)
    for k in range(draw(st.integers(0, 3))):
        expr = draw(st.one_of(expressions(known, 3), functions(known)))
        signals.append(SignalSpec(f"s{k}", expr))
        known.append(f"s{k}")
    outputs = []
    for k in range(draw(st.integers(1, 3))):
        expr = draw(st.one_of(expressions(known, 3), functions(known), functions(names)))
        dc = draw(st.one_of(st.just(sympy.false), products(names)))
        outputs.append(OutputSpec(f"o{k}", expr, dc, ""))
    return Design("fuzz", "<hypothesis>", inputs, tuple(signals), tuple(outputs))


def _check(network, d, options):
    prove(network, d)
    values = simulate(network)
    for out in d.outputs:
        t = table_from_expr(d.flatten(out.expr), d.input_names, d.flatten(out.dont_care))
        assert (values[network.outputs[out.name]] ^ t.on) & t.care == 0   # planner.logic truth table
    for stage in network.stages:
        assert len(stage.branches) <= options.branch_limit
        for b in stage.branches:
            assert len(b.inputs) <= options.fanin
            if options.mode == "nor":
                assert len(b.inputs) == 1


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(designs(), st.sampled_from(MODES))
def test_random_designs_are_proven_in_every_mode(d, options):
    """Every synthesised network computes the design on its care set (planner.logic truth tables)."""
    result = synthesise(d, options)
    _check(result.network, d, options)
    assert synthesise(d, options).network == result.network     # deterministic


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(designs(), st.sampled_from(STRATEGIES))
def test_random_designs_repaired_at_fanout_two(d, strategy):
    """repair_fanout at fan-out 2 (followers 3) keeps the function and meets the limit everywhere."""
    limit = lambda s: 3 if s.kind == "follower" else 2  # noqa: E731
    network = repair_fanout(synthesise(d).network, limit, strategy=strategy)
    _check(network, d, SynthesisOptions())
    counts = network.load_counts()
    assert all(counts[s.output] <= limit(s) for s in network.stages)


@pytest.mark.fuzz_long
@settings(max_examples=10_000, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(designs(), st.sampled_from(MODES))
def test_random_designs_long_run(d, options):
    """The long run of the same property (``pytest -m fuzz_long``)."""
    _check(synthesise(d, options).network, d, options)
    _check(repair_fanout(synthesise(d, options).network, lambda s: 2, strategy="duplicates"), d, options)
