"""Fan-out repair: buffer trees, duplicated drivers and followers; whole plans within every stated limit.

Every design and stock here is invented test data (made-up counts, supplies and logic); the tube
types are the built-in catalogue's. Outside checks: sympy evaluates the design's expressions
(``lambdify``) and decides equivalence (``satisfiable``); ngspice (Debian package) runs the planned decks.
"""

from __future__ import annotations

import json
import random
from itertools import product

import numpy as np
import pytest
import sympy
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from sympy.logic.inference import satisfiable

from planner.catalogue import builtin_catalogue
from planner.pipeline import plan_design
from planner.mapping.registers import register_view
from planner.report import plan_document, spice_deck
from planner.spec import Design, InputSpec, OutputSpec, load_design, load_stock, parse_expression
from planner.stages import STRATEGIES, Branch, FanoutError, Network, Stage, prove, repair_fanout, synthesise
from test_report_spice import check_truth_table
from test_stages_fuzz import designs

# Invented: a builder's box of dual triodes, a few pentodes and a bag of silicon diodes.
STOCK = """\
supplies:
  plate: {volts: %(plate)s, max_ma: 3000}
  bias: {volts: %(bias)s, max_ma: 1500}
  heater:
    - {id: H1, volts: 6.3, max_amps: 120}
    - {id: H2, volts: 12.6, max_amps: 60}
tubes:
  12AU7: {count: 300}
  12AT7: {count: 120}
  6AU6: {count: %(pentodes)s}
diodes: solid-state
"""

RAILS = [(150, -100), (180, -90)]

PARITY = """\
design: parity5
inputs: [a, b, c, d, e]
outputs:
  p: a ^ b ^ c ^ d ^ e
"""

DECODER = """\
design: decoder3to8
inputs: [en, a, b, c]
outputs:
""" + "".join(f"  y{k}: en & {'a' if k & 4 else '~a'} & {'b' if k & 2 else '~b'} & {'c' if k & 1 else '~c'}\n"
              for k in range(8))

FAN64 = ("design: fan64\ninputs:\n  - {name: a, fanout: 4}\n" + "".join(f"  - b{k}\n" for k in range(64))
         + "outputs:\n" + "".join(f"  y{k}: ~(a & b{k})\n" for k in range(64)))

COUNTER = """\
design: counter2
inputs: [en]
registers:
  q0: {next: q0 ^ en}
  q1: {next: q1 ^ (q0 & en)}
outputs:
  c0: q0
  c1: q1
  carry: q0 & q1 & en
"""

MACHINE = """\
design: machine3
inputs: [x, y]
registers:
  s0: {next: ~s0 & x | s1 & ~s2 & y | s0 & s2 & ~x}
  s1: {next: s0 & ~s1 | s1 & s2 & ~y | ~s0 & x & y}
  s2: {next: s2 ^ (s0 & s1) ^ x}
outputs:
  busy: s0 | s1 | s2
  done: s0 & s1 & s2
  z: s0 ^ s1 & x
"""


def _random48() -> str:
    """48 outputs over 14 inputs, each a seeded random function of 5 of them (minterm lists)."""
    rng = random.Random(12)
    names = [f"x{i}" for i in range(14)]
    lines = ["design: random48", "inputs: [" + ", ".join(names) + "]", "outputs:"]
    for k in range(48):
        over = sorted(rng.sample(range(14), 5))
        minterms = [m for m in range(32) if rng.random() < 0.5]
        lines += [f"  y{k}:", "    over: [" + ", ".join(names[i] for i in over) + "]",
                  "    minterms: [" + ", ".join(map(str, minterms)) + "]"]
    return "\n".join(lines) + "\n"


DESIGNS = {"parity": PARITY, "decoder": DECODER, "fan64": FAN64, "counter": COUNTER, "machine": MACHINE,
           "random48": _random48()}


def _load(folder, text: str) -> Design:
    path = folder / "design.yaml"
    path.write_text("# Invented test data.\n" + text)
    return load_design(str(path))


