"""The DC solution of a stage agrees with ngspice running the same circuit and equations.

The netlist uses the catalogue's ``spice_subcircuit`` (B-sources with the same
Koren / three-halves-law equations as ``planner.catalogue.models``, grid diode
included) for the driving section and for every load's grid; ngspice's
operating point (``op``) is the reference.
"""

import pytest

from planner.catalogue import builtin_catalogue, spice_nodes, spice_subcircuit, subcircuit_name
from planner.electrical import Rails, design_template
from planner.electrical.circuit import Load, ScreenFeed, SectionState, follower_cathode_volts, load_state, solve_plate

pytestmark = pytest.mark.ngspice

CAT = builtin_catalogue()


def _instance(name: str, tube, kind: str, pins: dict) -> str:
    order = spice_nodes(tube, kind)
    return f"{name} " + " ".join(pins[r] for r in order) + f" {subcircuit_name(tube, kind)}"


def _netlist(tube, kind, supply, rl, section: SectionState, loads, bias):
    """Stage netlist: B+ -- RL -- node p; the section; per load R1 -> grid -> R2 -> bias and a load tube."""
    lines = ["* tubeplan electrical test stage", spice_subcircuit(tube, kind).strip(),
             f"VB bp 0 {supply!r}", f"VC bias 0 {bias!r}", f"RL bp p {rl!r}",
             f"VG g 0 {section.grid_volts!r}", f"VG3 g3 0 {section.grid3_volts!r}"]
    pins = {"plate": "p", "grid": "g", "grid3": "g3", "cathode": "0", "screen": "s"}
    if section.screen is not None:
        lines.append(f"RS bp s {section.screen.series_ohms!r}")
        if section.screen.shunt_ohms is not None:
            lines.append(f"RB s 0 {section.screen.shunt_ohms!r}")
    lines.append(_instance("XD", tube, kind, pins))
    for i, ld in enumerate(loads):
        lines += [f"R1_{i} p t{i} {ld.upper_ohms!r}", f"R2_{i} t{i} bias {ld.lower_ohms!r}",
                  _instance(f"XL{i}", tube, kind, {"plate": "bp", "grid": f"t{i}", "grid3": "0",
                                                    "cathode": "0", "screen": "sl"})]
    lines += ["VSL sl 0 100", ".control", "op",
              "print v(p) " + " ".join(f"v(t{i})" for i in range(len(loads))), ".endc", ".end"]
    return "\n".join(lines) + "\n"


def _close(ours: float, theirs: float) -> bool:
    return abs(ours - theirs) <= max(0.01 * abs(theirs), 0.01)


CASES = [("12AT7", "single", "triode"), ("6AU6", "single", "pentode"), ("5915", "dual", "dual-control")]


@pytest.mark.parametrize("name,means,kind", CASES)
@pytest.mark.parametrize("state", ["high", "low"])
def test_plate_node_and_grids_match_ngspice(name, means, kind, state, ngspice):
    tube = CAT.get(name)
    rails = Rails(250, -100)
    t = design_template(tube, means, rails, 3)
    d, r = t.driver, t.receivers[0]
    feed = None if d.screen_series_ohms is None else ScreenFeed(d.screen_series_ohms, d.screen_shunt_ohms)
    grid = r.cutoff_volts - 2.0 if state == "high" else 0.0
    section = SectionState(tube, grid, 0.0, 1.0, feed)
    # A corner of the tolerance box (resistors and supplies off nominal), as concrete values.
    supply, bias, rl = 250 * 1.05, -100 * 0.95, d.plate_load_ohms * 0.95
    loads = [Load(r.upper_ohms * k1, r.lower_ohms * k2, bias, tube)
             for k1, k2 in ((0.95, 1.05), (1.0, 1.0), (1.05, 0.95))]
    v = solve_plate(supply, rl, ((1, section),), tuple((1, ld) for ld in loads))
    spice = ngspice(_netlist(tube, kind, supply, rl, section, loads, bias), timeout_s=60)
    assert _close(v, spice["v(p)"]), (v, spice.values)  # ngspice operating point, same equations
    for i, ld in enumerate(loads):
        assert _close(load_state(ld, v).grid_volts, spice[f"v(t{i})"]), (i, spice.values)  # ngspice


@pytest.mark.parametrize("grid_volts", [60.0, 140.0])
def test_follower_cathode_matches_ngspice(grid_volts, ngspice):
    tube = CAT.get("12AU7")
    supply, bias, rk = 250.0, -100.0, 82e3
    loads = [Load(910e3, 750e3, bias, tube) for _ in range(4)]
    vk = follower_cathode_volts(tube, 1.0, supply, grid_volts, rk, bias, ((4, loads[0]),))
    lines = ["* follower", spice_subcircuit(tube, "triode").strip(), f"VB bp 0 {supply!r}", f"VC bias 0 {bias!r}",
             f"VG g 0 {grid_volts!r}", f"RK k bias {rk!r}", _instance("XF", tube, "triode",
                                                                      {"plate": "bp", "grid": "g", "cathode": "k"})]
    for i, ld in enumerate(loads):
        lines += [f"R1_{i} k t{i} {ld.upper_ohms!r}", f"R2_{i} t{i} bias {ld.lower_ohms!r}",
                  _instance(f"XL{i}", tube, "triode", {"plate": "bp", "grid": f"t{i}", "cathode": "0"})]
    lines += [".control", "op", "print v(k) v(t0)", ".endc", ".end"]
    spice = ngspice("\n".join(lines) + "\n", timeout_s=60)
    assert _close(vk, spice["v(k)"]), (vk, spice.values)  # ngspice operating point, same equations
    assert _close(load_state(loads[0], vk).grid_volts, spice["v(t0)"])  # ngspice
