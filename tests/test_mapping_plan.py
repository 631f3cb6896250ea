"""plan_design end to end: optimality against brute force, stock rules, shortage, plan invariants.

Every stock and design here is invented test data (made-up counts, supplies
and logic); the tube types are the built-in catalogue's.
"""

from __future__ import annotations

import dataclasses
import itertools
import re
import subprocess
import sys
import textwrap

import pytest

from planner.electrical import design_family
from planner.mapping import MappingOptions
from planner.pipeline import Shortage, plan_design
from planner.pipeline import _design as planning
from planner.mapping.solver import highs_available
from planner.spec import load_design, load_stock
from planner.stages import Branch, Network, Stage, prove

# Invented: a bench with one 6.3 V and one 12.6 V winding.
SUPPLIES = """\
supplies:
  plate: {volts: 250, max_ma: %(plate)s}
  bias: {volts: -100, max_ma: 50}
  heater:
    - {id: H1, volts: 6.3, max_amps: %(h1)s}
    - {id: H2, volts: 12.6, max_amps: 1.0}
"""


def _stock(tmp_path, tubes: str, *, diodes="none", objective="", plate=200, h1=3.0, name="stock.yaml"):
    text = "# Invented test data.\n" + SUPPLIES % {"plate": plate, "h1": h1} + "tubes:\n" + textwrap.indent(
        textwrap.dedent(tubes), "  ") + f"diodes: {diodes}\n" + textwrap.dedent(objective)
    path = tmp_path / name
    path.write_text(text)
    return load_stock(str(path))


def _design(tmp_path, outputs: str, inputs="[a, b, c]", name="design.yaml"):
    path = tmp_path / name
    path.write_text(f"# Invented test data.\ndesign: test\ninputs: {inputs}\noutputs:\n"
                    + textwrap.indent(textwrap.dedent(outputs), "  "))
    return load_design(str(path))


def _with_counts(stock, extra: dict):
    tubes = tuple(dataclasses.replace(t, count=t.count + extra.get(t.tube, 0)) for t in stock.tubes)
    return dataclasses.replace(stock, tubes=tubes)


def _network_of(plan, design) -> Network:
    """The stage network as the plan places it (for proving the plan's own logic)."""
    stages = []
    for s in plan.stages:
        if s.kind == "follower":
            stages.append(Stage(s.id, s.output, "follower", input=s.input))
        else:
            stages.append(Stage(s.id, s.output, "inverting", tuple(
                Branch(b.inputs, "single" if len(b.inputs) == 1 else ("dual" if len(b.inputs) == 2 else "diode"))
                for b in s.branches)))
    complements = tuple(name for name, available in plan.inputs if available)
    return Network(tuple(n for n, _ in plan.inputs), tuple(stages), dict(plan.outputs), complements=complements)


