"""Fan-out by cathode followers (``repair_fanout(..., strategy="followers")``) on hand-made networks."""

from __future__ import annotations

import sympy

from planner.spec import Design, InputSpec, OutputSpec, parse_expression
from planner.stages import Branch, Network, Stage, prove, repair_fanout, synthesise


def _fan(n_loads: int) -> Network:
    """A NAND-2 of a, b driving ``n_loads`` NAND-2 stages of it and c (fixture)."""
    stages = [Stage("S1", "n1", "inverting", (Branch(("a", "b"), "dual"),))]
    stages += [Stage(f"S{k}", f"n{k}", "inverting", (Branch(("n1", "c"), "dual"),)) for k in range(2, n_loads + 2)]
    return Network(("a", "b", "c"), tuple(stages), {f"y{k}": f"n{k}" for k in range(2, n_loads + 2)})


def _design(n_loads: int) -> Design:
    return Design("fan", "<test>", tuple(InputSpec(x) for x in "abc"), (),
                  tuple(OutputSpec(f"y{k}", parse_expression("~(~(a & b) & c)"), sympy.false, "")
                        for k in range(2, n_loads + 2)))


def _followers(network: Network) -> list[Stage]:
    return [s for s in network.stages if s.kind == "follower"]


def _within(network: Network, limit) -> bool:
    counts = network.load_counts()
    return all(counts[s.output] <= limit(s) for s in network.stages)


def test_fewest_followers():
    """Seven loads on a NAND allowing 3, followers 6: one follower (3 - 1 + 6 = 8 slots) beats three
    inverters (one first level, two second)."""
    limit = lambda s: 6 if s.kind == "follower" else 3
    network = repair_fanout(_fan(7), limit, strategy="followers")
    assert len(_followers(network)) == 1 and _within(network, limit)
    prove(network, _design(7))


def test_followers_are_never_chained():
    """Followers allowing 2 cannot feed followers (the family's rule): inverters carry the rest."""
    limit = lambda s: 2
    network = repair_fanout(_fan(20), limit, strategy="followers")
    followers = {s.output for s in _followers(network)}
    assert not any(s.input in followers for s in _followers(network))
    assert _within(network, limit)
    prove(network, _design(20))


def test_primary_inputs_drive_any_number_and_outputs_count_as_loads():
    d = Design("d", "<test>", tuple(InputSpec(x) for x in "ab"), (),
               tuple(OutputSpec(f"o{k}", parse_expression("a & b"), sympy.false, "") for k in range(4)))
    network = synthesise(d).network
    driver = network.outputs["o0"]
    assert network.loads(driver) == 4                                       # four design outputs, one net
    limit = lambda s: 3 if s.kind == "follower" else 2
    spread = repair_fanout(network, limit, strategy="followers")
    prove(spread, d)
    assert _within(spread, limit)
    assert spread.load_counts()["a"] == network.load_counts()["a"]        # inputs untouched


def test_no_change_within_limits():
    network = _fan(3)
    assert repair_fanout(network, lambda s: 3, strategy="followers") == network
