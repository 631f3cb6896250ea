"""The stage delay estimate agrees with an ngspice transient run of a chain of three inverters.

Each chain is built from the planner's own template for the type (``design_template``, one load):
the input divider, plate load and (for a pentode) screen feed of every stage, the catalogue's
SPICE subcircuit (the same tube equations and capacitances as the estimate), the wiring allowance
on every plate and grid node, and a fourth stage's divider and grid as the last stage's load. The
input steps between the template's design levels. Delay is defined the same way on both sides:
from the input's crossing of the midpoint between the design levels to the third output's crossing
of it. The estimate chains ``inverter_edge`` (each stage driven by the edge the previous one makes)
for a new tube, as the SPICE model is.
"""

import re
import shutil
import subprocess

import pytest

from planner.catalogue import builtin_catalogue, spice_nodes, spice_subcircuit, subcircuit_name
from planner.electrical import WIRING_PF, InverterTiming, Rails, Wave, design_template, inverter_edge
from planner.electrical.circuit import Load, ScreenFeed

pytestmark = [
    pytest.mark.ngspice,
    pytest.mark.skipif(shutil.which("ngspice") is None, reason="ngspice is not installed (apt install ngspice)"),
]

CAT = builtin_catalogue()
STAGES = 3
#: The input's steps (s): high until FALL_AT, low until RISE_AT, then high; the run ends at END.
FALL_AT, RISE_AT, END = 50e-6, 500e-6, 900e-6


def _chain_netlist(tube, template, rails: Rails) -> tuple[str, float]:
    """The chain's netlist and the midpoint volts."""
    d, r = template.driver, template.receivers[0]
    high, low = template.design_high_volts, template.design_low_volts
    mid = 0.5 * (high + low)
    kind = tube.sections[0].kind
    lines = ["* tubeplan timing test chain", spice_subcircuit(tube, kind).strip(),
             f"VB bp 0 {rails.plate_volts!r}", f"VC bias 0 {rails.bias_volts!r}",
             f"VIN in 0 PWL(0 {high!r} {FALL_AT!r} {high!r} {FALL_AT + 1e-9!r} {low!r} {RISE_AT!r} {low!r} "
             f"{RISE_AT + 1e-9!r} {high!r})"]

    def section(k: int, plate: str) -> list[str]:
        pins = {"plate": plate, "grid": f"g{k}", "cathode": "0", "screen": f"s{k}", "grid3": "0"}
        out = []
        if d.screen_series_ohms is not None:  # the template's screen feed, bypassed for signals
            out += [f"RS{k} bp s{k} {d.screen_series_ohms!r}", f"CS{k} s{k} 0 1u"]
            if d.screen_shunt_ohms is not None:
                out.append(f"RSH{k} s{k} 0 {d.screen_shunt_ohms!r}")
        return out + [f"X{k} " + " ".join(pins[role] for role in spice_nodes(tube, kind)) + " "
                      + subcircuit_name(tube, kind)]

    source = "in"
    for k in range(1, STAGES + 2):
        lines += [f"R1_{k} {source} g{k} {r.upper_ohms!r}", f"R2_{k} g{k} bias {r.lower_ohms!r}",
                  f"CG{k} g{k} 0 {WIRING_PF}p"]
        if k <= STAGES:
            lines += [f"RL{k} bp p{k} {d.plate_load_ohms!r}", f"CP{k} p{k} 0 {WIRING_PF}p"] + section(k, f"p{k}")
            source = f"p{k}"
        else:
            lines += section(k, "bp")  # the last stage's load: a fourth stage's divider and grid
    lines += [".control", f"tran 20n {END!r}",
              f"meas tran fall_in WHEN v(in)={mid!r} FALL=1", f"meas tran fall_out WHEN v(p{STAGES})={mid!r} CROSS=1",
              f"meas tran rise_in WHEN v(in)={mid!r} RISE=1", f"meas tran rise_out WHEN v(p{STAGES})={mid!r} CROSS=2",
              ".endc", ".end"]
    return "\n".join(lines) + "\n", mid


def _estimate(tube, template, rails: Rails, mid: float) -> dict:
    d, r = template.driver, template.receivers[0]
    divider = Load(r.upper_ohms, r.lower_ohms, rails.bias_volts, tube)
    feed = None if d.screen_series_ohms is None else ScreenFeed(d.screen_series_ohms, d.screen_shunt_ohms)
    stage = InverterTiming(tube, 1.0, rails.plate_volts, d.plate_load_ohms, divider, ((1, divider),),
                           ((tube.c_out_pf or 0.0) + WIRING_PF) * 1e-12, ((tube.c_in_pf or 0.0) + WIRING_PF) * 1e-12,
                           feed)
    out = {}
    high, low = template.design_high_volts, template.design_low_volts
    for name, wave in (("fall", Wave(high, low)), ("rise", Wave(low, high))):
        total = 0.0
        for _ in range(STAGES):
            edge = inverter_edge(stage, wave, mid)
            total += edge.seconds
            wave = edge.output
        out[name] = total
    return out


@pytest.mark.parametrize("name", ["12AU7", "12AT7", "6SN7", "6AU6"])
def test_chain_delay_within_25_percent_of_ngspice(name, tmp_path):
    tube = CAT.get(name)
    rails = Rails(250.0, -100.0)
    template = design_template(tube, "single", rails, 1)
    netlist, mid = _chain_netlist(tube, template, rails)
    path = tmp_path / "chain.cir"
    path.write_text(netlist)
    run = subprocess.run(["ngspice", "-b", str(path)], capture_output=True, text=True, timeout=120)
    found = dict(re.findall(r"^(\w+_(?:in|out))\s*=\s*(\S+)", run.stdout, re.M))
    assert len(found) == 4, run.stdout[-2000:]
    spice = {edge: float(found[f"{edge}_out"]) - float(found[f"{edge}_in"]) for edge in ("fall", "rise")}
    estimate = _estimate(tube, template, rails, mid)
    for edge in ("fall", "rise"):
        # Reference: ngspice transient (.tran) of the same chain, same delay definition.
        assert abs(estimate[edge] - spice[edge]) <= 0.25 * spice[edge], (name, edge, estimate, spice)