def _plan_files(tmp_path, run_cli, design_text, plate, bias, pentodes=6):
    design = tmp_path / "design.yaml"
    stock = tmp_path / "stock.yaml"
    design.write_text("# Invented test data.\n" + design_text)
    text = STOCK % {"plate": plate, "bias": bias, "pentodes": pentodes}
    if not pentodes:
        text = "".join(line for line in text.splitlines(keepends=True) if "6AU6" not in line)
    stock.write_text("# Invented test data.\n" + text)
    status, out, err = run_cli("plan", design, "--stock", stock, "--out", tmp_path / "plan")
    assert status == 0, out + err
    return load_design(str(design)), json.loads((tmp_path / "plan" / "plan.json").read_text()), err


def _independent_loads(doc) -> dict[str, int]:
    """Grid (or diode) inputs on every net, counted from plan.json's branches and followers."""
    loads: dict[str, int] = {}
    for stage in doc["stages"]:
        used = [stage["input"]] if stage["kind"] == "follower" else [n for b in stage["branches"] for n in b["inputs"]]
        for net in used:
            loads[net] = loads.get(net, 0) + 1
    return loads


def _check_limits(design, doc) -> None:
    loads = _independent_loads(doc)
    for stage in doc["stages"]:
        assert loads.get(stage["output"], 0) <= stage["fanout_limit"], (stage["id"], stage["output"])
        assert stage["fanout"] <= stage["fanout_limit"]
    for reg in doc["registers"]:
        for net in (reg["output"], reg["complement"]):
            assert loads.get(net, 0) <= reg["fanout_limit"], (reg["name"], net)
    stated = {entry["name"]: entry["fanout_limit"] for entry in doc["inputs"]}
    for spec in design.inputs:
        assert stated[spec.name] == spec.fanout  # the design file's declaration, or null (ideal)
        if spec.fanout is not None:
            assert loads.get(spec.name, 0) <= spec.fanout
            assert loads.get("~" + spec.name, 0) <= spec.fanout


def _check_logic(design, doc) -> None:
    """Every output (and register next state) over every input vector (4,096 seeded random ones past 16
    inputs): plan.json's stages, evaluated by the stage model of DESIGN.md, against sympy's evaluation of
    the design's expressions."""
    names = [entry["name"] for entry in doc["inputs"]] + [r["name"] for r in doc["registers"]]
    n = len(names)
    if n <= 16:
        grid = np.array(list(product((False, True), repeat=n)), dtype=bool).reshape(-1, n)
    else:
        grid = np.random.default_rng(5).integers(0, 2, size=(4096, n)).astype(bool)
    values = {name: grid[:, i] for i, name in enumerate(names)}
    values.update({"~" + e["name"]: ~values[e["name"]] for e in doc["inputs"] if e["complement_available"]})
    values.update({r["complement"]: ~values[r["output"]] for r in doc["registers"]})
    for stage in doc["stages"]:
        if stage["kind"] == "follower":
            values[stage["output"]] = values[stage["input"]]
            continue
        on = np.zeros(len(grid), dtype=bool)
        for branch in stage["branches"]:
            on |= np.logical_and.reduce([values[x] for x in branch["inputs"]])
        values[stage["output"]] = ~on
    symbols = [sympy.Symbol(name) for name in names]
    wanted = [(o.name, o.expr, o.dont_care) for o in design.outputs]
    wanted += [(r.next_output, r.next, sympy.false) for r in design.registers]
    nets = dict(doc["outputs"])
    nets.update({r["name"] + "_next": r["next"] for r in doc["registers"]})
    for name, expr, dont_care in wanted:
        f = sympy.lambdify(symbols, design.flatten(expr), "numpy")
        dc = sympy.lambdify(symbols, design.flatten(dont_care), "numpy")
        want = np.broadcast_to(f(*[grid[:, i] for i in range(n)]), len(grid))
        care = ~np.broadcast_to(dc(*[grid[:, i] for i in range(n)]), len(grid))
        assert np.array_equal(values[nets[name]][care], want[care].astype(bool)), name


def _has_buffer_tree(doc) -> bool:
    """Buffers: two plain inverters of one net (the network otherwise shares one), or an inverter of one."""
    sources = [s["branches"][0]["inputs"][0] for s in doc["stages"]
               if s["kind"] == "inverting" and len(s["branches"]) == 1 and len(s["branches"][0]["inputs"]) == 1]
    inverters = {s["output"] for s in doc["stages"] if s["kind"] == "inverting" and len(s["branches"]) == 1
                 and len(s["branches"][0]["inputs"]) == 1}
    return len(set(sources)) < len(sources) or any(source in inverters for source in sources)


