"""Fan-out: followers inserted where a net has more loads than its driver allows."""

from __future__ import annotations

import pytest
import sympy

from planner.spec import Design, InputSpec, OutputSpec, parse_expression
from planner.stages import Branch, Network, Stage, insert_followers, prove, synthesise


def _fan(n_loads: int) -> Network:
    """One inverter of a driving ``n_loads`` inverters (fixture)."""
    stages = [Stage("S1", "n1", "inverting", (Branch(("a",), "single"),))]
    stages += [Stage(f"S{k}", f"n{k}", "inverting", (Branch(("n1",), "single"),)) for k in range(2, n_loads + 2)]
    return Network(("a",), tuple(stages), {f"y{k}": f"n{k}" for k in range(2, n_loads + 2)})


def _design(n_loads: int) -> Design:
    return Design("fan", "<test>", (InputSpec("a"),), (),
                  tuple(OutputSpec(f"y{k}", parse_expression("a"), sympy.false, "") for k in range(2, n_loads + 2)))


def test_fewest_followers_as_a_tree():
    """7 loads, driver and followers 3 each: ceil((7 - 3) / (3 - 1)) = 2 followers."""
    network = insert_followers(_fan(7), 3)
    assert sum(s.kind == "follower" for s in network.stages) == 2
    counts = network.load_counts()
    assert all(counts[s.output] <= 3 for s in network.stages)
    prove(network, _design(7))


def test_deep_tree_when_one_level_is_not_enough():
    network = insert_followers(_fan(20), 2)
    counts = network.load_counts()
    assert all(counts[s.output] <= 2 for s in network.stages)
    assert sum(s.kind == "follower" for s in network.stages) == 18       # ceil((20 - 2) / (2 - 1))
    prove(network, _design(20))


def test_limit_per_stage_kind():
    limit = lambda stage: 6 if stage.kind == "follower" else 2  # noqa: E731
    network = insert_followers(_fan(10), limit)
    counts = network.load_counts()
    for s in network.stages:
        assert counts[s.output] <= limit(s)
    assert sum(s.kind == "follower" for s in network.stages) == 2        # ceil((10 - 2) / 5)


def test_primary_inputs_drive_any_number_and_outputs_count_as_loads():
    d = Design("d", "<test>", tuple(InputSpec(x) for x in "ab"), (),
               tuple(OutputSpec(f"o{k}", parse_expression("a & b"), sympy.false, "") for k in range(4)))
    network = synthesise(d).network
    driver = network.outputs["o0"]
    assert network.loads(driver) == 4                                       # four design outputs, one net
    spread = insert_followers(network, 2)
    prove(spread, d)
    counts = spread.load_counts()
    assert all(counts[s.output] <= 2 for s in spread.stages)
    assert counts["a"] == network.load_counts()["a"]                       # inputs untouched


def test_no_change_within_limits_and_error_when_followers_cannot_help():
    network = _fan(3)
    assert insert_followers(network, 3) == network
    with pytest.raises(ValueError, match="followers cannot spread the load"):
        insert_followers(network, 1)
