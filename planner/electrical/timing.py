"""Switching-time estimates of one stage: from its input's edge to its output's midpoint crossing.

A stage's delay is the time from its input crossing the family's midpoint
(halfway between the high and low levels) to its output crossing it. Each
edge is carried as a :class:`Wave` (a ramp or an exponential between two
levels), so a stage is timed against the edge its driver really makes (the
input's slope, as in static timing analysis), not against a step. Three
parts, each a closed form:

* **Grid.** The driven grid sits behind its divider (R1 from the driving
  node, R2 to the bias supply) and its capacitance (input capacitance, the
  grid-plate capacitance, the wiring allowance, any diodes on it): a
  first-order lag of the divider's open-circuit tap with time constant
  ``(R1 || R2) * C_grid``. The stage switches when the grid passes its
  *threshold*, the grid voltage at which the stage's own plate (DC, with its
  loads) sits at the midpoint. A speed-up capacitor C1 across R1 adds the
  share ``C1 / (C1 + C_grid)`` of the driving node's movement at once.
* **Miller plateau.** While the plate swings, the grid stays near its
  threshold and must deliver the grid-plate charge ``C_gp * dV_plate``
  through the divider's source resistance, at ``(V_tap - V_threshold) /
  (R1 || R2)``: the plate moves as a ramp (the charge-control picture of a
  switching amplifier; J. Millman and H. Taub, "Pulse and Digital Circuits",
  McGraw-Hill 1956, on the switching of tube stages, from memory).
* **Plate node.** A rising output (the branch cut off) cannot rise faster than
  its node capacitance (the sections' output capacitance, the wiring
  allowance, what its loads put on it) charges through the plate load against
  the loads' dividers: the slower of that exponential and the plateau ramp. A
  falling output (the conducting section sinks far more than the plate load
  delivers) follows the plateau ramp, lagging by one time constant of the node
  against ``RL || r_p || loads``.

The tube currents are the catalogue's models at the given wear.
``tests/test_timing_ngspice.py`` compares a chain of three inverters with an
ngspice transient run of the same circuit.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

from planner.catalogue import TubeType, plate_current_amps
from planner.units import picofarads

from .circuit import (Load, ScreenFeed, SectionState, follower_cathode_volts, load_amps, load_state,
                      plate_amps_function, section_amps, solve_plate, thevenin)
from .roots import NoBracket, brent_root

#: Wiring allowance per node: sockets, point-to-point wires and resistor bodies add about
#: 10 pF to a node of a chassis-built circuit (common practice).
WIRING_FARADS = 10e-12
#: Capacitance of a small silicon signal diode at 0 V, about 4 pF (from memory, 1N4148-class
#: data sheets); taken for every steering, reset and AND-gate diode.
DIODE_FARADS = 4e-12

#: How far the closed-form estimate may fall short of a transient simulation of the same circuit:
#: tests/test_timing_ngspice.py holds it within 25 % of ngspice, so a worst-case bound is the
#: slow corner's estimate times 1.25.
ESTIMATE_TOLERANCE = 0.25

#: Capacitances at the slow corner: tube capacitances, wiring and diodes 25 % over their nominal
#: figures (our allowance for tube spread and for wiring beyond the allowance; stated, not sourced).
SLOW_FARADS_SCALE = 1.25


@dataclass(frozen=True)
class TimingCorner:
    """Conditions the delays are computed for, as scale factors on the nominal circuit.

    ``ohms_scale``: every resistor; ``supply_scale``: both supplies;
    ``farads_scale``: every capacitance (tube, wiring, diodes, speed-up and
    commutating capacitors); ``unsourced_allowance``: the fraction by which a
    type whose model is from memory (``TubeType.model_from_memory``) gives
    less current than its stock condition; ``bound_factor``: what the
    corner's delays are multiplied by (1 + ``ESTIMATE_TOLERANCE`` for a bound,
    1 for an estimate).
    """

    name: str
    ohms_scale: float = 1.0
    supply_scale: float = 1.0
    farads_scale: float = 1.0
    unsourced_allowance: float = 0.0
    bound_factor: float = 1.0

    def wear(self, tube: TubeType, wear: float) -> float:
        """The tube's current as a fraction of its model's at this corner (its stock condition given)."""
        return wear * (1.0 - self.unsourced_allowance) if tube.model_from_memory else wear

    def tube(self, tube: TubeType) -> TubeType:
        """The type with its capacitances at this corner (its model unchanged)."""
        if self.farads_scale == 1.0:
            return tube
        f = self.farads_scale
        return replace(tube, **{k: None if getattr(tube, k) is None else getattr(tube, k) * f
                                for k in ("c_in_farads", "c_out_farads", "c_gp_farads")})

    def load(self, load: Load) -> Load:
        """A load (divider, diode input) at this corner."""
        r = self.ohms_scale
        return Load(load.upper_ohms * r, load.lower_ohms * r, load.bias_volts * self.supply_scale, load.tube,
                    load.diode_drop_volts, None if load.pullup_ohms is None else load.pullup_ohms * r,
                    None if load.supply_volts is None else load.supply_volts * self.supply_scale)

    def stage(self, stage: InverterTiming) -> InverterTiming:
        """An inverting stage at this corner (its wear taken as its stock condition).

        Loads keep their own tube (their grids clamp by its grid model, which
        the corner leaves alone).
        """
        r, f = self.ohms_scale, self.farads_scale
        feed = stage.feed and ScreenFeed(stage.feed.series_ohms * r,
                                         None if stage.feed.shunt_ohms is None else stage.feed.shunt_ohms * r)
        return replace(stage, tube=self.tube(stage.tube), wear=self.wear(stage.tube, stage.wear),
                       supply_volts=stage.supply_volts * self.supply_scale,
                       plate_load_ohms=stage.plate_load_ohms * r, divider=self.load(stage.divider),
                       loads=tuple((n, self.load(ld)) for n, ld in stage.loads), plate_farads=stage.plate_farads * f,
                       grid_farads=stage.grid_farads * f, feed=feed, speedup_farads=stage.speedup_farads * f)

    def description(self, wiring_farads: float) -> str:
        """The corner in words."""
        if self.name == "nominal":
            return (f"nominal resistors and supplies, each tube type at its stock condition, the catalogue's "
                    f"capacitances and {picofarads(wiring_farads):g} pF of wiring per node (common practice)")
        return (f"the slow corner: every resistor {100 * (self.ohms_scale - 1):+.0f} %, supplies "
                f"{100 * (self.supply_scale - 1):+.0f} %, each tube type at its stock condition (types with "
                f"models from memory {100 * self.unsourced_allowance:.0f} % weaker), capacitances and "
                f"{picofarads(wiring_farads):g} pF of wiring per node {100 * (self.farads_scale - 1):+.0f} %; "
                f"the estimate there times {self.bound_factor:g} (its tolerance against ngspice)")


NOMINAL_CORNER = TimingCorner("nominal")


def slow_corner(rules) -> TimingCorner:
    """The slowest corner of ``rules`` (a ``DesignRules``): resistors high, supplies low, capacitances high.

    High resistors slow every RC edge (plate loads charging nodes, dividers
    charging grids); low supplies give less current and smaller overdrive;
    worn tubes (the stock condition, less for types with models from memory)
    pull down more slowly; heavier capacitance slows every node. The family's
    worst-case DC design holds at every combination of these, so every stage
    still switches there.
    """
    return TimingCorner("slow", 1.0 + rules.resistor_tolerance, 1.0 - rules.supply_tolerance, SLOW_FARADS_SCALE,
                        rules.unsourced_allowance, 1.0 + ESTIMATE_TOLERANCE)


@dataclass(frozen=True)
class Wave:
    """An edge as a stage's input sees it: from one level to another, shaped.

    ``shape``: "ramp" (linear, ``seconds`` from start to end; 0 is a step) or
    "exponential" (time constant ``seconds``). Time 0 is the edge's start.
    """

    from_volts: float
    to_volts: float
    shape: str = "ramp"
    seconds: float = 0.0

    def fraction(self, t: float) -> float:
        """How far the edge has gone at time ``t`` (0 to 1)."""
        if t <= 0:
            return 0.0
        if self.shape == "exponential":
            return -math.expm1(-t / self.seconds)
        return 1.0 if t >= self.seconds else t / self.seconds

    def crossing_seconds(self, volts: float) -> float:
        """When the edge passes ``volts`` (between its levels)."""
        share = (volts - self.from_volts) / (self.to_volts - self.from_volts)
        if not 0 <= share < 1:
            raise ValueError(f"an edge from {self.from_volts:.1f} V to {self.to_volts:.1f} V "
                             f"never passes {volts:.1f} V")
        if self.shape == "exponential":
            return -self.seconds * math.log1p(-share)
        return share * self.seconds

    def rc_response(self, t: float, tau: float) -> float:
        """Response at ``t`` of a first-order lag of time constant ``tau`` to this edge's fraction (0 to 1).

        Closed forms: a ramp of duration T gives (t - tau (1 - e^(-t/tau))) / T while it lasts, then
        relaxes towards 1; an exponential of time constant T gives
        1 - (tau e^(-t/tau) - T e^(-t/T)) / (tau - T).
        """
        if t <= 0:
            return 0.0
        T = self.seconds
        if self.shape == "exponential":
            if abs(T - tau) <= 1e-9 * tau:
                return 1.0 - (1.0 + t / tau) * math.exp(-t / tau)
            return 1.0 - (tau * math.exp(-t / tau) - T * math.exp(-t / T)) / (tau - T)
        if T <= 0:
            return -math.expm1(-t / tau)
        if t <= T:
            return (t + tau * math.expm1(-t / tau)) / T
        at_end = (T + tau * math.expm1(-T / tau)) / T
        return 1.0 - (1.0 - at_end) * math.exp(-(t - T) / tau)

    def slope(self, t: float) -> float:
        """The edge's rate of change at ``t`` (volts per second)."""
        span = self.to_volts - self.from_volts
        if self.shape == "exponential":
            return span / self.seconds * math.exp(-max(t, 0.0) / self.seconds)
        return span / self.seconds if 0 <= t < self.seconds else 0.0

    def end_seconds(self) -> float:
        """A time by which the edge is (practically) over: its ramp, or ten time constants."""
        return 10.0 * self.seconds if self.shape == "exponential" else self.seconds


