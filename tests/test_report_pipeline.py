"""End to end: design and stock files -> plan -> files; every input vector simulated in ngspice.

For the bundled demo and three invented designs (test fixtures, invented data), every
input vector is run through the plan's SPICE deck in ngspice (the Debian package) and each
output node must sit on the right side of the midpoint between the logic family's levels:
the truth table, computed from the design by planner.logic, reproduced in simulation.
"""

from __future__ import annotations

import json
import textwrap
from itertools import product
from pathlib import Path

import pytest

from planner.logic import table_from_expr
from planner.pipeline import Shortage, plan_design
from planner.report import MARKER, run_deck, spice_deck, write_plan
from planner.report.designators import natural_key
from planner.spec import load_design, load_stock
from test_report_bom import check_bom_against_plan, check_wiring_against_plan
from test_report_html import ARTIFACTS, check_report_html, needs_chromium, render_in_chromium

DEMO = Path(__file__).resolve().parent.parent / "inventory_demo"

# Invented designs and stocks (test fixtures), each of up to 5 inputs. With these stocks the
# planner builds "vote" from diode ANDs (solid-state diodes on 6AU6 and 5915 sections),
# "vote-multigrid" from NAND-2 stages on the two control grids of the 5915 and
# "compare-triode" on a multi-level network of triode stages.
VOTE = """\
    design: vote-and-parity
    inputs: [a, b, c]
    signals:
      ab: a & b
    outputs:
      maj: ab | a & c | b & c
      odd: a ^ b ^ c
      none:
        over: [a, b, c]
        minterms: [0]
        dont_care: [7]
    """

INVENTED = {
    "compare": ("""\
        design: two-bit-compare
        inputs:
          - {name: a1, complement: true}
          - {name: a0, complement: true}
          - b1
          - b0
        outputs:
          gt: a1 & ~b1 | ~(a1 ^ b1) & a0 & ~b0
          eq: ~(a1 ^ b1) & ~(a0 ^ b0)
        """, """\
        supplies:
          plate: {volts: 200, max_ma: 200}
          bias: {volts: -90, max_ma: 50}
          heater:
            - {id: H1, volts: 6.3, max_amps: 8}
        tubes:
          5915: {count: 6}
          12AT7: {count: 12}
          12AU7: {count: 10}
        """),
    "decoder": ("""\
        design: enable-decoder
        inputs: [en, s1, s0]
        outputs:
          d0: en & ~s1 & ~s0
          d1: en & ~s1 & s0
          d2: en & s1 & ~s0
          d3: en & s1 & s0
        """, """\
        supplies:
          plate: {volts: 250, max_ma: 200}
          bias: {volts: -105, max_ma: 60}
          heater:
            - {id: H1, volts: 6.3, max_amps: 6}
            - {id: H2, volts: 12.6, max_amps: 2}
        tubes:
          6SN7: {count: 6}
          6AU6: {count: 6}
          6AL5: {count: 4}
        diodes: vacuum-only
        """),
    "vote": (VOTE, """\
        supplies:
          plate: {volts: 225, max_ma: 150}
          bias: {volts: -95, max_ma: 40}
          heater:
            - {id: H1, volts: 6.3, max_amps: 8}
        tubes:
          5915: {count: 8, scarce: true}
          6AU6: {count: 12, reserve: 1}
        diodes: solid-state
        prices: {resistor: 0.05, socket: 1.20, diode: 0.10}
        """),
    # Dual triodes only: here the multi-level network (outputs sharing stages) needs the fewest envelopes.
    "compare-triode": ("""\
        design: two-bit-compare-triodes
        inputs: [a1, a0, b1, b0]
        outputs:
          gt: a1 & ~b1 | ~(a1 ^ b1) & a0 & ~b0
          eq: ~(a1 ^ b1) & ~(a0 ^ b0)
          lt: ~a1 & b1 | ~(a1 ^ b1) & ~a0 & b0
        """, """\
        supplies:
          plate: {volts: 170, max_ma: 300}
          bias: {volts: -90, max_ma: 80}
          heater:
            - {id: H1, volts: 6.3, max_amps: 8}
        tubes:
          12AU7: {count: 30}
        diodes: none
        """),
    "vote-multigrid": (VOTE, """\
        supplies:
          plate: {volts: 225, max_ma: 150}
          bias: {volts: -95, max_ma: 40}
          heater:
            - {id: H1, volts: 6.3, max_amps: 8}
        tubes:
          5915: {count: 14}
          6AU6: {count: 2}
        """),
}

CASES = ["demo"] + sorted(INVENTED)


