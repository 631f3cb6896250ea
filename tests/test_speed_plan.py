"""Speed work that must not change a result: memoised timing, the solver's bounds, candidates not
solved, and the exact cover's budget counting the work before the solver."""

import random

import pytest

from planner.catalogue import builtin_catalogue
from planner.electrical import InverterTiming, Wave, inverter_edge
from planner.electrical.circuit import Load, ScreenFeed
from planner.electrical.timing import threshold_grid_volts
from planner.mapping import model as M
from planner.mapping.solver import solve

from test_mapping_model import _brute, _random_problem


def test_a_shared_memo_of_dc_solves_gives_the_same_edges():
    tube = builtin_catalogue().get("12AU7")
    divider = Load(820e3, 820e3, -90.0, tube)
    stage = InverterTiming(tube, 0.8, 170.0, 160e3, divider, ((2, divider),), 14e-12, 12e-12)
    other = InverterTiming(tube, 0.8, 170.0, 180e3, divider, ((1, divider),), 14e-12, 12e-12)
    memo: dict = {}
    for st in (stage, other, stage):
        for wave in (Wave(140.0, 12.0), Wave(12.0, 140.0), Wave(12.0, 140.0, "exponential", 2e-6)):
            assert inverter_edge(st, wave, 70.0, memo) == inverter_edge(st, wave, 70.0)
    # One threshold search per stage model, one plate solve per (stage model, grid level).
    assert {key[1:] for key in memo if key[0] == "threshold"} == {(stage, 70.0), (other, 70.0)}
    assert len([key for key in memo if key[0] == "plate"]) == 4


@pytest.mark.parametrize("name, feed, role", [("12AU7", None, "grid"), ("6SN7", None, "grid"),
                                              ("6AU6", ScreenFeed(100e3, 47e3), "grid"),
                                              ("6AS6", ScreenFeed(56e3), "grid"), ("6AS6", ScreenFeed(56e3), "grid3")])
@pytest.mark.parametrize("mid_volts", [40.0, 70.0, 100.0])
def test_the_threshold_puts_the_plate_at_the_mid_level(name, feed, role, mid_volts):
    # The threshold is solved on the section's current at the mid level; its definition is the grid
    # voltage where the plate node's own solve (solve_plate) gives the mid level: the plate must
    # cross it within the search's tolerance (1e-4 V of grid) of the threshold found.
    tube = builtin_catalogue().get(name)
    divider = Load(820e3, 820e3, -90.0, tube)
    stage = InverterTiming(tube, 0.9, 170.0, 100e3, divider, ((3, divider),), 14e-12, 12e-12, feed, role)
    grid = threshold_grid_volts(stage, mid_volts)
    assert stage.plate_volts(grid - 2e-4) > mid_volts > stage.plate_volts(grid + 2e-4)
    with pytest.raises(ValueError, match="cannot take its plate through 180.0 V"):
        threshold_grid_volts(stage, 180.0)


@pytest.mark.parametrize("seed", range(40))
def test_lower_bound_is_the_lp_relaxation_cbc_finds(seed):
    """The in-process bound (HiGHS) equals the LP relaxation CBC (an outside solver, through pulp)
    gives for the same model, never exceeds the integer optimum CBC finds nor brute-force
    enumeration's, and is None only where both find no plan."""
    problem = _random_problem(random.Random(seed))
    bound = M.lower_bound(problem)
    model = M._Model(problem, slack=False)
    model.lp.setObjective(model.criterion("weighted"))
    relaxed = solve(model.lp, solver="cbc", time_limit_s=60, gap=0.0, relax=True)
    expected = _brute(problem)
    if bound is None:
        assert relaxed.status == "infeasible" and expected is None
        with pytest.raises(M.Infeasible, match="weighted"):  # the criterion with no solution
            M.solve_problem(problem)
        return
    assert relaxed.status == "optimal" and bound == pytest.approx(relaxed.objective, abs=1e-6)
    if expected is not None:
        assert bound <= dict(M.solve_problem(problem).terms)["weighted"] + 1e-6
        assert bound <= expected + 1e-6