@dataclass(frozen=True)
class Edge:
    """One output edge of a stage.

    ``seconds``: from the input's midpoint crossing to the output's (may be
    negative when a stage switches before its input is halfway);
    ``grid_seconds``: from the input's start to the switching grid passing its
    threshold; ``output``: the output edge, timed from its own start, for the
    stage it drives (its start is ``grid_seconds`` after the input's start).
    """

    rising: bool
    seconds: float
    grid_seconds: float
    output: Wave


@dataclass(frozen=True)
class InverterTiming:
    """An inverting stage as timing sees it, with concrete (already chosen) values.

    ``role``: the switching grid, "grid" (g1) or "grid3"; ``other_grid_volts``:
    where the other control grid of a dual-control section sits (held high,
    about 0 V).  ``divider``: the switching grid's divider as a concrete load
    (for a diode-AND input, the divider from the gate node).  ``loads``: the
    stage's own loads as (count, Load).  ``plate_farads``: the stage's node
    capacitance; ``grid_farads``: the switching grid's capacitance to ground
    without its grid-plate part (input capacitance, wiring, diodes);
    ``speedup_farads``: a capacitor across the divider's upper resistor (0:
    none).
    """

    tube: TubeType
    wear: float
    supply_volts: float
    plate_load_ohms: float
    divider: Load
    loads: tuple[tuple[int, Load], ...]
    plate_farads: float
    grid_farads: float
    feed: ScreenFeed | None = None
    role: str = "grid"
    other_grid_volts: float = 0.0
    speedup_farads: float = 0.0

    def section(self, grid_volts: float) -> SectionState:
        """The switching section with its switching grid at ``grid_volts``."""
        if self.role == "grid3":
            return SectionState(self.tube, self.other_grid_volts, grid_volts, self.wear, self.feed)
        return SectionState(self.tube, grid_volts, self.other_grid_volts, self.wear, self.feed)

    def plate_volts(self, grid_volts: float) -> float:
        """DC plate-node voltage with the switching grid at ``grid_volts`` (Brent, ``solve_plate``)."""
        return solve_plate(self.supply_volts, self.plate_load_ohms, ((1, self.section(grid_volts)),), self.loads)