@pytest.fixture(scope="module")
def planned(tmp_path_factory):
    """case -> (design, stock, plan, out_dir, design path, stock path); each case planned once."""
    cache = {}

    def get(case):
        if case not in cache:
            if case == "demo":
                design_path, stock_path = DEMO / "design.yaml", DEMO / "stock.yaml"
            else:
                folder = tmp_path_factory.mktemp(case)
                design_path, stock_path = folder / "design.yaml", folder / "stock.yaml"
                design_text, stock_text = INVENTED[case]
                design_path.write_text(textwrap.dedent(design_text))
                stock_path.write_text(textwrap.dedent(stock_text))
            design, stock = load_design(design_path), load_stock(stock_path)
            try:
                plan = plan_design(design, stock)
            except Shortage as shortage:  # planned once: every test of the case reports it
                cache[case] = shortage
            else:
                out = tmp_path_factory.mktemp(f"{case}-out") / "plan"
                write_plan(plan, out, stock=stock, design_path=design_path, stock_path=stock_path)
                cache[case] = (design, stock, plan, out, design_path, stock_path)
        if isinstance(cache[case], Shortage):
            pytest.fail(f"{case}: the planner found the stock short: {cache[case]}")
        return cache[case]
    return get


def _expected(design, names):
    """output -> (on bits, don't-care bits) over ``names`` (names[0] the most significant bit)."""
    tables = {}
    for output in design.outputs:
        table = table_from_expr(design.flatten(output.expr), names, design.flatten(output.dont_care))
        tables[output.name] = (table.on, table.dc)
    return tables


def stage_values(plan, vector):
    """Logic value of every net of the plan for one input vector, from its stages (DESIGN.md stage model:
    an inverting stage is NOT(OR of ANDs of its branches' inputs), a follower copies its input)."""
    values = dict(vector)
    values.update({f"~{name}": 1 - vector[name] for name, complement in plan.inputs if complement})
    for stage in plan.stages:
        if stage.kind == "follower":
            values[stage.output] = values[stage.input]
        else:
            values[stage.output] = 0 if any(all(values[i] for i in b.inputs) for b in stage.branches) else 1
    return values


@pytest.mark.ngspice
@pytest.mark.parametrize("case", CASES)
def test_truth_table_reproduced_in_ngspice(planned, case):
    """ngspice (Debian package) DC operating point per input vector against planner.logic's truth table.

    Every design output must sit on the right side of the midpoint between the family's levels;
    so must every stage's net (loaded by its real fan-out), against the plan's own stage logic,
    and at these nominal values inside the family's worst-case levels. The simulated levels are
    written to test-artifacts/levels_CASE.txt.
    """
    design, stock, plan, out, _, _ = planned(case)
    names = tuple(design.input_names)
    assert len(names) <= 5
    deck = spice_deck(plan, stock.catalogue)
    assert (out / "plan.cir").read_text() == deck.text
    vectors = [dict(zip(names, bits)) for bits in product((0, 1), repeat=len(names))]
    nodes = dict(deck.nodes)
    stage_nets = [s.output for s in plan.stages]
    probes = {**{f"output {o}": n for o, n in deck.outputs}, **{f"net {n}": nodes[n] for n in stage_nets}}
    results = run_deck(deck, vectors, probes=probes)
    tables = _expected(design, names)
    mid = (plan.high_volts + plan.low_volts) / 2
    wrong, internal_wrong, levels = [], [], {}
    for index, (vector, volts) in enumerate(zip(vectors, results)):
        for output, (on, dc) in tables.items():
            if dc >> index & 1:
                continue
            want, got = on >> index & 1, volts[f"output {output}"]
            if (got > mid) != bool(want):
                wrong.append((vector, output, want, round(got, 2)))
        logic = stage_values(plan, vector)
        for net in stage_nets:
            got = volts[f"net {net}"]
            if (got > mid) != bool(logic[net]):
                internal_wrong.append((vector, net, logic[net], round(got, 2)))
            low_high, high_low = levels.get(net, (float("inf"), float("-inf")))
            levels[net] = (min(low_high, got), high_low) if logic[net] else (low_high, max(high_low, got))
    assert not wrong, f"{case}: simulation disagrees with the truth table (midpoint {mid:g} V): {wrong[:10]}"
    assert not internal_wrong, f"{case}: stage nets on the wrong side of {mid:g} V: {internal_wrong[:10]}"
    # The family's levels hold worst case (tolerances, tube wear); a nominal simulation lies inside them.
    outside = [(net, round(h, 2), round(l, 2)) for net, (h, l) in levels.items()
               if h < plan.high_volts or l > plan.low_volts]
    assert not outside, f"{case}: nominal levels outside the family's worst-case levels: {outside[:10]}"
    ARTIFACTS.mkdir(exist_ok=True)
    highs = [h for h, _ in levels.values() if h != float("inf")]
    lows = [l for _, l in levels.values() if l != float("-inf")]
    lines = [f"{case}: family high {plan.high_volts:.2f} V, low {plan.low_volts:.2f} V, midpoint {mid:.2f} V; "
             f"over all stage nets: lowest simulated high {min(highs):.2f} V, highest simulated low {max(lows):.2f} V"]
    lines += [f"  {net}: lowest high {h:.2f} V, highest low {l:.2f} V" for net, (h, l) in
              sorted(levels.items(), key=lambda kv: natural_key(kv[0]))]
    (ARTIFACTS / f"levels_{case}.txt").write_text("\n".join(lines) + "\n")


