"""The SPICE deck: names, structure, and the truth table reproduced in ngspice (Debian package ngspice)."""

from __future__ import annotations

import dataclasses
import re
from itertools import product

import pytest

from planner.catalogue import builtin_catalogue
from planner.report import NgspiceFailed, NgspiceMissing, run_deck, sanitise, spice_deck
from test_report_fixtures import FIXTURE_LOGIC, fixture_diode_plan, fixture_plan

def _nodes_of(text):
    """Node names of every element line (R, C, D, V, X) of a deck."""
    nodes = set()
    for line in text.splitlines():
        words = line.split()
        if not words or words[0][0] in "*.+" or line.startswith(" "):
            continue
        kind = words[0][0].upper()
        if kind in "RCDV":
            nodes.update(words[1:3])
        elif kind == "X":
            nodes.update(words[1:-1])
    return nodes


def _top_level(text):
    """The deck without its .subckt blocks."""
    return re.sub(r"(?ms)^\.subckt.*?^\.ends[^\n]*\n", "", text)


def test_node_names_are_sanitised():
    deck = spice_deck(fixture_plan(), builtin_catalogue())
    nodes = _nodes_of(_top_level(deck.text))
    assert nodes and all(re.fullmatch(r"[a-z0-9_]+", n) for n in nodes), nodes
    assert {"bplus", "bias", "0", "not_b", "s2_g1", "out_y", "out_z", "out_w"} <= nodes
    assert dict(deck.nodes)["~b"] == "not_b" and dict(deck.nodes)["GND"] == "0"
    assert sanitise("~q.x+") == "not_q_xplus"


def test_names_that_fold_together_stay_distinct():
    """SPICE ignores case: inputs A and a must not share a node or a parameter."""
    plan = fixture_plan()
    plan = dataclasses.replace(plan, inputs=plan.inputs + (("A", False),))
    deck = spice_deck(plan, builtin_catalogue())
    params = dict(deck.params)
    assert params["a"] != params["A"] and params["A"].lower() == params["A"]
    nodes = dict(deck.nodes)
    assert nodes["a"] != nodes["A"]


def test_deck_structure():
    plan = fixture_plan()
    deck = spice_deck(plan, builtin_catalogue())
    text = deck.text
    assert ".param in_a=0" in text and ".param in_b=0" in text
    assert f".param logic_high={plan.high_volts:g} logic_low={plan.low_volts:g}" in text
    assert "V_in_a a 0 {in_a*logic_high + (1-in_a)*logic_low}" in text
    assert "V_not_in_b not_b 0 {(1-in_b)*logic_high + in_b*logic_low}" in text
    assert "V_bplus bplus 0 {225*supply_bplus}" in text and "V_bias bias 0 {-95*supply_bias}" in text
    assert ".param supply_bplus=1 supply_bias=1 supply_tol=0 rdir=0" in text  # corner parameters at nominal
    assert "V_out_z n2 out_z 0" in text
    assert text.count(".subckt TP_12AU7_TRIODE") == 1 and text.count(".subckt TP_5915_DUAL") == 1
    assert "XV2_1 n2 s2_g2 s2_g1 s2_g3 0 TP_5915_DUAL" in text  # pin order: catalogue spice_nodes
    assert text.rstrip().endswith(".op\n.end") and "R12 n3 bias {100000*(1-0.05*rdir)}" in text  # cathode load
    assert "h1" not in _nodes_of(_top_level(text))  # heaters are not in the DC logic circuit
    assert deck.with_inputs({"a": 1}).count(".param in_a=1") == 1
    assert ".param in_b=0" in deck.with_inputs({"a": 1})


def check_truth_table(plan, deck, logic, vectors=None):
    """Every vector through ngspice: each output on the right side of the family's midpoint.

    Returns the simulated output volts per output name: (lowest high, highest low).
    """
    names = [name for name, _ in plan.inputs]
    vectors = vectors or [dict(zip(names, bits)) for bits in product((0, 1), repeat=len(names))]
    results = run_deck(deck, vectors)
    mid = (plan.high_volts + plan.low_volts) / 2
    seen = {}
    wrong = []
    for vector, volts in zip(vectors, results):
        for output, value in volts.items():
            expected = logic(output, vector)
            if (value > mid) != bool(expected):
                wrong.append((vector, output, expected, value))
            lo_high, hi_low = seen.get(output, (float("inf"), float("-inf")))
            seen[output] = (min(lo_high, value), hi_low) if expected else (lo_high, max(hi_low, value))
    assert not wrong, f"simulation disagrees with the truth table (midpoint {mid:g} V): {wrong[:8]}"
    return seen