def threshold_grid_volts(stage: InverterTiming, mid_volts: float) -> float:
    """The switching grid's voltage at which the stage's plate sits at ``mid_volts`` (DC).

    With the plate at ``mid_volts`` the section must carry what the plate load
    delivers there less what the stage's loads draw (the plate node's equation,
    :func:`solve_plate`, at that voltage); its current rises with the grid, so
    Brent's method on [deep cut-off, 0 V] finds that grid voltage, one section
    current per step (no plate solve inside each step).  Raises ValueError
    when the plate cannot reach ``mid_volts`` (the stage cannot switch at
    these levels).
    """
    deep = -(stage.supply_volts + abs(stage.divider.bias_volts)) - 50.0
    needed = ((stage.supply_volts - mid_volts) / stage.plate_load_ohms
              - sum(n * load_amps(load, mid_volts) for n, load in stage.loads))
    try:
        return brent_root(lambda g: plate_amps_function(stage.section(g), stage.supply_volts)(mid_volts) - needed,
                          deep, 0.0, xtol=1e-4)
    except NoBracket:
        raise ValueError(f"a {stage.tube.name} stage cannot take its plate through {mid_volts:.1f} V") from None


def _plate_conductance(stage: InverterTiming) -> tuple[float, float]:
    """Conductance of the plate node with the section cut off, and its open-circuit voltage.

    Plain dividers are taken unclamped (R1 + R2 to the bias supply), as they are
    below the high level; diode inputs draw nothing from a rising node.
    """
    g = 1.0 / stage.plate_load_ohms
    current = stage.supply_volts / stage.plate_load_ohms
    for n, load in stage.loads:
        if load.diode_drop_volts is not None:
            continue
        g += n / (load.upper_ohms + load.lower_ohms)
        current += n * load.bias_volts / (load.upper_ohms + load.lower_ohms)
    return g, current / g