def test_the_cases_cover_every_branch_kind(planned):
    """Between them the end-to-end cases use single, dual-control and diode-AND branches."""
    means = {b.means for case in sorted(INVENTED) for s in planned(case)[2].stages for b in s.branches}
    assert {"single", "dual", "diode"} <= means


def test_a_case_is_built_on_a_multilevel_network(planned):
    """The ngspice run above covers a plan built on a multi-level network; plan.json lists every
    candidate network with its stages and envelopes, the chosen one the fewest envelopes."""
    _, _, plan, out, _, _ = planned("compare-triode")
    assert plan.solution.network.startswith("multi-level")
    doc = json.loads((out / "plan.json").read_text())["solution"]
    tried = {n["network"]: n for n in doc["networks"]}
    assert doc["network"] in tried and any(not label.startswith("multi-level") for label in tried)
    chosen = tried[doc["network"]]
    assert chosen["stages"] == len(plan.stages) and chosen["envelopes"] == len(plan.envelopes)
    assert all(n["envelopes"] is None or n["envelopes"] >= chosen["envelopes"] for n in tried.values())


@pytest.mark.parametrize("case", CASES)
def test_files_agree_with_the_plan(planned, case):
    design, stock, plan, out, design_path, stock_path = planned(case)
    from planner.report import bom_lines, wiring_rows
    prices = dict(stock.prices)
    tube_prices = {t.tube: t.unit_price for t in stock.tubes if t.unit_price is not None}
    check_bom_against_plan(plan, bom_lines(plan, prices=prices, tube_prices=tube_prices))
    check_wiring_against_plan(plan, wiring_rows(plan, stock.catalogue))
    doc = json.loads((out / "plan.json").read_text())
    assert doc["schema"] == 2 and doc["design"] == design.name
    assert sorted(doc["outputs"]) == sorted(o.name for o in design.outputs)
    text = check_report_html((out / "report.html").read_text())
    assert str(design_path) in text and str(stock_path) in text
    assert all(part.ref in text for part in plan.parts)  # every part is in the report
    assert (out / MARKER).is_file()


def test_same_plan_same_bytes(planned, tmp_path):
    """Writing the same plan again gives byte-identical files."""
    design, stock, plan, out, design_path, stock_path = planned("decoder")
    again = tmp_path / "again"
    write_plan(plan, again, stock=stock, design_path=design_path, stock_path=stock_path)
    for name in ("plan.json", "bom.csv", "bom.md", "wiring.csv", "plan.cir", "report.html", "report.md"):
        assert (again / name).read_bytes() == (out / name).read_bytes(), name


@needs_chromium
def test_demo_report_renders_in_headless_chromium(planned):
    _, _, _, out, _, _ = planned("demo")
    ARTIFACTS.mkdir(exist_ok=True)
    render_in_chromium(out / "report.html", ARTIFACTS / "report_demo.png")


def test_cli_refuses_a_file_and_a_foreign_directory(planned, run_cli, tmp_path):
    """--out onto a regular file or a directory without the marker: exit status 2, one message."""
    *_, design_path, stock_path = planned("decoder")
    target = tmp_path / "notes.txt"
    target.write_text("mine")
    status, _, err = run_cli("plan", design_path, "--stock", stock_path, "--out", target)
    last = err.strip().splitlines()[-1]  # progress lines come first
    assert status == 2 and last.startswith(f"{target}:0: ") and "Traceback" not in err
    assert target.read_text() == "mine"
    foreign = tmp_path / "foreign"
    foreign.mkdir()
    (foreign / "keep.txt").write_text("keep")
    status, _, err = run_cli("plan", design_path, "--stock", stock_path, "--out", foreign)
    assert status == 2 and MARKER in err.strip().splitlines()[-1]
    assert sorted(p.name for p in foreign.iterdir()) == ["keep.txt"]
