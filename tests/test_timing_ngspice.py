"""The stage delay estimate agrees with an ngspice transient run of a chain of three inverters.

Each chain is built from the planner's own template for the type (``design_template``, one load):
the input divider, plate load and (for a pentode) screen feed of every stage, the catalogue's
SPICE subcircuit (the same tube equations and capacitances as the estimate), the wiring allowance
on every plate and grid node, and a fourth stage's divider and grid as the last stage's load. The
input steps between the template's design levels. Delay is defined the same way on both sides:
from the input's crossing of the midpoint between the design levels to the third output's crossing
of it. The estimate chains ``inverter_edge`` (each stage driven by the edge the previous one makes).

Two corners, the same on both sides. Nominal: a new tube, as the catalogue's SPICE model is; the
estimate agrees with ngspice within 25 %. Slow (``slow_corner``): resistors high, supplies low,
capacitances high, the tube worn to the rules' wear (and weaker still for a type whose model is
from memory), in SPICE by dividing kg1 (and kg2) by that fraction, which scales the model's currents
exactly as the estimate's wear does; the worst-case bound (the slow estimate times 1.25) is at
least ngspice's delay there.
"""


import pytest

from dataclasses import replace

from planner.catalogue import builtin_catalogue, spice_nodes, spice_subcircuit, subcircuit_name
from planner.electrical import (NOMINAL_CORNER, WIRING_FARADS, DesignRules, InverterTiming, Rails, Wave,
                                design_template, inverter_edge, slow_corner)
from planner.electrical.circuit import Load, ScreenFeed

pytestmark = pytest.mark.ngspice

CAT = builtin_catalogue()
STAGES = 3
#: The input's steps (s): high until FALL_AT, low until RISE_AT, then high; the run ends at END.
FALL_AT, RISE_AT, END = 50e-6, 500e-6, 900e-6


RULES = DesignRules()
CORNERS = {"nominal": (NOMINAL_CORNER, 1.0), "slow": (slow_corner(RULES), RULES.wear)}
"""Corner name -> (corner, the tube's condition there)."""


def _spice_tube(tube, corner, wear: float):
    """The type as the SPICE run sees it at a corner: capacitances scaled, currents times its wear."""
    w = corner.wear(tube, wear)
    m = tube.model
    model = replace(m, kg1=m.kg1 / w, kg2=None if m.kg2 is None else m.kg2 / w)
    return replace(corner.tube(tube), model=model)


def _chain_netlist(tube, template, rails: Rails, corner, wear: float) -> tuple[str, float]:
    """The chain's netlist at ``corner`` and the midpoint volts."""
    d, r = template.driver, template.receivers[0]
    high, low = template.design_high_volts, template.design_low_volts
    mid = 0.5 * (high + low)
    kind = tube.sections[0].kind
    ohms, volts, wiring = corner.ohms_scale, corner.supply_scale, WIRING_FARADS * corner.farads_scale
    lines = ["* tubeplan timing test chain", spice_subcircuit(_spice_tube(tube, corner, wear), kind).strip(),
             f"VB bp 0 {rails.plate_volts * volts!r}", f"VC bias 0 {rails.bias_volts * volts!r}",
             f"VIN in 0 PWL(0 {high!r} {FALL_AT!r} {high!r} {FALL_AT + 1e-9!r} {low!r} {RISE_AT!r} {low!r} "
             f"{RISE_AT + 1e-9!r} {high!r})"]

    def section(k: int, plate: str) -> list[str]:
        pins = {"plate": plate, "grid": f"g{k}", "cathode": "0", "screen": f"s{k}", "grid3": "0"}
        out = []
        if d.screen_series_ohms is not None:  # the template's screen feed, bypassed for signals
            out += [f"RS{k} bp s{k} {d.screen_series_ohms * ohms!r}", f"CS{k} s{k} 0 1u"]
            if d.screen_shunt_ohms is not None:
                out.append(f"RSH{k} s{k} 0 {d.screen_shunt_ohms * ohms!r}")
        return out + [f"X{k} " + " ".join(pins[role] for role in spice_nodes(tube, kind)) + " "
                      + subcircuit_name(tube, kind)]

    source = "in"
    for k in range(1, STAGES + 2):
        lines += [f"R1_{k} {source} g{k} {r.upper_ohms * ohms!r}", f"R2_{k} g{k} bias {r.lower_ohms * ohms!r}",
                  f"CG{k} g{k} 0 {wiring!r}"]
        if k <= STAGES:
            lines += [f"RL{k} bp p{k} {d.plate_load_ohms * ohms!r}", f"CP{k} p{k} 0 {wiring!r}"] + section(k, f"p{k}")
            source = f"p{k}"
        else:
            lines += section(k, "bp")  # the last stage's load: a fourth stage's divider and grid
    lines += [".control", f"tran 20n {END!r}",
              f"meas tran fall_in WHEN v(in)={mid!r} FALL=1", f"meas tran fall_out WHEN v(p{STAGES})={mid!r} CROSS=1",
              f"meas tran rise_in WHEN v(in)={mid!r} RISE=1", f"meas tran rise_out WHEN v(p{STAGES})={mid!r} CROSS=2",
              ".endc", ".end"]
    return "\n".join(lines) + "\n", mid