def _plate_resistance(stage: InverterTiming, plate_volts: float, grid_volts: float) -> float:
    """Incremental plate resistance dV/dI of the section at a point (central difference, 10 mV)."""
    s = stage.section(grid_volts)
    h = 0.01
    di = (section_amps(s, stage.supply_volts, plate_volts + h)[0]
          - section_amps(s, stage.supply_volts, plate_volts - h)[0]) / (2 * h)
    return 1.0 / di if di > 0 else math.inf


def _first_crossing(f, t_max: float, samples: int = 512) -> float:
    """The first time in (0, t_max] at which ``f`` changes sign from its value at 0 (a scan, then Brent)."""
    f0 = f(0.0)
    if f0 == 0:
        return 0.0
    prev = 0.0
    for k in range(1, samples + 1):
        t = t_max * k / samples
        if (f(t) > 0) != (f0 > 0):
            return brent_root(f, prev, t, xtol=t_max * 1e-7)
        prev = t
    raise ValueError("the grid never passes its threshold")


def grid_crossing_seconds(stage: InverterTiming, drive: Wave, threshold_volts: float) -> float:
    """When the switching grid passes ``threshold_volts`` after the driving node starts ``drive``
    (the second figure of :func:`grid_times`).

    >>> from planner.catalogue import builtin_catalogue
    >>> t = builtin_catalogue().get("12AU7")
    >>> div = Load(820e3, 820e3, -90.0, t)
    >>> st = InverterTiming(t, 1.0, 170.0, 160e3, div, ((1, div),), 12e-12, 12e-12)
    >>> # a step from 12 V to 140 V: the grid rises from -39 V towards +25 V, tau = 410 kOhm x 13.5 pF;
    >>> # it passes -5 V after tau ln(64 / 30)
    >>> round(grid_crossing_seconds(st, Wave(12.0, 140.0), -5.0) * 1e6, 2)
    4.19
    """
    return grid_times(stage, drive, threshold_volts)[1]


