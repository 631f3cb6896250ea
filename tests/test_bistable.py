"""The register's bistable: worst-case steering design and ngspice transient runs of one bistable.

The bistable is designed for a one-type family (12AU7 on an invented +225 V / -95 V supply, a test
fixture). Closed-form checks re-derive the design's worst-case conditions from its values; the
transient runs (ngspice, the catalogue's triode subcircuit, the wiring allowance on every node)
show it taking its steered state on every falling clock edge.
"""

import pytest

from planner.catalogue import builtin_catalogue, spice_subcircuit, subcircuit_name
from planner.electrical import (CAPACITOR_TOLERANCE, WIRING_FARADS, Bistable, DesignRules, Rails, Steering,
                                design_bistable, design_family, flip_edges)
from planner.electrical.circuit import Load
from planner.electrical.context import TubeContext

CAT = builtin_catalogue()
RAILS = Rails(225.0, -95.0)
WEAR = 0.7
#: The test clock's fall and rise (s), well within the plan's limit for this design.
CLOCK_FALL = 1e-7


@pytest.fixture(scope="module")
def design():
    tube = CAT.get("12AU7")
    family = design_family(RAILS, [(tube, WEAR)], DesignRules())
    bistable = design_bistable(family, tube, WEAR, {"12AU7": tube})
    assert isinstance(bistable, Bistable), bistable
    return tube, family, bistable


def test_values_come_from_the_family(design):
    tube, family, b = design
    driver, rec = family.drivers[("12AU7", "single")], family.receivers[("12AU7", "grid")]
    assert (b.plate_load_ohms, b.upper_ohms, b.lower_ohms) == (driver.plate_load_ohms, rec.upper_ohms, rec.lower_ohms)
    assert b.fanout_limit == driver.fanout_limit - 1  # the cross-coupling divider is one of the driver's loads


def test_worst_case_steering_conditions(design):
    tube, family, b = design
    ctx = TubeContext(tube, WEAR, RAILS, family.rules)
    margin, t = family.rules.margin_volts, family.rules.resistor_tolerance
    cs_hi = b.steering_farads * (1 + CAPACITOR_TOLERANCE)
    k_max = cs_hi / (cs_hi + b.steering_node_farads)
    # The clock may be anywhere within its tolerance, and the window holds all of it.
    assert b.clock_swing_min_volts <= b.clock_swing_volts * (1 - b.clock_tolerance)
    assert b.clock_swing_volts * (1 + b.clock_tolerance) <= b.clock_swing_max_volts
    # A high level input's node stays above a conducting grid (at its clamp) by the margin.
    assert family.high_min_volts - k_max * b.clock_swing_max_volts >= ctx.grid_high_max_volts + margin - 1e-9
    # The steered grid goes below cut-off by the margin at least, for long enough.
    assert b.grid_pulse_volts <= ctx.cutoff_volts("grid") - margin
    assert b.pulse_hold_seconds >= 2 * b.flip_seconds
    # A steering input draws at most one family load's current from a high node.
    heavy = max(r.load_amps_high for r in family.receivers.values())
    assert k_max * b.clock_swing_max_volts / (b.steering_ohms * (1 - t)) <= heavy


def _netlist(tube, b: Bistable, swing: float, period: float, cycles: int, toggle: bool,
             levels: tuple[float, float] = (0.0, 0.0)) -> str:
    """One bistable, loaded by one divider on each plate; toggle: each side steered by its own plate
    (D = ~q); else D and ~D are held by sources at ``levels`` (high, low)."""
    sub = subcircuit_name(tube, "triode")
    d_level = "p1" if toggle else "dhi"
    nd_level = "p2" if toggle else "dlo"
    lines = ["* tubeplan bistable test", spice_subcircuit(tube, "triode").strip(),
             ".model d_silicon D(IS=2.5n N=1.8 RS=0.6 CJO=4p)",
             f"VB bp 0 {RAILS.plate_volts!r}", f"VC bias 0 {RAILS.bias_volts!r}",
             f"VDH dhi 0 {levels[0]!r}", f"VDL dlo 0 {levels[1]!r}",
             f"VCLK clk 0 PULSE({swing!r} 0 {period / 2!r} {CLOCK_FALL!r} {CLOCK_FALL!r} {period / 2!r} {period!r})"]
    for k, other, level in ((1, 2, d_level), (2, 1, nd_level)):
        lines += [f"RL{k} bp p{k} {b.plate_load_ohms!r}", f"X{k} p{k} g{k} 0 {sub}",
                  f"R1_{k} p{other} g{k} {b.upper_ohms!r}", f"R2_{k} g{k} bias {b.lower_ohms!r}",
                  f"CC{k} p{other} g{k} {b.commutating_farads!r}", f"CS{k} clk x{k} {b.steering_farads!r}",
                  f"RS{k} {level} x{k} {b.steering_ohms!r}", f"D{k} g{k} x{k} d_silicon",
                  f"CWP{k} p{k} 0 {WIRING_FARADS!r}", f"CWG{k} g{k} 0 {WIRING_FARADS!r}",
                  f"CWX{k} x{k} 0 {WIRING_FARADS!r}",
                  f"RLA{k} p{k} l{k} {b.upper_ohms!r}", f"RLB{k} l{k} bias {b.lower_ohms!r}", f"XL{k} bp l{k} 0 {sub}"]
    # Start in the reset state at the bistable's own levels (p1 high, p2 low), each grid where its divider puts it
    # (the conducting side's grid clamped near 0 V), so the start itself gives no kick through the capacitors.
    def divided(plate: float) -> float:
        return (plate * b.lower_ohms + RAILS.bias_volts * b.upper_ohms) / (b.upper_ohms + b.lower_ohms)
    ic = (f".ic v(p1)={b.high_volts!r} v(p2)={b.low_volts!r} v(g1)={divided(b.low_volts)!r} "
          f"v(g2)={min(0.0, divided(b.high_volts))!r}")
    lines += [ic, ".control", f"tran 1u {(cycles + 0.6) * period!r} uic"]
    lines += [f"meas tran q{k} FIND v(p2) AT={(k + 0.45) * period!r}" for k in range(cycles + 1)]
    mid = 0.5 * (b.high_volts + b.low_volts)
    lines += [f"meas tran flip WHEN v(p2)={mid!r} RISE=1", f"meas tran flop WHEN v(p1)={mid!r} FALL=1", ".endc", ".end"]
    return "\n".join(lines) + "\n"