def _estimate(tube, template, rails: Rails, mid: float, corner, wear: float) -> dict:
    """The chain's delays by the planner's estimate, nominal values taken to ``corner``, times its bound factor."""
    d, r = template.driver, template.receivers[0]
    divider = Load(r.upper_ohms, r.lower_ohms, rails.bias_volts, tube)
    feed = None if d.screen_series_ohms is None else ScreenFeed(d.screen_series_ohms, d.screen_shunt_ohms)
    stage = corner.stage(InverterTiming(tube, wear, rails.plate_volts, d.plate_load_ohms, divider, ((1, divider),),
                                        (tube.c_out_farads or 0.0) + WIRING_FARADS,
                                        (tube.c_in_farads or 0.0) + WIRING_FARADS, feed))
    out = {}
    high, low = template.design_high_volts, template.design_low_volts
    for name, wave in (("fall", Wave(high, low)), ("rise", Wave(low, high))):
        total = 0.0
        for _ in range(STAGES):
            edge = inverter_edge(stage, wave, mid)
            total += edge.seconds
            wave = edge.output
        out[name] = total * corner.bound_factor
    return out


def _spice_and_estimate(ngspice, name, corner_name):
    tube = CAT.get(name)
    corner, wear = CORNERS[corner_name]
    rails = Rails(250.0, -100.0)
    template = design_template(tube, "single", rails, 1)
    netlist, mid = _chain_netlist(tube, template, rails, corner, wear)
    run = ngspice(netlist, timeout_s=120)
    assert all(f"{edge}_{end}" in run.values for edge in ("fall", "rise") for end in ("in", "out")), run.stdout[-2000:]
    spice = {edge: run[f"{edge}_out"] - run[f"{edge}_in"] for edge in ("fall", "rise")}
    return spice, _estimate(tube, template, rails, mid, corner, wear)


TYPES = ["12AU7", "12AT7", "12AX7", "6SN7", "6AU6"]


@pytest.mark.parametrize("name", TYPES)
def test_chain_delay_within_25_percent_of_ngspice(name, ngspice):
    spice, estimate = _spice_and_estimate(ngspice, name, "nominal")
    for edge in ("fall", "rise"):
        # Reference: ngspice transient (.tran) of the same chain, same delay definition.
        assert abs(estimate[edge] - spice[edge]) <= 0.25 * spice[edge], (name, edge, estimate, spice)


@pytest.mark.parametrize("name", TYPES)
def test_worst_case_delay_bounds_ngspice_at_the_slow_corner(name, ngspice):
    spice, bound = _spice_and_estimate(ngspice, name, "slow")
    for edge in ("fall", "rise"):
        # Reference: ngspice transient (.tran) of the same chain at the slow corner. The bound holds
        # and is not vacuous (under twice the simulated delay).
        assert spice[edge] <= bound[edge] <= 2.0 * spice[edge], (name, edge, bound, spice)