@pytest.mark.parametrize("plate,bias", RAILS)
@pytest.mark.parametrize("case", ["parity", "decoder", "fan64", "counter", "machine"])
def test_repaired_plans_stay_within_every_limit(tmp_path, run_cli, case, plate, bias):
    """Each plans (exit 0), its logic holds (sympy), and no net carries more grids than its driver's limit."""
    design, doc, _err = _plan_files(tmp_path, run_cli, DESIGNS[case], plate, bias, pentodes=2)
    _check_limits(design, doc)
    _check_logic(design, doc)
    if design.registers:
        # Before repair, some register output carried more loads than its bistable drives.
        before = synthesise(register_view(design)).network.load_counts()
        limit = doc["registers"][0]["fanout_limit"]
        assert any(before[net] > limit for r in doc["registers"] for net in (r["output"], r["complement"]))


@pytest.mark.parametrize("plate,bias", RAILS)
def test_forty_eight_random_outputs_over_fourteen_inputs(tmp_path, run_cli, plate, bias):
    design, doc, _err = _plan_files(tmp_path, run_cli, DESIGNS["random48"], plate, bias, pentodes=200)
    _check_limits(design, doc)
    _check_logic(design, doc)


@pytest.fixture
def two_level_only(monkeypatch):
    """Plan with the project's own networks only: the multi-level ones share the loaded nets
    differently and here need no repair, so they would win and leave the repair untested."""
    from planner.pipeline import _design as planning
    monkeypatch.setattr(planning, "multilevel_networks", lambda *args, **kwargs: [])


@pytest.mark.parametrize("case,pentodes", [("parity", 2), ("decoder", 2), ("parity", 0)])
def test_regression_parity_and_decoder_with_few_pentodes(tmp_path, run_cli, case, pentodes, two_level_only):
    """Before repair, parity and the decoder needed a 6AU6 for every net over a triode's limit: with 2
    pentodes the plan was short (exit 3), with none the parity stopped at "followers cannot spread the
    load" (exit 3). Repaired networks let the triodes carry those nets (parity may now also take a
    multi-level network that needs no repair)."""
    design, doc, _err = _plan_files(tmp_path, run_cli, DESIGNS[case], 150, -100, pentodes=pentodes)
    label = doc["solution"]["network"]
    if case == "decoder":  # the enable's inverter feeds all eight outputs: a repair is the only way
        assert any(words in label for words in ("buffer trees", "duplicated drivers", "followers")), label
    if "buffer trees" in label:
        assert _has_buffer_tree(doc)
    _check_limits(design, doc)


# ---- the repair on hand-made networks ----

def _inv(net_id: str, source: str) -> Stage:
    return Stage(f"S{net_id}", net_id, "inverting", (Branch((source,), "single"),))


def _sympy_network(network: Network) -> dict[str, sympy.Basic]:
    """Each net as a sympy expression of the inputs (DESIGN.md stage model)."""
    exprs = {name: sympy.Symbol(name) for name in network.inputs}
    exprs.update({"~" + name: sympy.Not(sympy.Symbol(name)) for name in network.complements})
    for s in network.stages:
        if s.kind == "follower":
            exprs[s.output] = exprs[s.input]
        else:
            exprs[s.output] = sympy.Not(sympy.Or(*[sympy.And(*[exprs[x] for x in b.inputs]) for b in s.branches]))
    return exprs


def _same_outputs(a: Network, b: Network) -> bool:
    """sympy.satisfiable finds no assignment where an output differs."""
    ea, eb = _sympy_network(a), _sympy_network(b)
    return all(not satisfiable(sympy.Xor(ea[a.outputs[k]], eb[b.outputs[k]])) for k in a.outputs)


