"""Registers: planning, proof of the next-state logic, simulation over clock cycles, timing and reports.

The designs and the stock are test fixtures of our own (invented data): a 2-bit counter with an
enable and a 3-bit shift register. References: the arithmetic of counting and shifting (the
definitions of those circuits), the catalogue's heater data (Brimar 12AU7 report: 6.3 V, 0.3 A),
and ngspice for the transient runs of the planned SPICE decks.
"""

import re

import pytest

from planner.catalogue import builtin_catalogue
from planner.electrical import is_dual_triode
from planner.mapping import BIAS_RAIL
from planner.pipeline import Shortage, plan_design
from planner.pipeline import _design as planning
from planner.report import plan_document, plan_summary, reset_press, spice_deck
from planner.report.markdown_report import report_markdown
from planner.report.content import report_content
from planner.spec import load_design, load_stock
from planner.stages import Branch, Network, ProofError, Stage, simulate

# Invented data: a 2-bit counter that counts while en is 1, with a carry output.
COUNTER = """\
design: counter2
inputs: [en]
registers:
  q0: {next: q0 ^ en}
  q1: {next: q1 ^ (q0 & en)}
outputs:
  carry: q0 & q1 & en
"""

# Invented data: a 3-bit shift register; the last stage resets to 1.
SHIFT = """\
design: shift3
inputs: [d]
registers:
  s0: {next: d}
  s1: {next: s0}
  s2: {next: s1, reset: 1}
outputs:
  out: s2
"""

# Invented data: a box of 12AU7s on a bench supply.
STOCK = """\
supplies:
  plate: {volts: 225, max_ma: 200}
  bias: {volts: -75, max_ma: 50}
  heater:
    - {id: H1, volts: 6.3, max_amps: 6}
tubes:
  12AU7: {count: 16}
diodes: solid-state
"""


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    root = tmp_path_factory.mktemp("registers")
    paths = {}
    for name, text in (("counter", COUNTER), ("shift", SHIFT), ("stock", STOCK)):
        paths[name] = root / f"{name}.yaml"
        paths[name].write_text(text)
    return paths


@pytest.fixture(scope="module")
def counter(files):
    design, stock = load_design(files["counter"]), load_stock(files["stock"])
    return design, stock, plan_design(design, stock)


@pytest.fixture(scope="module")
def shift(files):
    design, stock = load_design(files["shift"]), load_stock(files["stock"])
    return design, stock, plan_design(design, stock)


def plan_network(design, plan) -> Network:
    """The plan's stages as a stage network over the combinational view (register outputs as inputs)."""
    view = design.combinational()
    stages = []
    for s in plan.stages:
        if s.kind == "follower":
            stages.append(Stage(s.id, s.output, "follower", input=s.input))
            continue
        means = {1: "single", 2: "dual"}
        stages.append(Stage(s.id, s.output, "inverting",
                            tuple(Branch(b.inputs, means.get(len(b.inputs), "diode")) for b in s.branches)))
    outputs = dict(plan.outputs)
    for r in plan.registers:
        outputs[f"{r.name}_next"] = r.next
        outputs[f"~{r.name}_next"] = r.next_complement
    complements = tuple(i.name for i in view.inputs if i.complement)
    return Network(view.input_names, tuple(stages), outputs, complements=complements)


def step(network: Network, design, state: dict, inputs: dict) -> tuple[dict, dict]:
    """One clock cycle: (next state, design outputs) from the network, each value one bit."""
    bits = dict(inputs, **state)
    values = simulate(network, bits, width=1)
    nxt = {r.name: values[network.outputs[f"{r.name}_next"]] for r in design.registers}
    for r in design.registers:
        assert values[network.outputs[f"~{r.name}_next"]] == 1 - nxt[r.name]  # the steering's two level inputs
    return nxt, {o.name: values[network.outputs[o.name]] for o in design.outputs}


def test_counter_counts_over_clock_cycles(counter):
    design, _, plan = counter
    network = plan_network(design, plan)
    state = {r.name: r.reset for r in design.registers}
    count = 0
    enables = [1, 1, 0, 1, 1, 1, 0, 1, 1]
    for en in enables:
        nxt, outs = step(network, design, state, {"en": en})
        # Reference: a 2-bit counter with enable adds en modulo 4; its carry is q0 & q1 & en.
        assert outs["carry"] == int(count == 3 and en == 1)
        count = (count + en) % 4
        assert nxt == {"q0": count & 1, "q1": count >> 1}
        state = nxt