def grid_times(stage: InverterTiming, drive: Wave, threshold_volts: float) -> tuple[float, float]:
    """(when the switching grid starts to move, when it passes ``threshold_volts``) after ``drive`` starts.

    The grid obeys ``tau dV/dt = tap(t) - V`` (plus ``a tau d(input)/dt``
    with a speed-up capacitor, ``a = C1 / (C1 + C_grid)``), ``tap`` being the
    divider's open-circuit voltage as the driving node moves: a first-order
    lag of the drive, in closed form (:meth:`Wave.rc_response`). A grid held
    at its clamp (a high input) starts to fall only once the tap passes below
    it, so the drive is taken from that moment. The first crossing is found by
    a scan and Brent's method.
    """
    div = stage.divider
    g0 = load_state(div, drive.from_volts).grid_volts
    tap_from, r_th = thevenin(div, drive.from_volts)
    tap_to, _ = thevenin(div, drive.to_volts)
    c_grid = stage.grid_farads + (stage.tube.c_gp_farads or 0.0)
    c1 = stage.speedup_farads
    tau = r_th * (c1 + c_grid)
    a = c1 / (c1 + c_grid)
    offset, wave = 0.0, drive
    if tap_from > g0 + 1e-6 and tap_to < tap_from:  # clamped: wait until the tap falls to the grid
        k = div.lower_ohms / (div.upper_ohms + div.lower_ohms)
        level = (g0 - div.bias_volts * (1 - k)) / k
        offset = drive.crossing_seconds(level)
        rest = drive.seconds if drive.shape == "exponential" else drive.seconds - offset
        wave = Wave(level, drive.to_volts, drive.shape, rest)
    d_in = wave.to_volts - wave.from_volts

    def grid(t: float) -> float:
        r = wave.rc_response(t, tau)
        return g0 + (tap_to - g0) * r + a * d_in * (wave.fraction(t) - r) - threshold_volts

    if (tap_to - threshold_volts) * (g0 - threshold_volts) > 0:
        raise ValueError(f"the grid heads for {tap_to:.1f} V and never passes {threshold_volts:.1f} V")
    return offset, offset + _first_crossing(grid, wave.end_seconds() + 20.0 * tau)


def inverter_edge(stage: InverterTiming, drive: Wave, mid_volts: float,
                  memo: dict | None = None) -> Edge:
    """The output edge of an inverting stage whose driving node makes the edge ``drive``.

    The switching grid passes its threshold (:func:`grid_crossing_seconds`);
    then the plate swings. A falling output follows its grid through the
    Miller plateau: the grid, held near its threshold, delivers the
    grid-plate charge of the plate's swing through the divider's source
    resistance (and a speed-up capacitor from the still-moving driving
    node), a linear ramp, lagging by one time constant of the node
    against ``RL || r_p || loads``. A rising output is the slower of that
    ramp and the RC charge of its node through the plate load (an
    exponential edge, starting halfway through the grid's travel to its
    threshold, as the section's current falls along it). Cost: one threshold search (about 15 plate solves), a
    grid scan of 512 closed-form points and a few plate solves.

    ``memo``: a dict the caller keeps across calls for the DC solves, pure functions of frozen
    values: the switching grid's threshold per (stage, ``mid_volts``) and the plate voltage per
    (stage, grid voltage), so the edges of every input of one stage, rising and falling, share
    one threshold search and their levels' plate solves.

    >>> from planner.catalogue import builtin_catalogue
    >>> t = builtin_catalogue().get("12AU7")
    >>> div = Load(820e3, 820e3, -90.0, t)
    >>> st = InverterTiming(t, 1.0, 170.0, 160e3, div, ((1, div),), 12e-12, 12e-12)
    >>> e = inverter_edge(st, Wave(140.0, 12.0), 70.0)
    >>> e.rising, e.output.shape, 1e-6 < e.seconds < 5e-6
    (True, 'exponential', True)
    """
    tube, div = stage.tube, stage.divider
    memo = {} if memo is None else memo

    def once(key, compute):
        if key not in memo:
            memo[key] = compute()
        return memo[key]

    vt = once(("threshold", stage, mid_volts), lambda: threshold_grid_volts(stage, mid_volts))
    t_release, t_x = grid_times(stage, drive, vt)
    g0 = load_state(div, drive.from_volts).grid_volts
    g1 = load_state(div, drive.to_volts).grid_volts
    p0 = once(("plate", stage, g0), lambda: stage.plate_volts(g0))
    p1 = once(("plate", stage, g1), lambda: stage.plate_volts(g1))
    tap_to, r_th = thevenin(div, drive.to_volts)
    c_gp = tube.c_gp_farads or 0.0
    # The grid-plate charge comes through the divider and, while the driving node still moves, a speed-up capacitor.
    drive_amps = abs(tap_to - vt) / r_th + stage.speedup_farads * abs(drive.slope(t_x))
    plateau_full = c_gp * abs(p1 - p0) / drive_amps
    plateau_mid = c_gp * abs(mid_volts - p0) / drive_amps
    c_node = stage.plate_farads + c_gp
    g_node, _ = _plate_conductance(stage)
    t_in = drive.crossing_seconds(mid_volts)
    rising = p1 > p0
    if rising:
        tau = c_node / g_node
        t_rc = tau * math.log((p1 - p0) / (p1 - mid_volts))
        if t_rc >= plateau_mid:
            # The section's current falls while the grid travels to its threshold: the node starts
            # charging, on average, halfway through that travel.
            start = 0.5 * (t_release + t_x)
            return Edge(True, start + t_rc - t_in, t_x, Wave(p0, p1, "exponential", tau))
        return Edge(True, t_x + plateau_mid - t_in, t_x, Wave(p0, p1, "ramp", plateau_full))
    lag = c_node / (g_node + 1.0 / _plate_resistance(stage, mid_volts, vt))
    return Edge(False, t_x + plateau_mid + lag - t_in, t_x, Wave(p0, p1, "ramp", plateau_full))