def _polarity_fixture() -> Network:
    """A NAND-2 with six true loads and an inverter of it with four complement loads (fixture)."""
    stages = [Stage("S1", "n1", "inverting", (Branch(("a", "b"), "dual"),)), _inv("n2", "n1")]
    stages += [Stage(f"S{k}", f"n{k}", "inverting", (Branch(("n1", "c"), "dual"),)) for k in range(3, 9)]
    stages += [Stage(f"S{k}", f"n{k}", "inverting", (Branch(("n2", "c"), "dual"),)) for k in range(9, 13)]
    return Network(("a", "b", "c"), tuple(stages), {f"y{k}": f"n{k}" for k in range(3, 13)})


def test_buffer_tree_is_polarity_aware():
    """Complement loads take the first level (the old inverter among it); true loads the root and the second."""
    network = _polarity_fixture()
    repaired = repair_fanout(network, lambda s: 3)
    counts = repaired.load_counts()
    assert all(counts[s.output] <= 3 for s in repaired.stages)
    assert _same_outputs(network, repaired)
    root = next(s.output for s in repaired.stages if s.view == "NAND-2" and set(s.branches[0].inputs) == {"a", "b"})
    first = {s.output for s in repaired.stages if s.view == "inverter" and s.branches[0].inputs == (root,)}
    second = {s.output for s in repaired.stages if s.view == "inverter" and s.branches[0].inputs[0] in first}
    consumers = [s for s in repaired.stages if s.view == "NAND-2" and "c" in s.branches[0].inputs]
    complement = [s for s in consumers if s.branches[0].inputs[0] in first]
    true = [s for s in consumers if s.branches[0].inputs[0] in second | {root}]
    assert len(complement) == 4 and len(true) == 6
    # Fewest inverters: 6 true and 4 complement loads, limit 3: two first-level (6 slots: 4 loads and two
    # second-level), two second-level (6 slots) with the root's 3 slots less the two first-level ones.
    assert (len(first), len(second)) == (2, 2)


def test_duplicates_split_the_loads_and_repair_their_inputs():
    """A NAND-2 of an inverter: copies of the NAND load the inverter, which then needs a repair of its own."""
    stages = [_inv("n1", "a"), Stage("S2", "n2", "inverting", (Branch(("n1", "b"), "dual"),))]
    stages += [Stage(f"S{k}", f"n{k}", "inverting", (Branch(("n2", f"c{k}"), "dual"),)) for k in range(3, 12)]
    network = Network(("a", "b") + tuple(f"c{k}" for k in range(3, 12)), tuple(stages),
                      {f"y{k}": f"n{k}" for k in range(3, 12)} | {"z": "n1"})
    repaired = repair_fanout(network, lambda s: 2, strategy="duplicates")
    counts = repaired.load_counts()
    assert all(counts[s.output] <= 2 for s in repaired.stages)
    copies = [s for s in repaired.stages if s.view == "NAND-2" and "b" in s.branches[0].inputs]
    assert len(copies) >= 2
    # The copies load the inverter of a past its limit: more inverters of a share them (the fixed point).
    assert sum(s.view == "inverter" and s.branches[0].inputs == ("a",) for s in repaired.stages) >= 2
    assert _same_outputs(network, repaired)


def test_register_like_pair_uses_its_complement():
    """q and ~q both limited: q's extra loads hang on inverters of ~q (one level), not on a two-level tree."""
    stages = tuple(Stage(f"S{k}", f"n{k}", "inverting", (Branch(("q", f"c{k}"), "dual"),)) for k in range(1, 8))
    network = Network(("q",) + tuple(f"c{k}" for k in range(1, 8)), stages,
                      {f"y{k}": f"n{k}" for k in range(1, 8)}, complements=("q",))
    repaired = repair_fanout(network, lambda s: 3, {"q": 2, "~q": 2})
    counts = repaired.load_counts()
    assert counts["q"] <= 2 and counts["~q"] <= 2
    assert all(counts[s.output] <= 3 for s in repaired.stages)
    inverters = [s for s in repaired.stages if s.view == "inverter"]
    assert inverters and all(s.branches[0].inputs == ("~q",) for s in inverters)
    assert _same_outputs(network, repaired)


def test_followers_where_the_family_allows_them():
    network = _polarity_fixture()
    limit = lambda s: 8 if s.kind == "follower" else 3
    repaired = repair_fanout(network, limit, strategy="followers")
    assert any(s.kind == "follower" for s in repaired.stages)
    followers = {s.output for s in repaired.stages if s.kind == "follower"}
    assert not any(s.kind == "follower" and s.input in followers for s in repaired.stages)  # never chained
    counts = repaired.load_counts()
    assert all(counts[s.output] <= limit(s) for s in repaired.stages)
    assert _same_outputs(network, repaired)