def test_shift_register_shifts_over_clock_cycles(shift):
    design, _, plan = shift
    network = plan_network(design, plan)
    state = {r.name: r.reset for r in design.registers}
    history = [state["s2"], state["s1"], state["s0"]]  # oldest first
    for d in [1, 0, 1, 1, 0, 0, 1]:
        nxt, outs = step(network, design, state, {"d": d})
        assert outs["out"] == state["s2"]
        # Reference: a shift register moves every bit one place per clock.
        history.append(d)
        assert [nxt["s2"], nxt["s1"], nxt["s0"]] == history[-3:]
        state = nxt


def test_next_state_is_proven_before_any_plan(files, monkeypatch):
    design, stock = load_design(files["counter"]), load_stock(files["stock"])
    real = planning.cached_network

    def swapped(view, options):  # a network whose next state of q0 is its complement
        net = real(view, options)
        outputs = dict(net.outputs)
        outputs["q0_next"], outputs["~q0_next"] = outputs["~q0_next"], outputs["q0_next"]
        return Network(net.inputs, net.stages, outputs, net.forms, net.signals, net.complements,
                       net.inverted_signals)

    monkeypatch.setattr(planning, "cached_network", swapped)
    with pytest.raises(ProofError, match="q0_next"):
        plan_design(design, stock)


def test_registers_in_plan_json_and_parts(counter, shift):
    catalogue = builtin_catalogue()
    for design, _, plan in (counter, shift):
        doc = plan_document(plan)
        envelopes = {e["ref"]: e for e in doc["envelopes"]}
        assert [r["name"] for r in doc["registers"]] == [r.name for r in design.registers]
        for entry, reg in zip(doc["registers"], design.registers):
            assert entry["tube"] == envelopes[entry["envelope"]]["tube"]
            assert is_dual_triode(catalogue.get(entry["tube"]))
            assert [s["means"] for s in envelopes[entry["envelope"]]["sections"]] == ["bistable", "bistable"]
            assert entry["next"] in {p["net"] for part in doc["parts"] for p in part["pins"]}
            assert entry["reset"] == reg.reset
            parts = [p for p in plan.parts if p.stage == f"reg:{reg.name}"]
            roles = sorted(p.role for p in parts)
            assert roles.count("plate load") == 2 and roles.count("steering") == 4  # 2 resistors, 2 capacitors
            assert roles.count("steering diode") == 2 and roles.count("commutating") == 2
            reset = next(p for p in parts if p.role == "reset diode")
            # The reset diode holds the grid of the section that reset cuts off (q = section 2's plate).
            assert dict(reset.pins)["A"] == f"{reg.name}.g{2 if reg.reset else 1}"
        assert doc["clock"]["swing_min_volts"] <= doc["clock"]["swing_volts"] <= doc["clock"]["swing_max_volts"]
        assert sum(1 for p in plan.parts if p.role == "reset pull-up") == 1


def test_budget_counts_the_registers(counter):
    design, stock, plan = counter
    register_refs = {r.envelope for r in plan.registers}
    assert len(register_refs) == len(design.registers)
    used = {s.tube: s.used for s in plan.stock}
    assert used["12AU7"] == len(plan.envelopes)
    # Reference: the catalogue's 12AU7 heater, 6.3 V 0.3 A in parallel (Brimar 12AU7 report).
    assert plan.budget.windings[0].amps == pytest.approx(0.3 * len(plan.envelopes))
    stages = sum(s.supply_amps_worst for s in plan.stages)
    assert plan.budget.plate_amps_worst >= stages + sum(r.supply_amps_worst for r in plan.registers)