@pytest.mark.ngspice
def test_fixture_truth_table_in_ngspice():
    """ngspice (Debian package) runs the deck; outputs match NOR, NAND and the follower."""
    plan = fixture_plan()
    deck = spice_deck(plan, builtin_catalogue())
    levels = check_truth_table(plan, deck, lambda out, v: FIXTURE_LOGIC[out](v["a"], v["b"]))
    assert set(levels) == {"w", "y", "z"}


@pytest.mark.ngspice
def test_the_deck_as_written_runs(ngspice):
    """``ngspice -b plan.cir`` runs the file as written (its .op) without errors (the runner raises
    NgspiceFailed on a failure status or an error line)."""
    run = ngspice(spice_deck(fixture_plan(), builtin_catalogue()).with_inputs({"a": 1, "b": 0}), timeout_s=60)
    assert re.search(r"out_z\s+[0-9.e+-]+", run.stdout)


@pytest.mark.ngspice
def test_a_wrong_plan_is_caught():
    """The check can fail: swapping the NAND's inputs to (a, b) breaks z for a=1, b=1 and a=1, b=0."""
    plan = fixture_plan()
    parts = tuple(dataclasses.replace(p, pins=(("1", "b"), ("2", "S2.g3"))) if p.ref == "R9" else p
                  for p in plan.parts)
    deck = spice_deck(dataclasses.replace(plan, parts=parts), builtin_catalogue())
    with pytest.raises(AssertionError, match="disagrees"):
        check_truth_table(plan, deck, lambda out, v: FIXTURE_LOGIC[out](v["a"], v["b"]))


@pytest.mark.ngspice
def test_diode_and_fixture_in_ngspice():
    """A three-input diode AND on one pentode is a NAND-3 in ngspice; the deck models the silicon diodes."""
    plan = fixture_diode_plan()
    deck = spice_deck(plan, builtin_catalogue())
    assert "D1 s1_x a d_silicon" in deck.text and deck.text.count(".model d_silicon D(") == 1
    check_truth_table(plan, deck, lambda out, v: 1 - (v["a"] & v["b"] & v["c"]))


@pytest.mark.ngspice
def test_the_runner_reads_printed_values_and_written_files(ngspice):
    """The one runner (report.run_ngspice, through the fixture): 10 V over 1 k and 3 k in series puts
    7.5 V at their junction (Ohm's law, common practice); files the deck writes come back by name."""
    run = ngspice("* divider\nV1 a 0 10\nR1 a b 1k\nR2 b 0 3k\n.control\nop\nprint v(b)\nwrdata b.txt v(b)\n"
                  ".endc\n.end\n", files=("b.txt", "absent.txt"))
    assert run["v(b)"] == pytest.approx(7.5, rel=1e-6)  # ngspice
    assert list(run.files) == ["b.txt"]
    assert [float(x) for x in run.files["b.txt"].split()] == pytest.approx([10.0, 7.5], rel=1e-6)


@pytest.mark.ngspice
def test_the_runner_raises_on_a_deck_ngspice_cannot_load(ngspice):
    # ngspice's own first error line (its wording, so not anchored).
    with pytest.raises(NgspiceFailed, match=r"unknown subckt: x1 a 0 nosuch"):
        ngspice("* no such subcircuit\nV1 a 0 10\nX1 a 0 NOSUCH\n.op\n.end\n")


def test_run_deck_without_ngspice_says_how_to_install(tmp_path):
    missing = str(tmp_path / "no-ngspice")
    message = (f"tubeplan prove needs the ngspice simulator: {missing!r} is not an executable; "
               "install it (Debian and Ubuntu: apt-get install ngspice) or put it on PATH")
    with pytest.raises(NgspiceMissing, match=f"^{re.escape(message)}$"):
        run_deck(spice_deck(fixture_plan(), builtin_catalogue()), [{"a": 0, "b": 0}], executable=missing)
