"""The stage network IR: validation, textbook views, loads, simulation."""

from __future__ import annotations

import pytest
import sympy
from sympy.logic.boolalg import truth_table

from planner.stages import Branch, Network, Stage, input_patterns, simulate, stage_view
from planner.stages.simulate import network_exprs


def b(*inputs, means=None):
    return Branch(inputs, means or ("single" if len(inputs) == 1 else "dual"))


@pytest.mark.parametrize("branches, view", [
    ((b("a"),), "inverter"),
    ((b("a"), b("b")), "NOR-2"),
    ((b("a"), b("b"), b("c"), b("d")), "NOR-4"),
    ((b("a", "b"),), "NAND-2"),
    ((Branch(("a", "b", "c"), "diode"),), "NAND-3"),
    ((b("a", "b"), b("c", "d")), "AOI 2-2"),
    ((b("e"), b("a", "b"), b("c", "d")), "AOI 2-2-1"),
    ((), "pull-up (constant 1)"),
])
def test_textbook_views(branches, view):
    """Names as in the logic-family literature (common practice): AOI shape lists branch widths."""
    assert stage_view("inverting", branches) == view                    # common practice names
    assert Stage("S1", "n1", "inverting", branches).view == view


def test_branch_and_stage_checks():
    with pytest.raises(ValueError, match=r"^a single branch cannot have 2 inputs$"):
        Branch(("a", "b"), "single")
    with pytest.raises(ValueError, match=r"^a diode branch cannot have 1 inputs$"):
        Branch(("a",), "diode")
    with pytest.raises(ValueError, match=r"^branch inputs repeat: \('a', 'a'\)$"):
        Branch(("a", "a"), "dual")
    with pytest.raises(ValueError, match=r"^a follower has one input and no branches$"):
        Stage("S1", "n1", "follower", (b("a"),))
    with pytest.raises(ValueError, match="does not describe"):
        Stage("S1", "n1", "inverting", (b("a"),), view="NAND-2")
    assert Branch(("a", "b"), "series").sections == 2
    assert Branch(("a", "b", "c"), "diode").diodes == 3


def test_network_checks_driving_order():
    with pytest.raises(ValueError, match="before it is driven"):
        Network(("a",), (Stage("S1", "n1", "inverting", (b("n2"),)),), {"y": "n1"})
    with pytest.raises(ValueError, match="nothing drives"):
        Network(("a",), (), {"y": "n9"})


def test_loads_count_grids_and_outputs():
    net = Network(("a", "b"), (Stage("S1", "n1", "inverting", (b("a", "b"), b("a"))),
                               Stage("S2", "n2", "follower", input="n1")), {"y": "n1", "z": "n2"},
                  complements=("b",))
    counts = net.load_counts()
    assert counts["a"] == 2 and counts["b"] == 1 and counts["~b"] == 0
    assert counts["n1"] == 2 and net.loads("n2") == 1
    cost = net.cost()
    assert cost.sections == 3 and cost.followers == 1 and cost.stages == 2


def test_input_patterns_follow_sympy_truth_table_order():
    """names[0] is the most significant bit, as in sympy's truth_table rows (Source: sympy)."""
    a, c, d = sympy.symbols("a c d")
    pats, _ = input_patterns(("a", "c", "d"))
    for index, (values, _) in enumerate(truth_table(a, [a, c, d])):
        for name, v in zip(("a", "c", "d"), values):
            assert (pats[name] >> index & 1) == v                       # sympy truth_table row order


def test_simulation_matches_sympy():
    """Bit-parallel simulation agrees with sympy evaluation of the stage equations (Source: sympy)."""
    net = Network(("a", "b", "c"), (
        Stage("S1", "n1", "inverting", (b("a", "b"), b("c"))),
        Stage("S2", "n2", "inverting", (b("n1"),)),
        Stage("S3", "n3", "follower", input="n2"),
        Stage("S4", "n4", "inverting", (b("n3", "~a"), b("b"))),
    ), {"y": "n4"}, complements=("a",))
    values = simulate(net)
    exprs = network_exprs(net)
    syms = sympy.symbols("a b c")
    for index, (row, _) in enumerate(truth_table(sympy.true, syms)):
        env = dict(zip(syms, row))
        for s in net.stages:
            assert (values[s.output] >> index & 1) == bool(sympy.sympify(exprs[s.output]).subs(env))  # sympy evaluation


def test_simulation_of_chosen_assignments():
    net = Network(("a", "b"), (Stage("S1", "n1", "inverting", (b("a", "b"),)),), {"y": "n1"})
    values = simulate(net, {"a": 0b01, "b": 0b11}, width=2)
    assert values["n1"] == 0b10
    with pytest.raises(ValueError, match="width"):
        simulate(net, {"a": 1, "b": 1})