def follower_edge(tube: TubeType, wear: float, supply_volts: float, cathode_load_ohms: float, bias_volts: float,
                  loads: tuple[tuple[int, Load], ...], cathode_farads: float, stopper_ohms: float, drive: Wave,
                  mid_volts: float) -> Edge:
    """The output edge of a cathode follower whose grid's node makes the edge ``drive``.

    The cathode copies its grid. Rising, the conducting section drives it and
    it lags by one time constant of its capacitance against
    ``1 / (gm + 1/Rk + loads)``; falling, it cannot fall faster than its
    capacitance discharges through Rk and the loads towards the bias supply
    (an exponential edge from the high level), so it crosses the midpoint at
    the later of its grid's crossing (plus the tracking lag) and that RC edge's. A grid stopper adds
    its time constant with the grid's capacitance. Cost: two cathode solves.
    """
    c_grid = (tube.c_in_farads or 0.0) + (tube.c_gp_farads or 0.0)
    t_stop = stopper_ohms * c_grid
    g_k = 1.0 / cathode_load_ohms + sum(n / (ld.upper_ohms + ld.lower_ohms) for n, ld in loads
                                        if ld.diode_drop_volts is None)
    k0 = follower_cathode_volts(tube, wear, supply_volts, drive.from_volts, cathode_load_ohms, bias_volts, loads)
    k1 = follower_cathode_volts(tube, wear, supply_volts, drive.to_volts, cathode_load_ohms, bias_volts, loads)
    t_in = drive.crossing_seconds(mid_volts)
    # While the section conducts, the cathode tracks its grid one small-signal time constant behind.
    k_on, g_on = (k1, drive.to_volts) if k1 > k0 else (k0, drive.from_volts)
    h = 0.01
    gm = wear * (plate_current_amps(tube, plate_volts=supply_volts - k_on, grid_volts=g_on - k_on + h)
                 - plate_current_amps(tube, plate_volts=supply_volts - k_on, grid_volts=g_on - k_on - h)) / (2 * h)
    lag = t_stop + cathode_farads / (gm + g_k)
    if k1 > k0:
        return Edge(True, lag, lag, Wave(k0, k1, drive.shape, drive.seconds))
    tau = cathode_farads / g_k
    t_rc = tau * math.log((k0 - bias_volts) / (mid_volts - bias_volts))
    if t_rc > t_in:
        return Edge(False, t_stop + t_rc - t_in, t_stop, Wave(k0, k1, "exponential", tau))
    return Edge(False, lag, t_stop, Wave(k0, k1, drive.shape, drive.seconds))


__all__ = ["DIODE_FARADS", "ESTIMATE_TOLERANCE", "NOMINAL_CORNER", "SLOW_FARADS_SCALE", "WIRING_FARADS", "Edge",
           "InverterTiming", "TimingCorner", "Wave", "follower_edge", "grid_crossing_seconds", "grid_times",
           "inverter_edge", "slow_corner", "threshold_grid_volts"]