def test_a_net_that_cannot_be_spread_is_named_by_its_design_signal():
    d = Design("d", "<test>", tuple(InputSpec(x) for x in "abc"), (),
               tuple(OutputSpec(f"o{k}", parse_expression("~(a & b) & ~c" if k else "~(a & b)"), sympy.false, "")
                     for k in range(6)))
    network = synthesise(d).network
    with pytest.raises(FanoutError, match=r"net n\d+ \(output o1, output o2, output o3, 2 more\) has 5 loads") as error:
        repair_fanout(network, lambda s: 1)
    assert "neither buffers nor duplicates" in str(error.value)


def test_declared_input_limit_is_repaired():
    d = Design("d", "<test>", (InputSpec("a", fanout=3),) + tuple(InputSpec(f"b{k}") for k in range(8)), (),
               tuple(OutputSpec(f"y{k}", parse_expression(f"~(a & b{k})"), sympy.false, "") for k in range(8)))
    network = synthesise(d).network
    assert network.loads("a") == 8
    repaired = repair_fanout(network, lambda s: 3, {"a": 3})
    assert repaired.loads("a") <= 3
    prove(repaired, d)


def test_each_strategy_gives_the_same_logic(tmp_path):
    d = _load(tmp_path, PARITY)
    network = synthesise(d).network
    for strategy in ("buffers", "duplicates", "followers"):
        limit = lambda s: 4 if s.kind == "follower" else 2
        repaired = repair_fanout(network, limit, strategy=strategy)
        assert all(repaired.load_counts()[s.output] <= limit(s) for s in repaired.stages)
        assert _same_outputs(network, repaired)


# ---- the design file ----

@pytest.mark.parametrize("value,words", [("0", "at least 1"), ("-2", "at least 1"), ("2.5", "whole number"),
                                         ("many", "whole number"), ("true", "whole number")])
def test_bad_input_fanout_is_refused(write, run_cli, value, words):
    path = write("design.yaml", f"""\
        design: t
        inputs:
          - b
          - {{name: a, fanout: {value}}}
        outputs:
          y: a & b
        """)
    status, _out, err = run_cli("check", path)
    assert status == 2
    assert f"{path}:4:" in err and "fanout" in err and words in err and "Traceback" not in err


def test_declared_fanout_is_read(write):
    path = write("design.yaml", """\
        design: t
        inputs:
          - {name: a, fanout: 4, complement: true}
          - b
        outputs:
          y: a & b
        """)
    design = load_design(str(path))
    assert [(i.name, i.complement, i.fanout) for i in design.inputs] == [("a", True, 4), ("b", False, None)]


# ---- ngspice ----

NOR6 = """\
design: nor6
inputs: [a, b, c0, c1, c2]
signals:
  g: ~(a | b)
outputs:
""" + "".join(f"  y{k}: ~(g | {'~' if k % 2 else ''}c{k // 2})\n" for k in range(6)) + "  y6: g\n"


@pytest.mark.ngspice
@pytest.mark.parametrize("case,kind", [("parity", None), ("decoder", "buffers"), ("nor6", "followers")])
def test_repaired_plans_reproduce_their_truth_tables_in_ngspice(tmp_path, case, kind):
    """ngspice (Debian package) DC operating points over every input vector, against sympy's evaluation of
    the design, at +150 V / -100 V. With 2 pentodes and silicon diodes the decoder's plan holds a buffer
    tree; with 12AU7s only and no diodes (every load a grid, which a follower may drive), a NOR feeding
    seven loads past the 12AU7's limit takes a follower (one section against two inverters)."""
    design = _load(tmp_path, NOR6 if case == "nor6" else DESIGNS[case])
    path = tmp_path / "stock.yaml"
    text = STOCK % {"plate": 150, "bias": -100, "pentodes": 2}
    if kind == "followers":
        text = "".join(line for line in text.splitlines(keepends=True) if "6AU6" not in line and "12AT7" not in line)
        text = text.replace("diodes: solid-state", "diodes: none")
    path.write_text("# Invented test data.\n" + text)
    stock = load_stock(str(path))
    plan = plan_design(design, stock)
    if kind == "buffers":
        assert _has_buffer_tree(plan_document(plan))
    elif kind == "followers":
        assert any(s.kind == "follower" for s in plan.stages)
    _check_limits(design, plan_document(plan))
    deck = spice_deck(plan, builtin_catalogue())
    symbols = [sympy.Symbol(n) for n in design.input_names]
    exprs = {o.name: sympy.lambdify(symbols, design.flatten(o.expr)) for o in design.outputs}
    check_truth_table(plan, deck, lambda out, v: bool(exprs[out](*[bool(v[n]) for n in design.input_names])))