def _plan_both_ways(design_path, stock_path, options, monkeypatch):
    """The plan as planned (hopeless candidates not solved) and with every candidate solved in order
    by CBC (the bound taken as minus infinity: the planner before candidates were skipped)."""
    import dataclasses

    import planner.pipeline._design as planning
    from planner.pipeline import plan_design
    from planner.spec import load_design, load_stock

    design, stock = load_design(design_path), load_stock(stock_path)
    pruned = plan_design(design, stock, options)
    with monkeypatch.context() as patch:
        patch.setattr(planning, "lower_bound", lambda problem, **kwargs: float("-inf"))
        every = plan_design(design, stock, options)
    plain = lambda plan: dataclasses.replace(  # noqa: E731
        plan, solution=dataclasses.replace(plan.solution, networks=(), seconds=0.0))
    return pruned, every, plain


@pytest.mark.parametrize("design, stock, mode", [
    ("inventory_demo/design.yaml", "inventory_demo/stock.yaml", None),
    ("inventory_demo/design.yaml", "inventory_demo/stock.yaml", "lexicographic"),
    ("tests/fixtures/synthesis/compare3.yaml", "tests/fixtures/synthesis/scarce.yaml", None),
])
def test_candidates_not_solved_never_change_the_plan(design, stock, mode, monkeypatch):
    from planner.mapping import MappingOptions

    pruned, every, plain = _plan_both_ways(design, stock, MappingOptions(mode=mode), monkeypatch)
    assert plain(pruned) == plain(every)  # the same plan, to every value, as solving every candidate
    assert pruned.solution.network == every.solution.network
    skipped = 0
    for mine, theirs in zip(pruned.solution.networks, every.solution.networks, strict=True):
        if mine.note.startswith("not solved"):
            skipped += 1
            assert theirs.envelopes is not None and mine.envelopes is None  # it had a plan, a worse one
            assert theirs.label != every.solution.network
        else:
            assert mine == theirs
    if mode is None and "demo" in design:
        assert skipped > 0


def test_the_cover_budget_counts_the_work_before_the_solver(monkeypatch):
    """CBC gets what is left of the budget after the reductions and the model (at least
    MIN_SOLVER_S), so a block's exact search ends within its budget; the cover is still minimum."""
    import importlib
    import time

    exact = importlib.import_module("planner.logic.exact")
    from planner.logic import prime_implicants, table_from_minterms

    table = table_from_minterms(("a", "b", "c"), [0, 1, 2, 5, 6, 7])  # cyclic: no essentials
    limits = []
    solve, reduce = exact._cbc, exact._reduce

    def recorded(pulp, prob, budget_s, relax):
        limits.append(budget_s)
        return solve(pulp, prob, budget_s, relax)

    def slow(*args):
        time.sleep(0.3)
        return reduce(*args)
    monkeypatch.setattr(exact, "_cbc", recorded)
    monkeypatch.setattr(exact, "_reduce", slow)
    found = exact.minimum_cover(table, prime_implicants(table), budget_s=2.0)
    assert limits[0] <= 2.0 - 0.3 and found.proven and len(found.cubes) == 3
    limits.clear()
    exact.minimum_cover(table, prime_implicants(table), budget_s=0.2)  # spent before CBC starts
    assert limits[0] == exact.MIN_SOLVER_S


def test_without_highspy_no_bound_is_claimed(monkeypatch):
    problem = _random_problem(random.Random(3))
    monkeypatch.setattr(M, "highs_available", lambda: False)
    assert M.lower_bound(problem) == float("-inf")  # every candidate is then solved by CBC, as before


def test_memoised_section_solves_equal_fresh_ones():
    from planner.electrical.circuit import ScreenFeed, SectionState, screen_volts, section_amps

    tube = builtin_catalogue().get("6AU6")
    state = SectionState(tube, -1.5, 0.0, 0.8, ScreenFeed(470e3, 220e3))
    for plate in (20.0, 75.0, 150.0, 75.0):
        assert screen_volts(state, 170.0, plate) == screen_volts.__wrapped__(state, 170.0, plate)
        assert section_amps(state, 170.0, plate) == section_amps.__wrapped__(state, 170.0, plate)