def test_timing_and_clock_estimate(counter, shift):
    for _, _, plan in (counter, shift):
        t = plan.timing
        assert t.start.startswith(("register ", "input ")) and t.end.startswith("register ")
        # A follower copies its grid: with no grid stopper its falling edge may add no delay.
        kinds = {s.id: s.kind for s in plan.stages}
        assert all(s.rise_seconds > 0 and (s.fall_seconds > 0 or kinds[s.id] == "follower") for s in t.stages)
        assert all(s.fall_seconds >= 0 for s in t.stages)
        assert t.min_period_seconds >= t.path_seconds and t.min_period_seconds >= 2 * t.high_seconds_min
        assert t.path_seconds >= t.setup_seconds
        # The clock comes from the worst-case bound (slow corner), which is never faster than nominal.
        assert t.max_clock_hz == pytest.approx(1 / t.min_period_seconds_worst)
        assert t.min_period_seconds_worst >= t.min_period_seconds and t.path_seconds_worst >= t.path_seconds
        assert all(s.rise_seconds_worst >= s.rise_seconds and s.fall_seconds_worst >= s.fall_seconds
                   for s in t.stages)
        assert all(r.clock_to_q_seconds > 0 for r in plan.registers)
        summary = plan_summary(plan)
        assert "Highest safe clock" in summary and "Critical path" in summary
        report = report_markdown(report_content(plan, builtin_catalogue()))
        assert "## Timing" in report and "## Registers and clock" in report


def test_combinational_design_has_a_path_and_no_clock(files, write):
    path = write("comb.yaml", "design: c\ninputs: [a, b]\noutputs:\n  y: a & ~b\n")  # invented fixture
    plan = plan_design(load_design(path), load_stock(files["stock"]))
    assert plan.registers == () and plan.clock is None
    assert plan.timing.max_clock_hz is None and plan.timing.end == "output y"
    assert plan.timing.path_seconds > 0 and "Slowest path" in plan_summary(plan)


def test_constant_next_states_plan_and_time(files, write):
    # Invented fixture: registers with constant next states and a constant output.
    path = write("const.yaml", "design: k\ninputs: [a]\nregisters:\n  q: {next: 1}\n  r: {next: 0, reset: 1}\n"
                               "outputs:\n  one: a | ~a\n  y: q & a\n")
    design = load_design(path)
    plan = plan_design(design, load_stock(files["stock"]))
    network = plan_network(design, plan)
    nxt, outs = step(network, design, {"q": 0, "r": 1}, {"a": 1})
    assert nxt == {"q": 1, "r": 0} and outs == {"one": 1, "y": 0}  # Reference: the design's own expressions.
    assert plan.timing.path == () and plan.timing.max_clock_hz > 0
    assert "Every next state is constant" in plan_summary(plan)


def test_repair_carries_a_register_beyond_its_fan_out(files, write):
    # Invented fixture: one register feeding six outputs, more than a 12AU7 bistable drives.
    outputs = "".join(f"  y{k}: q & {x}\n" for k, x in enumerate("abcde")) + "  y5: q | e & d\n"
    path = write("fan.yaml", "design: f\ninputs: [a, b, c, d, e]\nregisters:\n  q: {next: q ^ a}\n"
                             "outputs:\n" + outputs)
    design = load_design(path)
    plan = plan_design(design, load_stock(files["stock"]))
    reg = plan.registers[0]
    # Followers or buffer inverters (whichever the integer program finds cheaper) take q's extra loads.
    spread = [s for s in plan.stages if (s.input if s.kind == "follower" else s.branches[0].inputs[0])
              in (reg.output, reg.complement) and (s.kind == "follower" or s.view == "inverter")]
    assert spread and reg.fanout <= reg.fanout_limit
    network = plan_network(design, plan)
    for q in (0, 1):
        for bits in range(32):
            inputs = {x: bits >> k & 1 for k, x in enumerate("abcde")}
            nxt, outs = step(network, design, {"q": q}, inputs)
            # Reference: the design's own expressions.
            assert nxt["q"] == q ^ inputs["a"]
            assert outs["y5"] == (q | inputs["e"] & inputs["d"])
            assert all(outs[f"y{k}"] == q & inputs[x] for k, x in enumerate("abcde"))


