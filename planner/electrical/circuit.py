"""DC solution of one stage with concrete (already toleranced) values.

The circuit of an inverting stage::

    B+ --RL--+-- plate node P --+--R1--+-- grid of a load --R2-- bias
             |                  |      (grid-cathode diode to 0 V)
         sections to 0 V        +-- ... F loads

Each section's screen (pentodes, dual-control tubes) is fed from B+ through
a series resistor, with an optional shunt resistor to ground (a bleeder),
and bypassed for signals. A diode-AND gate works at plate level: its gate
node X is pulled up to B+ and has one diode (anode at X) to each input
node, and X feeds the divider into the grid, so X follows the lowest input.

A follower: plate at B+, grid at its input, cathode to bias through Rk.

Every node equation here is one unknown whose residual is monotone, so a
bracketing root finder (:func:`brent_root`) always finds the one solution.
Tube currents come from ``planner.catalogue``; a section's currents are
scaled by its wear (fraction of nominal emission).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

from planner.catalogue import TubeType, grid_current_amps, plate_current_amps, screen_current_amps

from .roots import NoConvergence, brent_root


def has_screen(tube: TubeType) -> bool:
    """True when the tube's amplifying sections have a screen grid."""
    return tube.model.equation == "koren-pentode"


@dataclass(frozen=True)
class ScreenFeed:
    """Screen supply of one section: B+ --series-- screen [--shunt-- 0 V]."""

    series_ohms: float
    shunt_ohms: float | None = None

    def open_volts(self, supply_volts: float) -> float:
        """Screen voltage with no screen current."""
        if self.shunt_ohms is None:
            return supply_volts
        return supply_volts * self.shunt_ohms / (self.series_ohms + self.shunt_ohms)


@dataclass(frozen=True)
class SectionState:
    """One section with its grid voltages, wear and screen feed."""

    tube: TubeType
    grid_volts: float
    grid3_volts: float
    wear: float
    screen: ScreenFeed | None


#: Distinct screen solves remembered.  A pure function of frozen values: designing the family
#: for the demo's stock asks for 59,790 screen voltages at only 9,308 distinct points (the same
#: section at the same plate voltage, from the drivers' checks and the plate solves of each
#: candidate level), so each is solved once; the bound keeps a long run's memory in check.
SCREEN_SOLVES_KEPT = 1 << 16


@lru_cache(maxsize=SCREEN_SOLVES_KEPT)
def screen_volts(s: SectionState, supply_volts: float, plate_volts: float) -> float:
    """Screen voltage of section ``s``: root of the screen node (Brent).  Memoised
    (:data:`SCREEN_SOLVES_KEPT`): the same arguments always give the same root."""
    feed = s.screen
    top = feed.open_volts(supply_volts)
    if top <= 0:
        return 0.0

    def residual(vs: float) -> float:
        out = (supply_volts - vs) / feed.series_ohms
        if feed.shunt_ohms is not None:
            out -= vs / feed.shunt_ohms
        return out - s.wear * screen_current_amps(
            s.tube, plate_volts=plate_volts, grid_volts=s.grid_volts,
            grid3_volts=s.grid3_volts, screen_volts=vs)

    if residual(top) >= 0:
        return top
    return brent_root(residual, 0.0, top, xtol=1e-6)


@lru_cache(maxsize=SCREEN_SOLVES_KEPT)
def section_amps(s: SectionState, supply_volts: float, plate_volts: float) -> tuple[float, float, float]:
    """(plate amps, screen amps, screen volts) of section ``s`` at ``plate_volts``.  Memoised like
    :func:`screen_volts` (the family's design asks 69,253 times at 13,881 distinct points)."""
    vs = screen_volts(s, supply_volts, plate_volts) if s.screen is not None else None
    kw = dict(plate_volts=plate_volts, grid_volts=s.grid_volts, grid3_volts=s.grid3_volts, screen_volts=vs)
    ip = s.wear * plate_current_amps(s.tube, **kw) if plate_volts > 0 else 0.0
    if vs is None:
        return ip, 0.0, 0.0
    return ip, s.wear * screen_current_amps(s.tube, **kw), vs


@dataclass(frozen=True)
class Load:
    """One receiver as seen from the driving node, with concrete values.

    A plain receiver is the divider (upper, lower, bias) into a grid. A
    diode-AND input (``diode_drop_volts`` set) is a diode from the gate node
    X (anode) to the driving node (cathode); X is pulled up to
    ``supply_volts`` through ``pullup_ohms`` and feeds the divider.
    """

    upper_ohms: float
    lower_ohms: float
    bias_volts: float
    tube: TubeType
    diode_drop_volts: float | None = None
    pullup_ohms: float | None = None
    supply_volts: float | None = None

    @property
    def divider(self) -> Load:
        """The divider alone (for a diode input, as driven from its gate node)."""
        return Load(self.upper_ohms, self.lower_ohms, self.bias_volts, self.tube)


