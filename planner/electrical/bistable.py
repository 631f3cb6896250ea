"""A clocked register: the Eccles-Jordan bistable on a dual triode, with capacitor-diode steering.

The circuit (W. H. Eccles and F. W. Jordan, "A trigger relay utilising
three-electrode thermionic vacuum tubes", The Electrician 83, 1919, p. 298;
the steering as in the binaries of J. Millman and H. Taub, "Pulse and Digital
Circuits", McGraw-Hill 1956; both from memory)::

    B+ --RL--+-- P1 (~q)            B+ --RL--+-- P2 (q)
             |                               |
            T1   grid G1 <--R1||Cc-- P2     T2   grid G2 <--R1||Cc-- P1
                 G1 --R2-- BIAS                  G2 --R2-- BIAS

    CLK --Cs--+-- X1 --Rs-- D          CLK --Cs--+-- X2 --Rs-- ~D
              X1 --|<|-- G1 (diode: anode at the grid)    X2 --|<|-- G2

Two cross-coupled inverters of the logic family: each triode section is the
family's ``single`` driver of its type (its plate load), each cross-coupling
divider is the family's receiver for that type. One section conducts, its
plate is low, the other's grid is held below cut-off; so the DC design is
the family's own worst-case design: each plate drives the other's divider plus
up to ``fanout_limit`` (the driver's limit less one) loads of the family.
A commutating capacitor Cc across each R1 (compensated: Cc R1 = C_grid R2)
carries the other plate's swing to the grid at once, so a flip completes in
about a plate time constant.

Steering (edge-triggered on the clock's falling edge). Each steering node X
rests at its level input (D for side 1, ~D for side 2) through Rs; its diode
is reverse biased (X is at a plate level, the grid at or below 0 V). The
clock's falling step dV couples through Cs: the node whose level is low falls
below the conducting grid, its diode conducts and the capacitors' charge
drives that grid far below cut-off, long enough for the bistable to flip; the
node whose level is high falls by less than its level and stays above any
grid. A negative pulse on the grid of a section already cut off does nothing.
So on the falling edge q takes D: D = 1 cuts T2 off (q = P2 high). The rising
edge pushes both nodes up (their diodes stay off). Between edges X follows its
level input only through Rs, so a change of D right after the edge (its own
outputs flipping) cannot trigger again: the setup time is Rs Cs times the log
of how far X may still be from D.

Reset: one diode from the grid that must be cut off (G2 for reset 1, G1 for
reset 0) to the plan's RESET line, which rests at B+ through a pull-up; a
momentary contact from RESET to BIAS puts every register in its reset state.

Worst case (:func:`design_bistable`): clock swing within +-``CLOCK_TOLERANCE``
of its nominal, capacitors within +-``CAPACITOR_TOLERANCE``, the family's
levels (a level input is at or above ``high_min_volts`` or at or below
``follower_low_max_volts``), the conducting grid at most at its clamp,
cut-off of a new tube at the highest supply, diode drops of silicon.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

from planner.catalogue import TubeType

from .circuit import Load, ScreenFeed, SectionState, load_state, section_amps, thevenin
from .context import TubeContext
from .eseries import nearest_log_value, resistor_rating_watts, series_values
from .parts import Family, Shortfall
from .rules import DIODE_DROP_VOLTS
from .roots import brent_root
from .timing import DIODE_FARADS, WIRING_FARADS, Edge, InverterTiming, Wave, inverter_edge, threshold_grid_volts

#: The clock generator's falling step must stay within this fraction of its nominal swing (the plan
#: states the nominal and the window it must keep to).
CLOCK_TOLERANCE = 0.10
#: Tolerance of small mica or ceramic capacitors (common practice).
CAPACITOR_TOLERANCE = 0.10
#: The steering pulse must hold the grid below cut-off for this many times the estimated flip time
#: (the flip estimate stops at the outputs' midpoint crossings; the rest of the swing follows).
HOLD_FACTOR = 2.0
#: Steering capacitors tried: E12 values from 10 pF to 1 nF.
STEERING_FARADS = series_values("E12", 10e-12, 1e-9)
#: The plan's reset line pull-up (to B+); a reset contact to BIAS then carries the B+ to BIAS span over it.
RESET_PULLUP_OHMS = 1e6


@dataclass(frozen=True)
class Bistable:
    """A register's values on one tube type, with its worst-case figures.

    Levels: ``high_volts`` / ``low_volts`` the worst plate levels (the family
    driver's). Clock: a falling step of ``clock_swing_volts`` nominal (within
    +-``clock_tolerance``); the steering works for any step from
    ``clock_swing_min_volts`` to ``clock_swing_max_volts``. ``grid_pulse_volts``:
    the highest the steered grid reaches at the edge (at or below
    ``cutoff_volts`` less the margin), ``pulse_hold_seconds`` how long it
    stays below cut-off at least. Timing: ``setup_seconds`` the level input
    must be settled before the falling edge; ``recovery_seconds`` the
    shortest high phase of the clock (the steering nodes recover from the
    rising edge's kick); ``flip_seconds`` the estimated flip with the
    family's worst loading (the plan times its own loads). Diodes must stand
    ``diode_reverse_volts`` and capacitors ``capacitor_volts``.
    ``bias_amps_worst``: what both dividers return to the bias supply, or, while
    a reset is held, what a reset diode carries. ``steering_node_farads`` and
    ``grid_node_farads``: the steering node's and a grid's capacitance (wiring and
    diodes included; a grid's without its commutating capacitor).
    """

    tube: str
    plate_load_ohms: float
    plate_load_watts: float
    upper_ohms: float
    lower_ohms: float
    upper_watts: float
    lower_watts: float
    commutating_farads: float
    steering_farads: float
    steering_ohms: float
    steering_watts: float
    fanout_limit: int
    supply_amps_worst: float
    supply_amps_typical: float
    bias_amps_worst: float
    section_watts_worst: float
    high_volts: float
    low_volts: float
    cutoff_volts: float
    grid_pulse_volts: float
    pulse_hold_seconds: float
    flip_seconds: float
    clock_swing_volts: float
    clock_swing_min_volts: float
    clock_swing_max_volts: float
    clock_tolerance: float
    setup_seconds: float
    recovery_seconds: float
    diode_reverse_volts: float
    capacitor_volts: float
    steering_node_farads: float
    grid_node_farads: float


def is_dual_triode(tube: TubeType) -> bool:
    """Two amplifying sections, both triodes: what a bistable needs from one envelope."""
    sections = tube.amplifying_sections
    return len(sections) == 2 and all(s.kind == "triode" for s in sections)


def _low_output_ohms(family: Family, types) -> float:
    """The largest incremental resistance of any family inverter's node at its worst low level.

    Each driver's section worn to the rules' wear, its grids at 0 V (screen
    fed as its template says), its plate at the driver's low level: ``RL || r_p`` (central
    difference, 10 mV). A current pushed into a low node moves it this far per
    ampere. Cost: two section solves per driver.
    """
    worst = 0.0
    for (name, _means), driver in sorted(family.drivers.items()):
        feed = None if driver.screen_series_ohms is None else ScreenFeed(driver.screen_series_ohms,
                                                                         driver.screen_shunt_ohms)
        state = SectionState(types[name], 0.0, 0.0, family.rules.wear, feed)
        vb, v, h = family.rails.plate_volts, driver.low_volts, 0.01
        di = (section_amps(state, vb, v + h)[0] - section_amps(state, vb, v - h)[0]) / (2 * h)
        worst = max(worst, 1.0 / (1.0 / driver.plate_load_ohms + max(di, 0.0)))
    return worst


def _heavy_load(family: Family, types, bias_volts: float) -> Load:
    """The family's heaviest receiver (most current at the high level) at nominal values."""
    heavy = max(family.receivers.values(), key=lambda r: (r.load_amps_high, r.tube, r.grid_role))
    return Load(heavy.upper_ohms, heavy.lower_ohms, bias_volts, types[heavy.tube])


@dataclass(frozen=True)
class Steering:
    """Steering inputs on a flip's rising plate: ``count`` alike steering nodes whose level input it is.

    A plate that rises after the clock's edge was low at the edge, so every
    steering node with that plate as its level input took the pulse: the
    register's own cut-off side when it is steered by its own outputs (a
    toggle: D = ~q, ~D = q), a following register's side in a shift chain.
    Each hangs on the plate through its Rs. ``ohms``: Rs; ``farads``: Cs;
    ``node_farads``: the steering node's own capacitance (wiring, diode);
    ``swing_volts``: the clock's falling step.
"""

    ohms: float
    farads: float
    node_farads: float
    swing_volts: float
    count: int = 1


def _steered_rise(supply_volts: float, plate_load_ohms: float, divider: Load, rising_loads, rising_farads: float,
                  c_grid: float, commutating_farads: float, falling_farads: float, low: float, high: float,
                  steering: Steering):
    """The rising plate as a function of time when steered nodes hang on it through their Rs.

    The clock's step takes the steering node from the plate's low level down
    by ``Cs / (Cs + C_x)`` of the step until its diode conducts (the grid at
    the conducting section's level), then by ``Cs / (Cs + C_x + C_grid)`` of
    the rest, the grid with it. Afterwards two nodes, linear while the other
    grid stays below its clamp: the plate (``rising_farads``, the plate load
    and its dividers, Rs to the steering node) and the steering node with
    its grid (Cs, C_x, the grid's capacitance, the commutating capacitor in
    series with the other plate's node; Rs to the plate, the divider's
    Thevenin source from the other plate at its high level). Its closed
    form is two exponentials: ``p(t) = p_inf + a1 exp(-l1 t) + a2 exp(-l2 t)``
    with ``l1, l2`` the eigenvalues of ``C^-1 G``, ``a1 + a2 = p(0) - p_inf``
    and ``-(l1 a1 + l2 a2) = p'(0)``. Returns (p as a function of t, p_inf).
    """
    g_on = load_state(divider, high).grid_volts
    drop = 0.5 * sum(DIODE_DROP_VOLTS["solid-state"])
    cs, cx = steering.farads, steering.node_farads
    cc = commutating_farads * falling_farads / (commutating_farads + falling_farads)
    c_node = cs + cx + c_grid + cc
    k = cs / (cs + cx)
    first = max(0.0, (low - (g_on - drop)) / k)  # the part of the step before the diode conducts
    x0 = low - k * min(first, steering.swing_volts)
    if steering.swing_volts > first:
        x0 = g_on - drop - (steering.swing_volts - first) * cs / c_node
    tap_hi, r_th = thevenin(divider, high)
    gs, n_steer = 1.0 / steering.ohms, steering.count
    g_p = 1.0 / plate_load_ohms + sum(n / (ld.upper_ohms + ld.lower_ohms) for n, ld in rising_loads
                                      if ld.diode_drop_volts is None)
    i_p = supply_volts / plate_load_ohms + sum(n * ld.bias_volts / (ld.upper_ohms + ld.lower_ohms)
                                               for n, ld in rising_loads if ld.diode_drop_volts is None)
    # The nodal equations C dv/dt = J - G v, v = (plate, steering node).
    # Alike steering nodes move together: each is one node, the plate sees all of them.
    g11, g12, g21, g22 = g_p + n_steer * gs, -n_steer * gs, -gs, gs + 1.0 / r_th
    j1, j2 = i_p, tap_hi / r_th
    det = g11 * g22 - g12 * g21
    p_inf = (j1 * g22 - g12 * j2) / det
    a, b = g11 / rising_farads, g12 / rising_farads
    c, d = g21 / c_node, g22 / c_node
    half_trace, root = 0.5 * (a + d), math.sqrt(0.25 * (a - d) ** 2 + b * c)
    l1, l2 = half_trace + root, half_trace - root
    slope0 = (j1 - g11 * low - g12 * x0) / rising_farads
    a1 = (-slope0 - l2 * (low - p_inf)) / (l1 - l2)
    a2 = (low - p_inf) - a1
    return (lambda t: p_inf + a1 * math.exp(-l1 * t) + a2 * math.exp(-l2 * t)), p_inf, 1.0 / l2


def _crossing(f, volts: float, tau: float) -> float:
    """When the rising ``f`` first passes ``volts`` (a scan in steps of a tenth of ``tau``, then Brent)."""
    prev, t = 0.0, 0.1 * tau
    while f(t) < volts:
        if t > 50 * tau:
            raise ValueError(f"the rising plate never passes {volts:.1f} V")
        prev, t = t, t + 0.1 * tau
    return brent_root(lambda s: f(s) - volts, prev, t, xtol=1e-4 * tau)


def flip_edges(tube: TubeType, wear: float, supply_volts: float, plate_load_ohms: float, divider: Load,
               commutating_farads: float, grid_farads: float, rising_loads: tuple[tuple[int, Load], ...],
               falling_loads: tuple[tuple[int, Load], ...], rising_farads: float, falling_farads: float,
               mid_volts: float, steering: Steering | None = None) -> tuple[Edge, Edge]:
    """The two output edges of a flip, timed from the clock's falling edge: (rising plate, falling plate).

    The steering pulse cuts the conducting section off at once (Cs is several
    times the grid's capacitance); its plate rises as its node charges through
    the plate load (``rising_farads``: the section's output capacitance, the
    wiring, the commutating capacitor in series with the other grid, the net's
    loads), an exponential edge. The other section is then an inverter driven
    by that edge through ``divider`` and the commutating capacitor
    (:func:`planner.electrical.timing.inverter_edge`). ``*_loads``: each
    plate's loads (the other side's divider included).

    ``steering``: given when the rising plate is a level input of steering
    nodes (:class:`Steering`). Each Rs then ties the rising plate to a
    steering node the pulse left tens of volts below ground, which recovers
    slowly (its time constant is Cs's): the plate stalls well below its high
    level and the other grid only creeps past its threshold. The
    rising plate is then the two-node closed form of :func:`_steered_rise`;
    the other section's grid passes its threshold when that plate passes the
    level whose divider tap is the threshold, and the falling edge is timed
    against the exponential to the high level that passes that level at the
    same moment (the rising edge likewise, matched at the midpoint). Cost:
    one inverter edge (and two Brent searches on the closed form).
    """
    conducting = InverterTiming(tube, wear, supply_volts, plate_load_ohms, divider, rising_loads, rising_farads,
                                grid_farads)
    low = conducting.plate_volts(load_state(divider, supply_volts).grid_volts)
    high = conducting.plate_volts(-supply_volts)
    other = InverterTiming(tube, wear, supply_volts, plate_load_ohms, divider, falling_loads, falling_farads,
                           grid_farads, speedup_farads=commutating_farads)
    if steering is None:
        g_rise = 1.0 / plate_load_ohms + sum(n / (ld.upper_ohms + ld.lower_ohms) for n, ld in rising_loads
                                             if ld.diode_drop_volts is None)
        tau = rising_farads / g_rise
        t_rise = tau * math.log((high - low) / (high - mid_volts))
        up = Wave(low, high, "exponential", tau)
        drive = up
    else:
        c_grid = grid_farads + (tube.c_gp_farads or 0.0)
        plate, _, tau_slow = _steered_rise(supply_volts, plate_load_ohms, divider, rising_loads, rising_farads,
                                           c_grid, commutating_farads, falling_farads, low, high, steering)
        t_rise = _crossing(plate, mid_volts, tau_slow)
        up = Wave(low, high, "exponential", t_rise / math.log((high - low) / (high - mid_volts)))
        # The rising plate level at which the other grid's divider tap reaches its threshold.
        k = divider.lower_ohms / (divider.upper_ohms + divider.lower_ohms)
        level = (threshold_grid_volts(other, mid_volts) - divider.bias_volts * (1 - k)) / k
        t_level = _crossing(plate, level, tau_slow)
        drive = Wave(low, high, "exponential", t_level / math.log((high - low) / (high - level)))
    down = inverter_edge(other, drive, mid_volts)
    # inverter_edge times from its drive's midpoint crossing; the drive starts at the clock's edge.
    return (Edge(True, t_rise, 0.0, up),
            Edge(False, drive.crossing_seconds(mid_volts) + down.seconds, down.grid_seconds, down.output))


def design_bistable(family: Family, tube: TubeType, wear: float, types: Mapping[str, TubeType],
                    swing_volts: float | None = None) -> Bistable | Shortfall:
    """The register of ``tube`` in ``family`` (worn to ``wear``), or why it cannot be built.

    ``types``: the family's tube types by name (for the loads it may meet);
    ``swing_volts``: the clock's nominal swing when it is already chosen (else
    the register's own best).

    The plate loads and dividers are the family's driver and receiver of the
    type. The steering capacitor is the E12 value from 10 pF to 1 nF with the
    shortest setup time for which a clock swing exists that (worst case, see
    the module docstring) leaves a high level input's node above every
    conducting grid by the margin, drives the conducting grid of a low level
    input's side below cut-off by the margin and holds it below cut-off for
    ``HOLD_FACTOR`` times the flip, with the clock anywhere within its
    tolerance. Rs is the smallest E24 value for which the current the
    falling edge draws from a high level input is at most one family load's
    (so a steering input counts as one load) and the current the rising edge
    pushes into a low one moves it by at most the margin. Cost: up to 31
    capacitor values, each a few closed forms, and one flip estimate.
    """
    name = tube.name
    if not is_dual_triode(tube):
        return Shortfall("section kind", 0.0, "", f"{name} is not a dual triode")
    driver, rec = family.drivers.get((name, "single")), family.receivers.get((name, "grid"))
    if driver is None or rec is None:
        why = family.rejected.get((name, "single")) or family.rejected.get((name, "grid receiver"))
        return Shortfall("family", 0.0, "", f"the family has no {name} inverter" + (f": {why.message}" if why else ""))
    fanout = driver.fanout_limit - 1
    if fanout < 1:
        return Shortfall("fan-out", 1.0, "loads", f"a {name} inverter drives one load only; the bistable's "
                                                  "cross-coupling takes it")
    rules = family.rules
    ctx = TubeContext(tube, wear, family.rails, rules)
    box = ctx.box
    margin, cutoff, g_on = rules.margin_volts, ctx.cutoff_volts("grid"), ctx.grid_high_max_volts
    high, low = family.high_min_volts, family.follower_low_max_volts
    _, drop_hi = DIODE_DROP_VOLTS["solid-state"]
    c_in, c_gp = (tube.c_in_farads or 0.0), (tube.c_gp_farads or 0.0)
    grid_static = c_in + c_gp + WIRING_FARADS + DIODE_FARADS
    commutating = nearest_log_value(grid_static * rec.lower_ohms / rec.upper_ohms)
    # Largest grid-node capacitance the pulse must move at the edge: the reset diode too, and the
    # commutating capacitor in series with the other plate's node (at least its output capacitance,
    # the wiring and the grid-plate capacitance).
    c_cc = commutating * (1 + CAPACITOR_TOLERANCE)
    plate_node = (tube.c_out_farads or 0.0) + WIRING_FARADS + c_gp
    grid_max = grid_static + DIODE_FARADS + c_cc * plate_node / (c_cc + plate_node)
    # Then the cut-off section's plate swings up and lifts the grid through the grid-plate capacitance.
    miller_charge = c_gp * (box.vb(+1) - driver.low_volts)
    node_x = WIRING_FARADS + DIODE_FARADS
    heavy_amps = max(r.load_amps_high for r in family.receivers.values())
    kick_ohms = _low_output_ohms(family, types)
    r_grid = 1.0 / (1.0 / box.r(rec.upper_ohms, -1) + 1.0 / box.r(rec.lower_ohms, -1))
    # Where the steered grid recovers to: the divider's highest tap from the other plate at its highest
    # (the highest supply through the lowest plate load, loaded by this divider alone).
    div_hi = Load(box.r(rec.upper_ohms, -1), box.r(rec.lower_ohms, +1), box.vc(-1), tube)
    g_top = 1.0 / box.r(driver.plate_load_ohms, -1) + 1.0 / (div_hi.upper_ohms + div_hi.lower_ohms)
    top = (box.vb(+1) / box.r(driver.plate_load_ohms, -1)
           + div_hi.bias_volts / (div_hi.upper_ohms + div_hi.lower_ohms)) / g_top
    tap_max, _ = thevenin(div_hi, top)
    flip = _design_flip_seconds(family, types, rec, ctx, driver, fanout, commutating, grid_static)
    best = None
    for cs in STEERING_FARADS:
        result = _steering(cs, node_x, grid_max, grid_static, miller_charge, high, low, g_on, margin, drop_hi,
                           cutoff, heavy_amps, kick_ohms, r_grid, tap_max, flip, box, swing_volts)
        if result is not None and (best is None or result[0] < best[0]):
            best = result + (cs,)
    if best is None:
        return Shortfall("clock window", 0.0, "V",
                         f"no steering capacitor from 10 pF to 1 nF gives a {name} bistable a clock swing that "
                         f"sets it worst case (the level window {low:.1f} V to {high:.1f} V is too narrow "
                         f"for its cut-off of {cutoff:.1f} V)")
    setup, recovery, swing, swing_min, swing_max, rs, pulse, hold, cs = best
    k_max = cs * (1 + CAPACITOR_TOLERANCE) / (cs * (1 + CAPACITOR_TOLERANCE) + node_x)
    kick = k_max * swing_max
    # Across Rs: at most the whole plate supply plus the kick (a conservative continuous figure).
    steering_watts = resistor_rating_watts((kick + box.vb(+1)) ** 2 / box.r(rs, -1))
    if steering_watts is None:
        return Shortfall("resistor watts", 0.0, "W", f"the {name} steering resistor needs more than a 2 W rating")
    span = box.vb(+1) - box.vc(+1)
    reset_amps = span / box.r(rec.upper_ohms, -1)  # a reset diode carries its divider's current
    return Bistable(
        tube=name, plate_load_ohms=driver.plate_load_ohms, plate_load_watts=driver.plate_load_watts,
        upper_ohms=rec.upper_ohms, lower_ohms=rec.lower_ohms, upper_watts=rec.upper_watts,
        lower_watts=rec.lower_watts, commutating_farads=commutating, steering_farads=cs, steering_ohms=rs,
        steering_watts=steering_watts, fanout_limit=fanout,
        supply_amps_worst=driver.supply_amps_worst + (box.vb(+1) - high) / box.r(driver.plate_load_ohms, -1),
        supply_amps_typical=2 * driver.supply_amps_typical, bias_amps_worst=2 * max(rec.bias_amps_worst, reset_amps),
        section_watts_worst=driver.section_watts_worst, high_volts=driver.high_volts, low_volts=driver.low_volts,
        cutoff_volts=cutoff, grid_pulse_volts=pulse, pulse_hold_seconds=hold, flip_seconds=flip,
        clock_swing_volts=swing, clock_swing_min_volts=swing_min, clock_swing_max_volts=swing_max,
        clock_tolerance=CLOCK_TOLERANCE, setup_seconds=setup, recovery_seconds=recovery,
        diode_reverse_volts=box.vb(+1) + kick - box.vc(+1), capacitor_volts=span + swing_max,
        steering_node_farads=node_x, grid_node_farads=grid_static)


def _design_flip_seconds(family: Family, types, rec, ctx: TubeContext, driver, fanout: int, commutating: float,
                         grid_static: float) -> float:
    """The later output midpoint crossing of a flip, each plate with the other side's divider and
    ``fanout`` of the family's heaviest receivers (nominal values), at the nominal supplies."""
    tube, box = ctx.tube, ctx.box
    own = Load(rec.upper_ohms, rec.lower_ohms, box.vc(0), tube)
    loads = ((1, own), (fanout, _heavy_load(family, types, box.vc(0))))
    c_series = commutating * grid_static / (commutating + grid_static)
    farads = (tube.c_out_farads or 0.0) + WIRING_FARADS + c_series
    mid = 0.5 * (family.high_min_volts + family.low_max_volts)
    up, down = flip_edges(tube, ctx.wear, box.vb(0), driver.plate_load_ohms, own, commutating,
                          grid_static, loads, loads, farads, farads, mid)
    return max(up.seconds, down.seconds)


def _steering(cs, node_x, grid_max, grid_min, miller_charge, high, low, g_on, margin, drop_hi, cutoff, heavy_amps,
              kick_ohms, r_grid, tap_max, flip, box, fixed_swing=None):
    """Worst-case steering figures for one capacitor value, or None when no clock swing works.

    Returns (setup s, recovery s, nominal swing, lowest and highest swing the
    clock may give, Rs, highest steered grid, shortest hold below cut-off).
    The disabled node stays above a conducting grid by the margin for
    ``dV <= (high - g_on - margin) / k_max``. The enabled node first falls to
    where its diode conducts (``(low - g_on + drop) / k_min`` of the step);
    the rest of the step is shared with the grid node (``Cs / (Cs + Cx +
    C_grid)``) and must take the grid, even after the cut-off plate's swing
    lifts it back through the grid-plate capacitance, to the lower of cut-off
    less the margin and the level from which, recovering towards the
    divider's highest tap with ``(Cs + Cx + C_grid) (R1 || R2 || Rs)``, it
    stays below cut-off for ``HOLD_FACTOR`` flips.
    """
    ct, tol = CAPACITOR_TOLERANCE, CLOCK_TOLERANCE
    cs_lo, cs_hi = cs * (1 - ct), cs * (1 + ct)
    k_min, k_max = cs_lo / (cs_lo + node_x), cs_hi / (cs_hi + node_x)
    share = cs_lo / (cs_lo + node_x + grid_max)
    swing_max = (high - g_on - margin) / k_max
    first = (low - g_on + drop_hi) / k_min
    rs = None
    for r in box.values():  # the smallest Rs that draws at most one load's current and kicks a low node little
        amps = k_max * swing_max / box.r(r, -1)
        if amps <= heavy_amps and amps * kick_ohms <= margin:
            rs = r
            break
    if rs is None:
        return None
    tau_pulse = (cs_lo + node_x + grid_min) / (1.0 / r_grid + 1.0 / box.r(rs, -1))
    target = (tap_max / r_grid + low / box.r(rs, -1)) / (1.0 / r_grid + 1.0 / box.r(rs, -1))
    hold_need = HOLD_FACTOR * flip
    hold_level = target - (target - cutoff) * math.exp(hold_need / tau_pulse)
    lift = miller_charge / (cs_lo + node_x + grid_min)
    pulse = min(cutoff - margin, hold_level) - lift
    swing_min = first + (g_on - pulse) / share
    lo, hi = swing_min / (1 - tol), swing_max / (1 + tol)
    if lo >= hi:
        return None
    swing = float(round(0.5 * (lo + hi))) if fixed_swing is None else fixed_swing
    if not lo <= swing <= hi:
        if fixed_swing is not None:
            return None
        swing = 0.5 * (lo + hi)
    spare = min(k_min * (swing * (1 - tol) - swing_min), k_max * (swing_max - swing * (1 + tol)))
    if spare <= 0:
        return None
    reached = g_on - (swing * (1 - tol) - first) * share  # the weakest pulse the clock may give
    hold = tau_pulse * math.log((target - reached - lift) / (target - cutoff))
    tau_s = box.r(rs, +1) * (cs_hi + node_x)
    # Half the spare for the level input's settling, half for the last edge's kick.
    setup = tau_s * math.log(box.vb(+1) / (0.5 * spare))
    recovery = tau_s * math.log(k_max * swing * (1 + tol) / (0.5 * spare))
    return (setup, recovery, swing, swing_min, swing_max, rs, reached, hold)


def design_bistables(family: Family, tubes, types: Mapping[str, TubeType]) -> tuple[float | None, dict]:
    """Bistables for ``tubes`` ((TubeType, wear) pairs) that share one clock: (its nominal swing, name -> result).

    Every type's own best swing is a candidate; the one that the most types
    can be designed at wins (then the shortest worst setup time, then the
    lower swing). A result is a ``Bistable`` or the ``Shortfall`` of that
    type (at the chosen swing, or its own when it has none). Cost: one free
    design per type, then one per type and candidate swing.
    """
    tubes = sorted(tubes, key=lambda pair: pair[0].name)
    free = {t.name: design_bistable(family, t, wear, types) for t, wear in tubes}
    swings = sorted({b.clock_swing_volts for b in free.values() if isinstance(b, Bistable)})
    best = None
    for swing in swings:
        designed = {t.name: design_bistable(family, t, wear, types, swing) for t, wear in tubes
                    if isinstance(free[t.name], Bistable)}
        good = [b for b in designed.values() if isinstance(b, Bistable)]
        key = (-len(good), max(b.setup_seconds for b in good), swing)
        if best is None or key < best[0]:
            best = (key, swing, designed)
    if best is None:
        return None, free
    _, swing, designed = best
    out = dict(free)
    for name, result in designed.items():
        out[name] = result if isinstance(result, Bistable) else Shortfall(
            "clock swing", 0.0, "V", f"the {name} bistable cannot work from the {swing:g} V clock the others share")
    return swing, out


__all__ = ["CAPACITOR_TOLERANCE", "CLOCK_TOLERANCE", "HOLD_FACTOR", "RESET_PULLUP_OHMS", "Bistable", "Steering",
           "design_bistable", "design_bistables", "flip_edges", "is_dual_triode"]
