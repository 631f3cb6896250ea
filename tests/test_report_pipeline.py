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
from planner.mapping import plan_design
from planner.report import MARKER, simulate, spice_deck, write_plan
from planner.spec import load_design, load_stock
from test_report_bom import check_bom_against_plan, check_wiring_against_plan
from test_report_html import ARTIFACTS, check_report_html, needs_chromium, render_in_chromium
from test_report_spice import needs_ngspice

DEMO = Path(__file__).resolve().parent.parent / "inventory_demo"

# Invented designs and stocks (test fixtures), each of up to 5 inputs.
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
          5915: {count: 4}
          12AT7: {count: 6}
          12AU7: {count: 4}
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
    "vote": ("""\
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
        """, """\
        supplies:
          plate: {volts: 225, max_ma: 150}
          bias: {volts: -95, max_ma: 40}
          heater:
            - {id: H1, volts: 6.3, max_amps: 6}
        tubes:
          12AU7: {count: 8, reserve: 1}
          6AS6: {count: 3, scarce: true}
        diodes: solid-state
        prices: {resistor: 0.05, socket: 1.20, diode: 0.10}
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
                design_path.write_text(textwrap.dedent(INVENTED[case][0]))
                stock_path.write_text(textwrap.dedent(INVENTED[case][1]))
            design, stock = load_design(design_path), load_stock(stock_path)
            plan = plan_design(design, stock)
            out = tmp_path_factory.mktemp(f"{case}-out") / "plan"
            write_plan(plan, out, stock=stock, design_path=design_path, stock_path=stock_path)
            cache[case] = (design, stock, plan, out, design_path, stock_path)
        return cache[case]
    return get


def _expected(design, names):
    """output -> (on bits, don't-care bits) over ``names`` (names[0] the most significant bit)."""
    tables = {}
    for output in design.outputs:
        table = table_from_expr(design.flatten(output.expr), names, design.flatten(output.dont_care))
        tables[output.name] = (table.on, table.dc)
    return tables


@needs_ngspice
@pytest.mark.parametrize("case", CASES)
def test_truth_table_reproduced_in_ngspice(planned, case):
    """ngspice (Debian package) DC operating point per input vector against planner.logic's truth table."""
    design, stock, plan, out, _, _ = planned(case)
    names = tuple(design.input_names)
    assert len(names) <= 5
    deck = spice_deck(plan, stock.catalogue)
    assert (out / "plan.cir").read_text() == deck.text
    vectors = [dict(zip(names, bits)) for bits in product((0, 1), repeat=len(names))]
    results = simulate(deck, vectors)
    tables = _expected(design, names)
    mid = (plan.high_volts + plan.low_volts) / 2
    wrong, levels = [], {}
    for index, (vector, volts) in enumerate(zip(vectors, results)):
        for output, (on, dc) in tables.items():
            if dc >> index & 1:
                continue
            want = on >> index & 1
            got = volts[output]
            if (got > mid) != bool(want):
                wrong.append((vector, output, want, round(got, 2)))
            low_high, high_low = levels.get(output, (float("inf"), float("-inf")))
            levels[output] = (min(low_high, got), high_low) if want else (low_high, max(high_low, got))
    assert not wrong, f"{case}: simulation disagrees with the truth table (midpoint {mid:g} V): {wrong[:10]}"
    ARTIFACTS.mkdir(exist_ok=True)
    lines = [f"{case}: family high {plan.high_volts:.2f} V, low {plan.low_volts:.2f} V, midpoint {mid:.2f} V"]
    lines += [f"  {o}: lowest simulated high {h:.2f} V, highest simulated low {l:.2f} V"
              for o, (h, l) in sorted(levels.items())]
    (ARTIFACTS / f"levels_{case}.txt").write_text("\n".join(lines) + "\n")


@pytest.mark.parametrize("case", CASES)
def test_files_agree_with_the_plan(planned, case):
    design, stock, plan, out, design_path, stock_path = planned(case)
    from planner.report import bom_lines, wiring_rows
    prices = dict(stock.prices)
    tube_prices = {t.tube: t.unit_price for t in stock.tubes if t.unit_price is not None}
    check_bom_against_plan(plan, bom_lines(plan, prices=prices, tube_prices=tube_prices))
    check_wiring_against_plan(plan, wiring_rows(plan, stock.catalogue))
    doc = json.loads((out / "plan.json").read_text())
    assert doc["schema"] == 1 and doc["design"] == design.name
    assert sorted(doc["outputs"]) == sorted(o.name for o in design.outputs)
    text = check_report_html((out / "report.html").read_text())
    assert str(design_path) in text and str(stock_path) in text
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


def test_cli_refuses_a_file_and_a_foreign_directory(run_cli, tmp_path):
    """--out onto a regular file or a directory without the marker: exit status 2, one message."""
    target = tmp_path / "notes.txt"
    target.write_text("mine")
    status, _, err = run_cli("plan", DEMO / "design.yaml", "--stock", DEMO / "stock.yaml", "--out", target)
    assert status == 2 and err.startswith(f"{target}:0: ") and "Traceback" not in err
    assert target.read_text() == "mine"
    foreign = tmp_path / "foreign"
    foreign.mkdir()
    (foreign / "keep.txt").write_text("keep")
    status, _, err = run_cli("plan", DEMO / "design.yaml", "--stock", DEMO / "stock.yaml", "--out", foreign)
    assert status == 2 and MARKER in err
    assert sorted(p.name for p in foreign.iterdir()) == ["keep.txt"]