@dataclass(frozen=True)
class LoadState:
    """A load at one driving-node voltage: current drawn, gate node, tap and grid, grid current.

    ``amps`` is the current drawn from the driving node (negative when a
    diode input pushes current into it); ``gate_volts`` is the divider's
    top (the driving node itself for a plain receiver).
    """

    amps: float
    gate_volts: float
    tap_volts: float
    grid_volts: float
    grid_amps: float


def thevenin(load: Load, plate_volts: float) -> tuple[float, float]:
    """Open-circuit tap voltage and source resistance of the divider driven at ``plate_volts``."""
    r1, r2 = load.upper_ohms, load.lower_ohms
    return (plate_volts * r2 + load.bias_volts * r1) / (r1 + r2), r1 * r2 / (r1 + r2)


def clamp_grid_volts(tube: TubeType, open_volts: float, source_ohms: float) -> float:
    """Grid voltage when a source (open_volts, source_ohms) drives the grid.

    Below 0 V the grid draws nothing; above, its current follows the
    catalogue's three-halves law (``grid_current_amps``: k v^1.5). A type
    without a grid-current model clamps ideally at 0 V.

    With u = sqrt(v) the balance (open - v) / R = k v^1.5 is the cubic
    k R u^3 + u^2 - open = 0, increasing and convex for u > 0, so Newton's
    method from u = sqrt(open) (where the cubic is not negative) falls
    monotonically onto its one root, quadratically: a few steps, where a
    bracketing search needs a dozen grid-current evaluations; the logic
    family's design asks for about 100,000 of these per stock. Stops when a
    step moves v by less than 1e-9 V.

    >>> from planner.catalogue import builtin_catalogue, grid_current_amps
    >>> t = builtin_catalogue().get("12AU7")
    >>> v = clamp_grid_volts(t, 40.0, 400e3)
    >>> 0 < v < 1.0, abs((40.0 - v) / 400e3 - grid_current_amps(t, grid_volts=v)) < 1e-12
    (True, True)
    """
    if open_volts <= 0:
        return open_volts
    perveance = tube.model.grid_perveance
    if perveance is None:
        return 0.0
    a = perveance * source_ohms
    u = math.sqrt(open_volts)
    for _ in range(100):
        step = (a * u * u * u + u * u - open_volts) / (3.0 * a * u * u + 2.0 * u)
        u -= step
        if step * 2.0 * u <= 1e-9:
            return u * u
    raise NoConvergence(f"grid clamp: no root after 100 Newton steps for {open_volts} V through {source_ohms} ohm")


def _divider_state(load: Load, top_volts: float) -> LoadState:
    vt, rth = thevenin(load, top_volts)
    vg = clamp_grid_volts(load.tube, vt, rth)
    ig = (vt - vg) / rth if vg < vt else 0.0
    return LoadState((top_volts - vg) / load.upper_ohms, top_volts, vt, vg, ig)


def load_amps(load: Load, plate_volts: float) -> float:
    """Current ``load`` draws from a driving node at ``plate_volts`` (negative: pushed into it).

    A diode input conducts when the pull-up would lift the gate node above
    the node plus the drop; then it pushes the pull-up current the divider
    does not take into the node. Otherwise it draws nothing. The result
    rises monotonically with ``plate_volts`` in both cases.
    """
    if load.diode_drop_volts is None:
        return _divider_state(load, plate_volts).amps
    gate = plate_volts + load.diode_drop_volts
    pushed = (load.supply_volts - gate) / load.pullup_ohms - _divider_state(load.divider, gate).amps
    return -pushed if pushed > 0 else 0.0


def load_state(load: Load, plate_volts: float) -> LoadState:
    """Currents and voltages of ``load`` when its driving node sits at ``plate_volts``.

    For a diode input whose diode is off the gate node rests where the
    pull-up and the divider meet (Brent).
    """
    if load.diode_drop_volts is None:
        return _divider_state(load, plate_volts)
    amps = load_amps(load, plate_volts)
    if amps < 0:
        gate = plate_volts + load.diode_drop_volts
    else:
        div = load.divider
        f = lambda x: (load.supply_volts - x) / load.pullup_ohms - _divider_state(div, x).amps
        gate = brent_root(f, min(0.0, load.bias_volts), load.supply_volts, xtol=1e-6)
    d = _divider_state(load.divider, gate)
    return LoadState(amps, gate, d.tap_volts, d.grid_volts, d.grid_amps)