@pytest.mark.ngspice
@pytest.mark.parametrize("where", ["lowest", "nominal", "highest"])
def test_toggles_on_every_falling_edge_across_the_clock_window(design, where, ngspice):
    tube, family, b = design
    swing = {"lowest": b.clock_swing_min_volts, "nominal": b.clock_swing_volts,
             "highest": b.clock_swing_max_volts}[where]
    period = 4 * b.recovery_seconds + 4 * b.setup_seconds
    found = ngspice(_netlist(tube, b, swing, period, 4, toggle=True), timeout_s=120)
    q = [found[f"q{k}"] for k in range(5)]
    # Reference: ngspice transient; a bistable steered by its own plates toggles on each edge.
    states = [int(v >= family.high_min_volts) for v in q]
    assert all(v >= family.high_min_volts or v <= family.low_max_volts for v in q), q
    assert states == [0, 1, 0, 1, 0], q


@pytest.mark.ngspice
@pytest.mark.parametrize("where", ["lowest", "highest"])
def test_sets_from_worst_case_levels_across_the_clock_window(design, where, ngspice):
    tube, family, b = design
    swing = b.clock_swing_min_volts if where == "lowest" else b.clock_swing_max_volts
    period = 4 * b.recovery_seconds + 4 * b.setup_seconds
    levels = (family.high_min_volts, family.follower_low_max_volts)  # D just high, ~D just low
    found = ngspice(_netlist(tube, b, swing, period, 3, toggle=False, levels=levels), timeout_s=120)
    # Reference: ngspice transient; D held high sets q at the first edge, and the node steered by the
    # high level never triggers (else later edges would clear it).
    assert [int(found[f"q{k}"] >= family.high_min_volts) for k in range(4)] == [0, 1, 1, 1]


@pytest.mark.ngspice
def test_flip_estimate_against_ngspice(design, ngspice):
    tube, family, b = design
    period = 4 * b.recovery_seconds + 4 * b.setup_seconds
    found = ngspice(_netlist(tube, b, b.clock_swing_volts, period, 1, toggle=True), timeout_s=120)
    own = Load(b.upper_ohms, b.lower_ohms, RAILS.bias_volts, tube)
    loads = ((1, own), (1, own))
    c_series = b.commutating_farads * b.grid_node_farads / (b.commutating_farads + b.grid_node_farads)
    farads = (tube.c_out_farads or 0) + WIRING_FARADS + c_series + (tube.c_gp_farads or 0)
    mid = 0.5 * (b.high_volts + b.low_volts)
    # Steered by its own plates: the cut-off side's Rs hangs on the rising plate.
    steering = Steering(b.steering_ohms, b.steering_farads, b.steering_node_farads, b.clock_swing_volts)
    up, down = flip_edges(tube, 1.0, RAILS.plate_volts, b.plate_load_ohms, own, b.commutating_farads,
                          b.grid_node_farads, loads, loads, farads, farads, mid, steering)
    edge = period / 2 + CLOCK_FALL / 2  # the clock's falling midpoint
    for estimate, measured in ((up.seconds, found["flip"] - edge), (down.seconds, found["flop"] - edge)):
        # Reference: ngspice, each plate's midpoint crossing after the clock's falling edge.
        assert abs(estimate - measured) <= 0.5 * measured, (estimate, measured)
