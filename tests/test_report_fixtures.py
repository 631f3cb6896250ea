"""A hand-made plan for the report tests (invented data: a test fixture, not a planner result).

Design "fixture-gates" (invented): inputs a and b, b with its complement.
  y = NOR(a, b)        stage S1 on both triodes of V1 (12AU7), net n1
  z = NAND(a, ~b)      stage S2 on the dual-control section of V2 (5915), net n2
  w = y, buffered      stage S3, a cathode follower on V3 section 1 (12AU7), net n3
Resistor values were picked by hand for these rails (225 V, -95 V) and checked
in ngspice (test_report_spice.py); budget figures are invented round numbers.
The tests in this file check the fixture against the catalogue's basing so
that the other report tests stand on a plan that could be wired.
"""

from __future__ import annotations

from planner.catalogue import builtin_catalogue
from planner.mapping import (Budget, Envelope, Part, PlacedBranch, PlacedStage, Plan, SectionUse, Solution,
                             StockUse, WindingLoad)


def _r(ref, ohms, a, b, role, stage, watts, rating=0.5, tol=0.05):
    value = f"{ohms / 1000:g}k" if ohms < 1e6 else f"{ohms / 1e6:g}M"
    return Part(ref, "resistor", value, (("1", a), ("2", b)), role, stage, ohms=ohms, watts_rating=rating,
                dissipation_watts=watts, tolerance=tol)