def plate_amps_function(s: SectionState, supply_volts: float):
    """Plate current of ``s`` as a function of plate voltage.

    Koren's screen current does not depend on the plate voltage except in
    dual-control sections (through the current g3 turns back), so for other
    screened sections the screen node is solved once, not at every plate
    voltage.
    """
    if s.screen is None or s.tube.model.g3_zero_volts is not None:
        return lambda v: section_amps(s, supply_volts, v)[0]
    vs = screen_volts(s, supply_volts, 0.0)
    return lambda v: s.wear * plate_current_amps(s.tube, plate_volts=v, grid_volts=s.grid_volts,
                                                 grid3_volts=s.grid3_volts, screen_volts=vs) if v > 0 else 0.0


def solve_plate(supply_volts: float, load_ohms: float,
                sections: tuple[tuple[int, SectionState], ...],
                loads: tuple[tuple[int, Load], ...]) -> float:
    """Plate-node voltage: (B+ - V)/RL = sum of section currents + sum of load currents.

    ``sections`` and ``loads`` are (count, item) pairs. The residual falls
    monotonically in V; it is positive at the most negative bias of any load
    (no load draws current there, no section conducts) and not positive at
    B+, so Brent's method on that bracket finds the one root. Cost: about
    10-15 residual evaluations, each one grid solve per load group (and one
    screen solve per dual-control section group).
    """
    currents = [(n, plate_amps_function(s, supply_volts)) for n, s in sections]

    def residual(v: float) -> float:
        r = (supply_volts - v) / load_ohms
        for n, f in currents:
            r -= n * f(v)
        for n, ld in loads:
            r -= n * load_amps(ld, v)
        return r

    lo = min([0.0] + [ld.bias_volts for _, ld in loads])
    if residual(supply_volts) >= 0:
        return supply_volts
    return brent_root(residual, lo, supply_volts, xtol=1e-6)


def follower_cathode_volts(tube: TubeType, wear: float, supply_volts: float, grid_volts: float,
                           cathode_ohms: float, bias_volts: float,
                           loads: tuple[tuple[int, Load], ...]) -> float:
    """Cathode voltage of a follower whose grid sits at ``grid_volts``.

    Cathode node: plate current + grid current = (Vk - bias)/Rk + loads.
    The residual falls with Vk; Brent on [bias, B+].
    """

    def residual(vk: float) -> float:
        vgk = grid_volts - vk
        r = wear * plate_current_amps(tube, plate_volts=supply_volts - vk, grid_volts=vgk) if vk < supply_volts else 0.0
        r += grid_current_amps(tube, grid_volts=vgk) - (vk - bias_volts) / cathode_ohms
        for n, ld in loads:
            r -= n * load_amps(ld, vk)
        return r

    return brent_root(residual, bias_volts, supply_volts, xtol=1e-6)


def follower_on_node(tube: TubeType, wear: float, supply_volts: float, node_load_ohms: float,
                     cathode_ohms: float, bias_volts: float,
                     loads: tuple[tuple[int, Load], ...]) -> tuple[float, float, float]:
    """(node volts, cathode volts, grid amps) of a follower on an unloaded high plate node.

    The node is pulled up through ``node_load_ohms`` and feeds only the
    follower's grid; when the cathode cannot follow, grid current flows.
    Nested Brent: the node for a given cathode voltage, then the cathode.
    A type without a grid-current model is treated as an ideal clamp (the
    grid never rises above the cathode).
    """
    ideal = tube.model.grid_perveance is None

    def node(vk: float) -> tuple[float, float]:
        if ideal:
            return vk, max(0.0, (supply_volts - vk) / node_load_ohms)
        f = lambda vp: (supply_volts - vp) / node_load_ohms - grid_current_amps(tube, grid_volts=vp - vk)
        vp = supply_volts if f(supply_volts) >= 0 else brent_root(f, vk, supply_volts, xtol=1e-7)
        return vp, grid_current_amps(tube, grid_volts=vp - vk)

    def residual(vk: float) -> float:
        vp, ig = node(vk)
        r = (wear * plate_current_amps(tube, plate_volts=supply_volts - vk, grid_volts=vp - vk)
             if vk < supply_volts else 0.0)
        r += ig - (vk - bias_volts) / cathode_ohms
        for n, ld in loads:
            r -= n * load_amps(ld, vk)
        return r

    vk = brent_root(residual, bias_volts, supply_volts, xtol=1e-6)
    vp, ig = node(vk)
    return vp, vk, ig