def _check_invariants(plan, stock, design):
    # Every branch and follower on its own section; every section used at most once.
    seats = [(b.envelope, b.section) for s in plan.stages for b in s.branches]
    seats += [(s.envelope, s.section) for s in plan.stages if s.kind == "follower"]
    assert len(seats) == len(set(seats))
    env = {e.ref: e for e in plan.envelopes}
    for ref, section in seats:
        uses = [u for u in env[ref].sections if u.index == section]
        assert len(uses) == 1 and uses[0].means != "unused"
    # Envelope counts within stock less reserve; the stock list covers every stocked type.
    assert [u.tube for u in plan.stock] == [t.tube for t in stock.tubes]
    for use in plan.stock:
        assert use.used == sum(1 for e in plan.envelopes if e.tube == use.tube)
        assert use.used <= use.on_hand - use.reserve
    # Winding amps within max, and heater volts matching the winding's.
    volts = {w.id: w.volts for w in stock.windings}
    for w in plan.budget.windings:
        assert w.amps <= w.max_amps + 1e-9
        assert w.amps == pytest.approx(sum(e.heater_amps for e in plan.envelopes if e.winding == w.id))
    for e in plan.envelopes:
        assert e.heater_volts == volts[e.winding]
    assert plan.budget.plate_amps_worst <= plan.budget.plate_max_amps
    assert plan.budget.bias_amps <= plan.budget.bias_max_amps
    # Every branch input reaches a divider: directly (its upper resistor from the input net to the
    # branch's grid node) or through an AND diode (cathode on the input, anode on the branch's gate
    # node, which feeds a divider); every divider's grid side has its lower resistor to BIAS.
    resistors = [p for p in plan.parts if p.kind == "resistor"]
    diode_pairs = {tuple(net for _pin, net in p.pins) for p in plan.parts if p.kind == "diode"}
    diode_pairs |= {(dict(u.nets)["plate"], dict(u.nets)["cathode"]) for e in plan.envelopes
                    for u in e.sections if u.means == "AND diode"}

    def upper_from(net, stage, b):
        return [p for p in resistors if p.role == "divider upper" and p.stage == stage.id
                and p.pins[0][1] == net and p.pins[1][1].startswith(f"{stage.output}.b{b}.")]
    for stage in plan.stages:
        for b, branch in enumerate(stage.branches, 1):
            for net in branch.inputs:
                uppers = upper_from(net, stage, b)
                if branch.means == "diode":
                    gate = f"{stage.output}.b{b}.x"
                    assert (gate, net) in diode_pairs, (stage.id, b, net)
                    uppers = upper_from(gate, stage, b)
                assert uppers, (stage.id, b, net)
                for upper in uppers:
                    node = upper.pins[1][1]
                    assert any(p.role == "divider lower" and p.pins == (("1", node), ("2", "BIAS"))
                               for p in resistors)
        if stage.kind == "inverting":
            assert sum(1 for p in resistors if p.role == "plate load" and p.stage == stage.id
                       and p.pins == (("1", "B+"), ("2", stage.output))) == 1
    for p in resistors:
        assert p.ohms > 0 and p.watts_rating is not None and p.tolerance is not None
        # A resistor's rating covers its worst dissipation (common practice: run at most at full rating).
        assert p.dissipation_watts <= p.watts_rating + 1e-9
    # Designators unique and numbered from 1 per class letter (IEEE 315 class letters R, C, D, V).
    refs = [p.ref for p in plan.parts]
    assert len(refs) == len(set(refs))
    for letter in "RCDV":
        numbers = sorted(int(r[1:]) for r in refs if r[0] == letter and r[1:].isdigit())
        assert numbers == list(range(1, len(numbers) + 1))
    # The plan's own network computes the design.
    prove(_network_of(plan, design), design)
    # Solver account: the LP relaxation's bound never exceeds the objective.
    assert plan.solution.lp_bound <= plan.solution.objective + 1e-9
    for _name, value, bound, _gap in plan.solution.levels:
        assert bound <= value + 1e-9


TRIODES = """\
12AU7: {count: 6}
6AU6: {count: 8}
"""


def test_plan_invariants_and_bound(tmp_path):
    stock = _stock(tmp_path, TRIODES + "5915: {count: 4}\n", diodes="solid-state")
    design = _design(tmp_path, """\
        y: ~(a & b | c)
        z: a | b
        w: a ^ b
        """)
    plan = plan_design(design, stock)
    _check_invariants(plan, stock, design)
    assert plan.solution.status == "optimal" and plan.solution.gap == 0.0