def fixture_plan(*, prices: bool = False) -> Plan:
    """The invented three-stage plan described in the module docstring."""
    stages = (
        PlacedStage("S1", "inverting", "n1", "NOR-2",
                    branches=(PlacedBranch(("a",), "single", "12AU7", "V1", 1),
                              PlacedBranch(("b",), "single", "12AU7", "V1", 2)),
                    plate_load_ohms=47e3, fanout=1, fanout_limit=6, supply_amps_worst=4.6e-3,
                    supply_amps_typical=2.4e-3, bias_amps_worst=0.4e-3),
        PlacedStage("S2", "inverting", "n2", "NAND-2",
                    branches=(PlacedBranch(("a", "~b"), "dual", "5915", "V2", 1),),
                    plate_load_ohms=68e3, fanout=0, fanout_limit=5, supply_amps_worst=4.9e-3,
                    supply_amps_typical=2.9e-3, bias_amps_worst=0.4e-3),
        PlacedStage("S3", "follower", "n3", "follower", input="n1", tube="12AU7", envelope="V3", section=1,
                    load_ohms=100e3, fanout=0, fanout_limit=12, supply_amps_worst=3.2e-3,
                    supply_amps_typical=2.1e-3, bias_amps_worst=3.2e-3),
    )
    envelopes = (
        Envelope("V1", "12AU7", "9-pin noval", "H1", "parallel", 6.3, 0.3,
                 (SectionUse(1, "single", "S1", (("cathode", "GND"), ("grid", "S1.g1"), ("plate", "n1"))),
                  SectionUse(2, "single", "S1", (("cathode", "GND"), ("grid", "S1.g2"), ("plate", "n1"))))),
        Envelope("V2", "5915", "7-pin miniature", "H1", "single", 6.3, 0.3,
                 (SectionUse(1, "dual", "S2", (("cathode", "GND"), ("grid", "S2.g1"), ("grid3", "S2.g3"),
                                               ("plate", "n2"), ("screen", "S2.g2"))),)),
        Envelope("V3", "12AU7", "9-pin noval", "H2", "series", 12.6, 0.15,
                 (SectionUse(1, "follower", "S3", (("cathode", "n3"), ("grid", "n1"), ("plate", "B+"))),)),
    )
    parts = (
        Part("V1", "tube", "12AU7", (("1", "n1"), ("2", "S1.g2"), ("3", "GND"), ("4", "H1"), ("5", "H1"),
                                     ("6", "n1"), ("7", "S1.g1"), ("8", "GND"), ("9", "H1_RET")),
             "tube", None, tube="12AU7"),
        Part("V2", "tube", "5915", (("1", "S2.g3"), ("2", "GND"), ("3", "H1"), ("4", "H1_RET"), ("5", "n2"),
                                    ("6", "S2.g2"), ("7", "S2.g1")), "tube", None, tube="5915"),
        Part("V3", "tube", "12AU7", (("1", "GND"), ("2", "GND"), ("3", "GND"), ("4", "H2"), ("5", "H2_RET"),
                                     ("6", "B+"), ("7", "n1"), ("8", "n3")), "tube", None, tube="12AU7"),
        _r("R1", 47e3, "B+", "n1", "plate load", "S1", 0.75, rating=2.0),
        _r("R2", 220e3, "a", "S1.g1", "divider upper", "S1", 0.04),
        _r("R3", 220e3, "S1.g1", "BIAS", "divider lower", "S1", 0.04),
        _r("R4", 220e3, "b", "S1.g2", "divider upper", "S1", 0.04),
        _r("R5", 220e3, "S1.g2", "BIAS", "divider lower", "S1", 0.04),
        _r("R6", 68e3, "B+", "n2", "plate load", "S2", 0.6, rating=1.0),
        _r("R7", 220e3, "a", "S2.g1", "divider upper", "S2", 0.04),
        _r("R8", 220e3, "S2.g1", "BIAS", "divider lower", "S2", 0.04),
        _r("R9", 220e3, "~b", "S2.g3", "divider upper", "S2", 0.04),
        _r("R10", 220e3, "S2.g3", "BIAS", "divider lower", "S2", 0.04),
        _r("R11", 100e3, "B+", "S2.g2", "screen feed", "S2", 0.05),
        _r("R12", 100e3, "n3", "BIAS", "cathode load", "S3", 0.9, rating=1.0),
    )
    budget = Budget(heater_watts=2 * 6.3 * 0.3 + 12.6 * 0.15,
                    windings=(WindingLoad("H1", 6.3, 8.0, 0.6), WindingLoad("H2", 12.6, 2.5, 0.15)),
                    plate_amps_worst=12.7e-3, plate_amps_typical=7.4e-3, bias_amps=4.0e-3, plate_max_amps=0.2,
                    bias_max_amps=0.05)
    # The 5915 and 6AL5 models are from memory in the catalogue (TubeType.model_from_memory).
    stock = (StockUse("12AU7", 4, 1, 2, False), StockUse("5915", 2, 0, 1, True, True),
             StockUse("6AL5", 3, 0, 0, False, True))
    return Plan(design="fixture-gates", inputs=(("a", False), ("b", True)),
                outputs=(("w", "n3"), ("y", "n1"), ("z", "n2")),
                forms=(("w", "~(a | b)"), ("y", "~(a | b)"), ("z", "~(a & ~b)")),
                stages=stages, envelopes=envelopes, parts=parts, budget=budget, stock=stock,
                solution=Solution("CBC", "Optimal", 3.25, 3.25, 0.0, 0.12),
                plate_volts=225.0, bias_volts=-95.0, high_volts=180.0, low_volts=60.0)


#: The fixture's truth table: output -> function of (a, b).
FIXTURE_LOGIC = {"y": lambda a, b: 1 - (a | b), "w": lambda a, b: 1 - (a | b), "z": lambda a, b: 1 - (a & (1 - b))}

#: The fixture's stock prices (invented), as the stock file's ``prices`` and ``unit_price`` give them.
FIXTURE_PRICES = {"resistor": 0.1, "socket": 1.5}
FIXTURE_TUBE_PRICES = {"12AU7": 8.0, "5915": 12.0}