def test_a_failing_repair_is_said_and_others_plan(tmp_path, monkeypatch, two_level_only):
    """A repair that fails says so on the progress stream with its reason; the other repairs still plan."""
    from planner.mapping import MappingOptions
    from planner.pipeline import _design as planning
    from planner.stages import repair_fanout as real

    def refuse_buffers(network, limit, limits=None, *, strategy="buffers", names=None):
        if strategy == "buffers":
            raise FanoutError("net n1 (inside output y0) cannot be spread (test)")
        return real(network, limit, limits, strategy=strategy, names=names)
    monkeypatch.setattr(planning, "repair_fanout", refuse_buffers)
    design = _load(tmp_path, DECODER)
    path = tmp_path / "stock.yaml"
    path.write_text("# Invented test data.\n" + STOCK % {"plate": 150, "bias": -100, "pentodes": 2})
    lines = []
    plan = plan_design(design, load_stock(str(path)), MappingOptions(progress=lines.append))
    assert any("fails: buffer trees: net n1 (inside output y0) cannot be spread (test)" in line for line in lines)
    # Another strategy's network is planned, within every limit.
    assert any(words in plan.solution.network for words in ("duplicated drivers", "followers", "buffer trees"))
    assert all(s.fanout <= s.fanout_limit for s in plan.stages)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(designs(), st.sampled_from(STRATEGIES), st.integers(1, 4), st.integers(2, 4), st.integers(2, 5),
       st.data())
def test_random_designs_any_limits(d, strategy, driver, inverter, follower, data):
    """Random designs (test_stages_fuzz's generator), random limits per stage kind and on inputs: every net
    within its limit, followers never chained, the outputs unchanged (the project's proof and sympy)."""
    def limit(stage):
        if stage.kind == "follower":
            return follower
        return inverter if stage.view == "inverter" else driver
    network = synthesise(d).network
    limits = {}
    for spec in d.inputs:
        if data.draw(st.booleans()):
            limits[spec.name] = data.draw(st.integers(1, 3))
            if spec.complement:
                limits["~" + spec.name] = data.draw(st.integers(1, 3))
    repaired = repair_fanout(network, limit, limits, strategy=strategy)
    counts = repaired.load_counts()
    assert all(counts[s.output] <= limit(s) for s in repaired.stages)
    assert all(counts[net] <= n for net, n in limits.items())
    followers = {s.output for s in repaired.stages if s.kind == "follower"}
    assert not any(s.kind == "follower" and s.input in followers for s in repaired.stages)
    prove(repaired, d)
    assert _same_outputs(network, repaired)


def test_doctests_of_the_repair():
    import doctest

    import planner.stages.fanout as module
    result = doctest.testmod(module)
    assert result.attempted and not result.failed


def test_named_signals_follow_their_value(tmp_path):
    """A signal on an inverter the repair rebuilds stays named, on a net of the same value (sympy)."""
    d = _load(tmp_path, "design: t\ninputs: [a, b, c0, c1, c2, c3, c4, c5]\nsignals:\n  g: a & b\noutputs:\n"
              + "".join(f"  y{k}: ~(g & c{k})\n" for k in range(6)))
    network = synthesise(d).network
    assert "g" in network.signals
    repaired = repair_fanout(network, lambda s: 2)
    assert "g" in repaired.signals
    ours, theirs = _sympy_network(network), _sympy_network(repaired)
    assert not satisfiable(sympy.Xor(ours[network.signals["g"]], theirs[repaired.signals["g"]]))
    assert _same_outputs(network, repaired)