def _brute_force_optimum(problem) -> float:
    """Least weighted objective by enumerating every stage's way and every envelope's heater."""
    kinds = {k.tube: k for k in problem.kinds}
    stages = [cls for cls in problem.classes for _ in range(cls.count)]
    best = None
    for choice in itertools.product(*[cls.ways for cls in stages]):
        if sum(w.plate_amps for w in choice) > problem.supplies.plate_max_amps:
            continue
        if sum(w.bias_amps for w in choice) > problem.supplies.bias_max_amps:
            continue
        need = {}
        for tube, kind in kinds.items():
            demand = {}
            for w in choice:
                if w.tube == tube:
                    for k, n in w.demand:
                        demand[k] = demand.get(k, 0) + n
            # Sections of these types serve every kind they are asked for (checked below).
            per = len(kind.sections)
            total = sum(demand.values())
            assert all(all(k in caps for caps in kind.sections) for k in demand)
            need[tube] = -(-total // per) if per else 0
        if any(need[t] > kinds[t].usable for t in kinds):
            continue
        envelopes = [t for t in sorted(kinds) for _ in range(need[t])]
        for heat in itertools.product(*[kinds[t].heaters for t in envelopes]):
            amps = {}
            for h in heat:
                amps[h.winding] = amps.get(h.winding, 0.0) + h.amps
            if any(amps.get(w, 0.0) > cap + 1e-9 for w, _v, cap in problem.supplies.windings):
                continue
            wt = problem.weights
            value = (wt.envelopes * len(envelopes) + wt.heater_watts * sum(h.watts for h in heat)
                     + wt.scarce * sum(1 for t in envelopes if kinds[t].scarce))
            best = value if best is None else min(best, value)
    return best


@pytest.mark.parametrize("outputs, h1", [("y: ~(a | b)\nz: ~(b | c)\n", 0.9),
                                         ("y: ~(a & b)\nz: ~c\n", 3.0),
                                         ("y: a & b | c\n", 0.6)])
def test_integer_program_matches_brute_force_on_tiny_designs(tmp_path, outputs, h1):
    stock = _stock(tmp_path, "12AU7: {count: 2}\n6AU6: {count: 4}\n5915: {count: 2, scarce: true}\n", h1=h1)
    design = _design(tmp_path, outputs)
    options = MappingOptions()
    rules = planning.design_rules(stock, options)
    tubes = [(stock.catalogue.get(t.tube), rules.wear) for t in stock.tubes]
    family = design_family(planning.Rails(250, -100), tubes, rules)
    weights = planning._weights(stock, options)
    candidates = planning._candidates(design, stock, family, rules, options, weights)
    optima = [_brute_force_optimum(c.problem) for c in candidates if c.problem is not None]
    optima = [v for v in optima if v is not None]
    plan = plan_design(design, stock, options)
    assert plan.solution.objective == pytest.approx(min(optima), abs=1e-6)


def test_scarce_type_avoided_and_reserve_untouched(tmp_path):
    design = _design(tmp_path, "y: ~(a & b)\nz: ~(b & c)\n")
    heavy = "objective: {scarce: 50.0}\n"
    # Two 6AU6 usable: the scarce 5915 is avoided.
    stock = _stock(tmp_path, "6AU6: {count: 3, reserve: 1}\n5915: {count: 2, scarce: true}\n",
                   diodes="solid-state", objective=heavy)
    plan = plan_design(design, stock)
    used = {u.tube: u.used for u in plan.stock}
    assert used == {"5915": 0, "6AU6": 2}
    _check_invariants(plan, stock, design)
    # One 6AU6 usable (two kept in reserve): the reserve stays untouched and one 5915 is used.
    stock = _stock(tmp_path, "6AU6: {count: 3, reserve: 2}\n5915: {count: 2, scarce: true}\n",
                   diodes="solid-state", objective=heavy, name="reserved.yaml")
    plan = plan_design(design, stock)
    used = {u.tube: u.used for u in plan.stock}
    assert used == {"5915": 1, "6AU6": 1}
    _check_invariants(plan, stock, design)


def test_shortage_gives_the_smallest_purchase(tmp_path):
    design = _design(tmp_path, "y: ~(a | b)\nz: ~(c | d)\nw: ~(a | c)\nv: ~(b | d)\n", inputs="[a, b, c, d]")
    stock = _stock(tmp_path, "6AU6: {count: 1}\n5915: {count: 0}\n", h1=6.0)
    with pytest.raises(Shortage, match=r"^needs 6 more dual-control sections: 6 x 5915; "
                                        r"and 1 more pentode section: 1 x 6AU6$") as short:
        plan_design(design, stock)
    purchase = short.value.purchase
    assert purchase and not short.value.overloads
    assert "more triode section" in short.value.message or "more pentode section" in short.value.message
    plan = plan_design(design, _with_counts(stock, purchase))
    _check_invariants(plan, _with_counts(stock, purchase), design)
    one_short = {"5915": "needs 1 more dual-control section: 1 x 5915 or 2 x 6AU6",
                 "6AU6": "needs 1 more pentode section: 1 x 6AU6 or 2 x 5915"}
    for tube in purchase:
        less = dict(purchase, **{tube: purchase[tube] - 1})
        with pytest.raises(Shortage, match=f"^{re.escape(one_short[tube])}$"):
            plan_design(design, _with_counts(stock, less))


def test_overloaded_winding_is_reported(tmp_path):
    design = _design(tmp_path, "y: ~(a | b)\nz: ~(b | c)\n")
    stock = _stock(tmp_path, "6AU6: {count: 4}\n", h1=0.3)
    with pytest.raises(Shortage, match=r"^winding H1 over by 0\.90 A$") as short:
        plan_design(design, stock)
    # Two NOR-2 stages take four single-section 6AU6 envelopes, each heater 0.3 A at 6.3 V by the
    # catalogue (no 12.6 V connection), so the 0.3 A winding is 0.9 A short; nothing to buy.
    assert short.value.purchase == {}
    assert short.value.overloads == pytest.approx({"H1": 0.9})
    assert "winding H1 over by 0.90 A" in short.value.message


def test_overloaded_plate_supply_is_reported_in_amperes_and_told_in_milliamperes(tmp_path):
    design = _design(tmp_path, "y: ~(a | b)\nz: ~(b | c)\n")
    tubes = "12AU7: {count: 2}\n"
    need = plan_design(design, _stock(tmp_path, tubes)).budget.plate_amps_worst
    limit_ma = 1.5  # the stock file's max_ma, well under what two stages draw
    message = f"plate supply over by {need * 1000 - limit_ma:.1f} mA"
    with pytest.raises(Shortage, match=f"^{re.escape(message)}$") as short:
        plan_design(design, _stock(tmp_path, tubes, plate=limit_ma, name="small.yaml"))
    assert set(short.value.overloads) == {"plate"}
    assert short.value.overloads["plate"] == pytest.approx(need - limit_ma / 1000, abs=1e-9)
    assert f"plate supply over by {need * 1000 - limit_ma:.1f} mA" in short.value.message


def test_lexicographic_mode_and_highs_agree(tmp_path):
    stock = _stock(tmp_path, TRIODES + "5915: {count: 2, scarce: true}\n", diodes="solid-state")
    design = _design(tmp_path, "y: ~(a & b | c)\nz: a | b\n")
    lexi = plan_design(design, stock, MappingOptions(mode="lexicographic"))
    assert [lv[0] for lv in lexi.solution.levels] == ["scarce envelopes", "envelopes", "heater watts"]
    assert dict(lexi.solution.terms)["scarce envelopes"] == 0
    _check_invariants(lexi, stock, design)
    if not highs_available():
        pytest.skip("highspy is not installed")
    cbc = plan_design(design, stock)
    highs = plan_design(design, stock, MappingOptions(solver="highs"))
    assert highs.solution.objective == pytest.approx(cbc.solution.objective, abs=1e-6)


def test_same_inputs_same_plan_under_other_hash_seeds(tmp_path):
    stock_path = tmp_path / "s.yaml"
    _stock(tmp_path, TRIODES + "5915: {count: 2}\n", diodes="solid-state", name="s.yaml")
    _design(tmp_path, "y: ~(a & b | c)\nz: a ^ b ^ c\n", name="d.yaml")
    script = textwrap.dedent(f"""
        import dataclasses
        from planner.spec import load_design, load_stock
        from planner.pipeline import plan_design
        plan = plan_design(load_design({str(tmp_path / 'd.yaml')!r}), load_stock({str(stock_path)!r}))
        print(repr(dataclasses.replace(plan, solution=dataclasses.replace(plan.solution, seconds=0.0))))
        """)
    outs = [subprocess.run([sys.executable, "-c", script], capture_output=True, text=True, check=True,
                           env={"PYTHONHASHSEED": seed, "PATH": "/usr/bin:/bin",
                                "TUBEPLAN_CACHE_DIR": ""}).stdout  # no cache: both compute everything
            for seed in ("1", "977")]
    assert outs[0] == outs[1] and "Plan(" in outs[0]


def test_vacuum_diodes_come_from_diode_envelopes(tmp_path):
    design = _design(tmp_path, "y: ~(a & b & c)\nz: ~(a & b)\n")
    stock = _stock(tmp_path, "6AU6: {count: 2}\n6AL5: {count: 2}\n", diodes="vacuum-only", h1=6.0)
    # Five AND inputs need five diode sections; two 6AL5 have four (two diodes each, by the catalogue).
    with pytest.raises(Shortage, match=r"^needs 1 more diode section: 1 x 6AL5$") as short:
        plan_design(design, stock)
    assert short.value.purchase == {"6AL5": 1}
    assert short.value.message == "needs 1 more diode section: 1 x 6AL5"
    stock = _with_counts(stock, {"6AL5": 1})
    plan = plan_design(design, stock)
    _check_invariants(plan, stock, design)
    assert not [p for p in plan.parts if p.kind == "diode"]
    diodes = [f"{e.ref}.{u.index}" for e in plan.envelopes for u in e.sections if u.means == "AND diode"]
    assert len(diodes) == 5 and all(plan.envelopes[int(d[1:].split(".")[0]) - 1].tube == "6AL5" for d in diodes)
    assert sorted(d for s in plan.stages for b in s.branches for d in b.diodes) == sorted(diodes)


def test_fanout_beyond_every_template_is_repaired(tmp_path):
    """40 loads on one net, 6AU6 only: the net is spread by a buffer tree; short of sections, then planned."""
    outputs = "".join(f"y{k}: ~(a | b)\n" for k in range(40))
    design = _design(tmp_path, outputs, inputs="[a, b]")
    stock = _stock(tmp_path, "6AU6: {count: 4}\n")
    with pytest.raises(Shortage, match=r"^needs 3 more pentode sections: 3 x 6AU6$") as short:
        plan_design(design, stock)
    assert short.value.purchase and not short.value.unbuildable
    stock = _with_counts(stock, short.value.purchase)
    plan = plan_design(design, stock)
    _check_invariants(plan, stock, design)
    prove(_network_of(plan, design), design)
    assert all(s.fanout <= s.fanout_limit for s in plan.stages)
    assert sum(s.view == "inverter" for s in plan.stages) >= 2


def test_followers_are_placed_and_wired(tmp_path):
    """Fan-out past the driver's limit through followers, with a made-up follower template.

    The follower figures are invented test data (the built-in family may have no
    follower at these rails); the check is on placement and wiring only.
    """
    from planner.electrical import Follower
    from planner.mapping.assemble import place
    from planner.mapping.build import build_plan
    from planner.mapping.model import solve_problem
    from planner.mapping.plan import Solution
    from planner.mapping.problem import build_problem
    from planner.stages import repair_fanout, synthesise

    outputs = "".join(f"y{k}: ~(a | b)\n" for k in range(14))
    design = _design(tmp_path, outputs, inputs="[a, b]")
    stock = _stock(tmp_path, "6AU6: {count: 4}\n6J6: {count: 4}\n")
    options = MappingOptions()
    rules = planning.design_rules(stock, options)
    tubes = [(stock.catalogue.get(t.tube), rules.wear) for t in stock.tubes]
    family = design_family(planning.Rails(250, -100), tubes, rules)
    # Its cathode range (0 to 90 V) is within the 6J6's 100 V heater-cathode rating on a grounded heater.
    made_up = Follower("6J6", 47e3, 1.0, 8, 4.0e-3, 3.0e-3, 2.5e-3, 0.5, 0.1e-3, 10e3, 90.0, 120.0, 40.0)
    family = dataclasses.replace(family, followers={"6J6": made_up})
    network = repair_fanout(synthesise(design).network, planning._fanout_limits(family, stock, 0),
                            strategy="followers")
    prove(network, design)
    followers = [s for s in network.stages if s.kind == "follower"]
    assert followers
    problem, ways = build_problem(network, family, stock, planning._weights(stock, options), diode_fanin=0)
    counts = solve_problem(problem)
    placement = place(network, problem, counts)
    level = counts.levels[-1]
    plan = build_plan(design, network, family, stock, problem, counts, placement,
                      Solution("cbc", counts.status, level.value, level.lp_bound, level.gap, 0.0), rules)
    _check_invariants(plan, stock, design)
    env = {e.ref: e for e in plan.envelopes}
    for stage in (s for s in plan.stages if s.kind == "follower"):
        # The catalogue's 6J6 has one cathode for both sections: a follower sits alone in its envelope.
        assert stage.tube == "6J6"
        uses = env[stage.envelope].sections
        assert [u.means for u in uses].count("follower") == 1
        assert all(u.means in ("follower", "unused") for u in uses)
        cathode_loads = [p for p in plan.parts if p.role == "cathode load" and p.stage == stage.id]
        assert cathode_loads and cathode_loads[0].pins == (("1", stage.output), ("2", "BIAS"))
        stoppers = [p for p in plan.parts if p.role == "grid stopper" and p.stage == stage.id]
        assert stoppers[0].pins == (("1", stage.input), ("2", f"{stage.output}.g1"))


def test_one_input_branches_get_no_needless_diodes(tmp_path):
    """Solid-state diodes cost nothing in the objective; a one-input branch must still not get one."""
    from planner.cli import DEMO_DESIGN, DEMO_STOCK
    from planner.mapping import MappingOptions
    from planner.pipeline import plan_design
    from planner.spec import load_design, load_stock

    plan = plan_design(load_design(DEMO_DESIGN), load_stock(DEMO_STOCK), MappingOptions())
    for stage in plan.stages:
        for branch in stage.branches:
            if len(branch.inputs) == 1 and len(stage.branches) == 1:
                assert branch.means != "diode", stage
