"""BOM, budgets and wiring list agree with the plan they are made from."""

from __future__ import annotations

import csv
import io
from collections import Counter

import pytest

from planner.catalogue import builtin_catalogue
from planner.mapping import Part
from planner.report import (CAUTIONS, HEADROOM, SURGE_FACTORS, bom_csv, bom_lines, bom_markdown, plan_budgets,
                            wiring_csv, wiring_rows)
from planner.report.designators import natural_key, ranges
from test_report_fixtures import FIXTURE_PRICES, FIXTURE_TUBE_PRICES, fixture_diode_plan, fixture_plan


def check_bom_against_plan(plan, lines):
    """Quantities, designators and stock columns of ``lines`` agree with ``plan`` (used for every plan)."""
    tubes = Counter(e.tube for e in plan.envelopes)
    assert {l.description.split()[0]: l.quantity for l in lines if l.group == "tube"} == dict(tubes)
    bases = Counter(e.base for e in plan.envelopes)
    assert {l.description.removesuffix(" tube socket"): l.quantity for l in lines if l.group == "socket"} \
        == dict(bases)
    stock = {s.tube: s for s in plan.stock}
    for line in lines:
        assert line.quantity == len(line.designators) or line.group == "supply"
        if line.group == "tube":
            entry = stock[line.description.split()[0]]
            assert (line.left_in_stock, line.reserve_kept) == (entry.on_hand - line.quantity, entry.reserve)
            assert entry.used == line.quantity
    for kind in ("resistor", "diode", "capacitor"):
        refs = [r for l in lines if l.group == kind for r in l.designators]
        assert sorted(refs) == sorted(p.ref for p in plan.parts if p.kind == kind)
        assert len(refs) == len(set(refs))
    by_ref = {p.ref: p for p in plan.parts}
    for line in lines:
        if line.group == "resistor":
            keys = {(by_ref[r].ohms, by_ref[r].watts_rating, by_ref[r].tolerance) for r in line.designators}
            assert len(keys) == 1  # grouped by value, wattage and tolerance


def check_wiring_against_plan(plan, rows):
    """Every pin of every part appears exactly once, under its own net."""
    pins = Counter((p.ref, pin, net) for p in plan.parts for pin, net in p.pins)
    listed = Counter((r.ref, r.pin, r.net) for r in rows)
    assert listed == pins
    assert max(Counter((r.ref, r.pin) for r in rows).values()) == 1


def test_bom_quantities_agree_with_the_plan():
    plan = fixture_plan()
    lines = bom_lines(plan)
    check_bom_against_plan(plan, lines)
    resistors = {l.description: l.quantity for l in lines if l.group == "resistor"}
    assert resistors["220k ohm resistor 0.5 W 5 %"] == 8
    assert resistors["100k ohm resistor 0.5 W 5 %"] == 1 and resistors["100k ohm resistor 1 W 5 %"] == 1


def test_designators_use_ieee_315_class_letters():
    """IEEE 315 class letters: V electron tube, R resistor (X for a socket, IEEE 200: from memory)."""
    lines = bom_lines(fixture_plan())
    letters = {l.group: {r.rstrip("0123456789") for r in l.designators} for l in lines if l.designators
               and l.group != "supply"}
    assert letters == {"tube": {"V"}, "socket": {"XV"}, "resistor": {"R"}}


def test_prices_give_totals():
    plan = fixture_plan()
    lines = bom_lines(plan, prices=FIXTURE_PRICES, tube_prices=FIXTURE_TUBE_PRICES)
    by = {l.description: l for l in lines}
    assert by["12AU7 tube"].total == pytest.approx(16.0)
    assert by["220k ohm resistor 0.5 W 5 %"].total == pytest.approx(0.8)
    text = bom_csv(lines)
    rows = list(csv.DictReader(io.StringIO(text)))
    total = next(r for r in rows if r["group"] == "total")
    # 2 x 8.00 + 12.00 tubes, 3 x 1.50 sockets, 12 x 0.10 resistors
    assert float(total["line_total"]) == pytest.approx(16 + 12 + 4.5 + 1.2)
    assert "Total of priced lines: 33.70" in bom_markdown(lines, title=plan.design)


def test_supply_ratings_state_headroom_and_surge():
    """25 % headroom and a 5 to 7 times cold-start surge (both common practice)."""
    assert HEADROOM == 0.25 and SURGE_FACTORS == (5.0, 7.0)
    budgets = plan_budgets(fixture_plan())
    h1 = budgets.windings[0]
    assert (h1.rating_amps, h1.surge_amps_low, h1.surge_amps_high) == pytest.approx((0.75, 3.0, 4.2))
    assert budgets.plate.rating_ma == pytest.approx(12.7 * 1.25)
    assert h1.envelopes == ("V1", "V2")
    lines = [l.description for l in bom_lines(fixture_plan()) if l.group == "supply"]
    assert any("H1 6.3 V, rated at least 0.75 A" in l and "surge 3.0 to 4.2 A" in l for l in lines)