def test_fixture_pins_follow_the_catalogue_basing():
    """Every tube pin of the fixture exists on its base and matches the section roles (catalogue data)."""
    catalogue = builtin_catalogue()
    plan = fixture_plan()
    envelopes = {e.ref: e for e in plan.envelopes}
    for part in plan.parts:
        if part.kind != "tube":
            continue
        tube = catalogue.get(part.tube)
        pins = dict(part.pins)
        assert all(1 <= int(p) <= tube.pin_count for p in pins)
        for use in envelopes[part.ref].sections:
            section = tube.sections[use.index - 1]
            for role, net in use.nets:
                assert pins[str(section.pins[role])] == net, (part.ref, role)


def test_fixture_stages_have_their_parts():
    plan = fixture_plan()
    loads = {p.stage for p in plan.parts if p.kind == "resistor" and p.role == "plate load"}
    assert loads == {s.id for s in plan.stages if s.kind == "inverting"}


def fixture_diode_plan() -> Plan:
    """Invented plan "fixture-diode": q = NAND(a, b, c) as a diode AND on a 6AU6 pentode (V1).

    The circuit is the one the planner builds for a diode-AND branch: a gate node pulled
    up from B+ (1.3M), a silicon diode from the gate node (anode) to each input (cathode),
    and the divider (680k / 1.2M to BIAS) from the gate node to the grid; the screen is fed
    from B+ through 68k with 100k to ground, the suppressor is tied to ground. Values as a
    planner run chose them for 225 V / -95 V, levels 67.5 V / 20.25 V; budgets invented.
    """
    parts = [Part("V1", "tube", "6AU6", (("1", "S1.g1"), ("2", "GND"), ("3", "H1"), ("4", "H1_RET"),
                                         ("5", "n1"), ("6", "S1.g2"), ("7", "GND")), "tube", None, tube="6AU6"),
             _r("R1", 130e3, "B+", "n1", "plate load", "S1", 0.39, rating=1.0),
             _r("R2", 68e3, "B+", "S1.g2", "screen series", "S1", 0.25),
             _r("R3", 100e3, "S1.g2", "GND", "screen shunt", "S1", 0.18),
             _r("R4", 1.3e6, "B+", "S1.x", "gate pull-up", "S1", 0.02),
             _r("R5", 680e3, "S1.x", "S1.g1", "divider upper", "S1", 0.01),
             _r("R6", 1.2e6, "S1.g1", "BIAS", "divider lower", "S1", 0.01)]
    parts += [Part(f"D{i}", "diode", "silicon signal diode", (("A", "S1.x"), ("K", name)), "AND diode", "S1")
              for i, name in enumerate("abc", start=1)]
    stage = PlacedStage("S1", "inverting", "n1", "NAND-3",
                        branches=(PlacedBranch(("a", "b", "c"), "diode", "6AU6", "V1", 1, ("D1", "D2", "D3")),),
                        plate_load_ohms=130e3, fanout=0, fanout_limit=4, supply_amps_worst=3.9e-3,
                        supply_amps_typical=2.6e-3, bias_amps_worst=0.2e-3)
    envelope = Envelope("V1", "6AU6", "7-pin miniature", "H1", "single", 6.3, 0.3,
                        (SectionUse(1, "diode", "S1", (("cathode", "GND"), ("grid", "S1.g1"), ("grid3", "GND"),
                                                       ("plate", "n1"), ("screen", "S1.g2"))),))
    budget = Budget(1.89, (WindingLoad("H1", 6.3, 2.0, 0.3),), 3.9e-3, 2.6e-3, 0.2e-3, 0.1, 0.02)
    return Plan(design="fixture-diode", inputs=(("a", False), ("b", False), ("c", False)),
                outputs=(("q", "n1"),), forms=(("q", "~(a & b & c)"),), stages=(stage,), envelopes=(envelope,),
                parts=tuple(parts), budget=budget, stock=(StockUse("6AU6", 2, 0, 1, False, True),),
                solution=Solution("CBC", "Optimal", 1.1, 1.1, 0.0, 0.05),
                plate_volts=225.0, bias_volts=-95.0, high_volts=67.5, low_volts=20.25)