def test_registers_need_a_dual_triode_and_solid_state_diodes(files, write):
    design = load_design(files["counter"])
    pentodes = write("p.yaml", STOCK.replace("12AU7: {count: 16}", "6AU6: {count: 16}"))
    with pytest.raises(Shortage, match="dual triode"):
        plan_design(design, load_stock(pentodes))
    vacuum = write("v.yaml", STOCK.replace("diodes: solid-state", "diodes: none"))
    with pytest.raises(Shortage, match="solid-state steering diodes"):
        plan_design(design, load_stock(vacuum))


def _transient(ngspice, plan, inputs: dict, edges: int) -> list[dict]:
    """Run the plan's deck with its clock pulsing; every register's q (volts) just before each falling edge."""
    period = 2 * max(plan.timing.min_period_seconds, 1e-3)
    deck = spice_deck(plan, builtin_catalogue())
    text = deck.with_inputs(inputs)
    pulse = "PULSE({} 0 {!r} 1u 1u {!r} {!r})"
    text = re.sub(r"(?m)^V_clk (\S+) 0 (\S+)$",
                  lambda m: f"V_clk {m.group(1)} 0 " + pulse.format(m.group(2), period / 2, period / 2, period), text)
    nodes = dict(deck.nodes)
    # The reset contact is pressed from the start to a fifth of the first period, as tubeplan prove does.
    press = reset_press(nodes[plan.clock.reset_net], nodes[BIAS_RAIL], period / 5, 1e-6)
    text = text.replace("\n.op\n", "\n" + press + ".op\n")
    control = [".control", f"tran 2u {(edges + 0.6) * period!r}"]
    for k in range(edges + 1):
        for r in plan.registers:
            control.append(f"meas tran {r.name}_{k} FIND v({nodes[r.output]}) AT={(k + 0.45) * period!r}")
    control.append(".endc")
    text = text.replace("\n.op\n", "\n" + "\n".join(control) + "\n")
    run = ngspice(text, timeout_s=300)
    wanted = [f"{r.name}_{k}" for k in range(edges + 1) for r in plan.registers]
    assert all(name in run.values for name in wanted), run.stdout[-2000:]
    return [{r.name: run[f"{r.name}_{k}"] for r in plan.registers} for k in range(edges + 1)]


def _bits(plan, volts: dict) -> dict:
    out = {}
    for name, v in volts.items():
        assert v >= plan.high_volts or v <= plan.low_volts, (name, v)  # a clean family level
        out[name] = int(v >= plan.high_volts)
    return out


@pytest.mark.ngspice
def test_planned_counter_counts_in_ngspice(counter, ngspice):
    _, _, plan = counter
    states = [_bits(plan, v) for v in _transient(ngspice, plan, {"en": 1}, 5)]
    # Reference: ngspice transient of the plan's own deck; a counter adds one per falling clock edge.
    assert [s["q0"] + 2 * s["q1"] for s in states] == [0, 1, 2, 3, 0, 1]


@pytest.mark.ngspice
def test_planned_shift_register_shifts_in_ngspice(shift, ngspice):
    _, _, plan = shift
    states = [_bits(plan, v) for v in _transient(ngspice, plan, {"d": 1}, 3)]
    # Reference: ngspice transient; the reset state 001 (s0 s1 s2) takes a 1 into s0 on each edge.
    assert [(s["s0"], s["s1"], s["s2"]) for s in states] == [(0, 0, 1), (1, 0, 0), (1, 1, 0), (1, 1, 1)]


def test_the_register_is_drawn_in_the_report(counter):
    from planner.report.html_report import report_html
    from test_report_html import check_report_html

    _, _, plan = counter
    page = report_html(report_content(plan, builtin_catalogue()))
    text = check_report_html(page)
    assert "register (bistable, reset to 0) on 12AU7 (q0, q1)" in text
    drawing = page[page.index("register (bistable"):]
    drawing = drawing[:drawing.index("</svg>")]
    # Drawn from the parts list: both steering diodes, the reset diode and the steering capacitors of q0.
    refs = [p.ref for p in plan.parts if p.stage == "reg:q0" and p.role in ("steering diode", "reset diode",
                                                                             "steering", "plate load")]
    assert len(refs) >= 7 and all(re.search(rf">{r}\b", drawing) for r in refs), refs
    assert ">RESET<" in drawing and ">CLK<" in drawing and ">~q0<" in drawing and 'viewBox="' in drawing