def test_heat_and_resistor_dissipation_are_sums_of_the_plan():
    plan = fixture_plan()
    b = plan_budgets(plan)
    assert b.heat_watts == pytest.approx(plan.budget.heater_watts + 225 * 12.7e-3 + 95 * 4.0e-3)
    assert b.resistor_watts == pytest.approx(sum(p.dissipation_watts for p in plan.parts if p.kind == "resistor"))
    assert [r.ref for r in b.resistors] == [p.ref for p in plan.parts if p.kind == "resistor"]


def test_bom_files_carry_the_cautions():
    lines = bom_lines(fixture_plan())
    rows = list(csv.DictReader(io.StringIO(bom_csv(lines))))
    cautions = [r["description"] for r in rows if r["group"] == "caution"]
    assert cautions == [f"{h}: {t}" for h, t in CAUTIONS]
    md = bom_markdown(lines, title="fixture-gates")
    assert all(h in md and t in md for h, t in CAUTIONS)
    assert "can kill" in md.lower() or "kill" in md


def test_wiring_has_every_pin_exactly_once():
    plan = fixture_plan()
    rows = wiring_rows(plan, builtin_catalogue())
    check_wiring_against_plan(plan, rows)
    parsed = list(csv.reader(io.StringIO(wiring_csv(rows))))
    assert parsed[0] == ["net", "terminal", "function", "part", "stage"]
    assert len(parsed) - 1 == sum(len(p.pins) for p in plan.parts)
    assert [r[0] for r in parsed[1:]] == sorted((r[0] for r in parsed[1:]), key=natural_key)


def test_tube_pin_functions_follow_the_basing():
    """12AU7 on the 9-pin noval base: section 1 plate 6, grid 7, cathode 8; heater 4 and 5, tap 9
    (RCA tube manual basing diagram for the 12AU7, from memory; the catalogue holds the same)."""
    rows = {(r.ref, r.pin): r for r in wiring_rows(fixture_plan(), builtin_catalogue())}
    assert rows[("V1", "6")].function == "s1 plate" and rows[("V1", "6")].net == "n1"
    assert rows[("V1", "7")].function == "s1 grid" and rows[("V1", "8")].function == "s1 cathode"
    assert rows[("V1", "4")].function == rows[("V1", "5")].function == "heater"
    assert rows[("V1", "9")].function == "heater centre tap" and rows[("V1", "9")].net == "H1_RET"
    assert rows[("V1", "6")].stage == "S1" and rows[("V3", "8")].stage == "S3"
    heater_nets = {r.net for r in rows.values() if r.function.startswith("heater")}
    assert heater_nets == {"H1", "H1_RET", "H2", "H2_RET"}


def test_designator_ranges():
    assert ranges(["R2", "R3", "R4", "R5", "R7", "R8", "V1"]) == "R2-R5, R7, R8, V1"
    assert sorted(["V10", "V9", "V1"], key=natural_key) == ["V1", "V9", "V10"]


def test_diodes_are_grouped_by_kind():
    plan = fixture_diode_plan()
    lines = bom_lines(plan, prices={"diode": 0.25})
    check_bom_against_plan(plan, lines)
    diodes = [l for l in lines if l.group == "diode"]
    assert [(l.description, l.quantity, l.designators) for l in diodes] == \
        [("silicon signal diode, rated at least 320 V reverse (the B+ to BIAS span)", 3, ("D1", "D2", "D3"))]
    assert diodes[0].total == 0.75
    rows = wiring_rows(plan, builtin_catalogue())
    check_wiring_against_plan(plan, rows)
    assert {(r.terminal, r.function) for r in rows if r.ref == "D1"} == {("D1.A", "anode"), ("D1.K", "cathode")}


def test_speedup_capacitors_are_listed_wired_and_simulated():
    """A plan made with speed-up capacitors (across a divider's upper resistor) lists them as C parts."""
    import dataclasses

    from planner.report import spice_deck
    plan = fixture_plan()
    caps = (Part("C1", "capacitor", "22p", (("1", "a"), ("2", "S1.g1")), "speed-up", "S1", farads=22e-12),
            Part("C2", "capacitor", "22p", (("1", "b"), ("2", "S1.g2")), "speed-up", "S1", farads=22e-12))
    plan = dataclasses.replace(plan, parts=plan.parts + caps)
    lines = bom_lines(plan)
    check_bom_against_plan(plan, lines)
    assert [(l.description, l.designators) for l in lines if l.group == "capacitor"] == \
        [("22p capacitor", ("C1", "C2"))]
    check_wiring_against_plan(plan, wiring_rows(plan, builtin_catalogue()))
    assert "C1 a s1_g1 2.2e-11" in spice_deck(plan, builtin_catalogue()).text
