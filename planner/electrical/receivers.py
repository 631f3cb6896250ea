"""Design of the level-shifting divider in front of a grid (a receiver).

Given the plate-node levels a receiver must accept (any level at or above
``high_volts`` is a one, any at or below ``low_volts`` a zero), choose the
upper and lower resistors from the E series so that, worst case over the
tolerance box:

- a one drives the grid to 0 V or above (the tap's open-circuit voltage is
  at least 0 V; the grid then clamps through grid current);
- a zero holds the grid at least ``margin_volts`` below cut-off;
- clamp current, grid-circuit resistance and resistor watts stay in limits;

and, among the values that pass, the one that draws the least current from
a node at ``high_volts`` (the lightest load), then the widest margin.

The divider is linear below clamping, so both level checks are closed
forms whose worst corner is read off the formula: the tap voltage
``(V*R2 + Vbias*R1) / (R1 + R2)`` falls with R1, rises with R2 and rises
as the bias supply gets less negative.

A diode-AND input ("diode" role) works at plate level: the gate node X is
pulled up to B+ through Rpu and has a diode to each input node, so X sits
one diode drop above the lowest input (or at the pull-up's own level, if
lower). Its divider is designed as above for the levels shifted by the
drop (lowest drop for the high check, highest for the low), and Rpu is the
largest value that still lifts X to the high input plus the lowest drop
while the divider draws its most. Seen from a driver, a diode input draws
nothing at a high level and pushes the pull-up current into the node at a
low level: it is a heavier load in the low state only.
"""

from __future__ import annotations

from dataclasses import replace

from planner.units import milliamps

from .circuit import Load, clamp_grid_volts, load_amps, thevenin
from .context import TubeContext
from .eseries import nearest_log_value, resistor_rating_watts
from .parts import Receiver, Shortfall
from .rules import DIODE_DROP_VOLTS

def _drops(ctx: TubeContext) -> tuple[float, float]:
    return DIODE_DROP_VOLTS[ctx.rules.diodes]


def corner_load(ctx: TubeContext, rec: Receiver, r1: int, r2: int, vc: int, pull: int = 0, vd: int = 0,
                vb: int = 0) -> Load:
    """``rec`` as a concrete load at one corner (signs as in ``Box``; ``vd`` -1 lowest drop, +1 highest).

    ``pull``, ``vd`` and ``vb`` (pull-up, diode drop, plate supply) matter
    only for a diode input.
    """
    box = ctx.box
    if rec.grid_role != "diode":
        return Load(box.r(rec.upper_ohms, r1), box.r(rec.lower_ohms, r2), box.vc(vc), ctx.tube)
    lo, hi = _drops(ctx)
    drop = {-1: lo, 0: 0.5 * (lo + hi), +1: hi}[vd]
    return Load(box.r(rec.upper_ohms, r1), box.r(rec.lower_ohms, r2), box.vc(vc), ctx.tube,
                drop, box.r(rec.pullup_ohms, pull), box.vb(vb))


def heavy_load(ctx: TubeContext, rec: Receiver) -> Load:
    """The corner drawing the most current from a node: divider resistors low, bias most negative.

    For a diode input also: pull-up high, drop highest, plate supply lowest
    (least current pushed back).
    """
    return corner_load(ctx, rec, -1, -1, +1, pull=+1, vd=+1, vb=-1)


def light_load(ctx: TubeContext, rec: Receiver) -> Load:
    """The corner drawing the least current: divider resistors high, bias least negative.

    For a diode input also: pull-up low, drop lowest, plate supply highest
    (most current pushed into the node).
    """
    return corner_load(ctx, rec, +1, +1, -1, pull=-1, vd=-1, vb=+1)


def _r2_range(ctx: TubeContext, r1: float, low_volts: float, high_volts: float,
              aim: float) -> tuple[float, float]:
    """Closed-form bounds on R2 from the high and the low check."""
    box, t = ctx.box, ctx.box.t
    vc_most, vc_least = -box.vc(+1), -box.vc(-1)
    if high_volts <= 0:
        return float("inf"), 0.0
    lo = r1 * (1 + t) * vc_most / ((1 - t) * high_volts)
    hi = r1 * (1 - t) * (vc_least + aim) / ((1 + t) * (low_volts - aim)) if vc_least + aim > 0 else 0.0
    return lo, hi


def _levels_at_divider(ctx: TubeContext, role: str, low_volts: float, high_volts: float) -> tuple[float, float]:
    """The levels at the divider's top: the node itself, or the diode gate node."""
    if role != "diode":
        return low_volts, high_volts
    lo, hi = _drops(ctx)
    return low_volts + hi, high_volts + lo


def window_shortfall(ctx: TubeContext, role: str, low_volts: float, high_volts: float) -> Shortfall | None:
    """How far apart the levels must move before any divider ratio could pass (None: far enough)."""
    aim = ctx.cutoff_volts(role) - ctx.rules.margin_volts
    box = ctx.box
    if -box.vc(-1) + aim <= 0:
        short = -(-box.vc(-1) + aim)
        return Shortfall("bias supply", short, "V",
                         f"the bias supply ({box.vc(-1):.1f} V worst case) must be {short:.1f} V more negative "
                         f"to hold a {ctx.name} {role} {ctx.rules.margin_volts:g} V below its cut-off "
                         f"of {ctx.cutoff_volts(role):.1f} V")
    low, high = _levels_at_divider(ctx, role, low_volts, high_volts)
    lo, hi = _r2_range(ctx, 1.0, low, high, aim)
    if lo <= hi:
        return None
    # The high level at which the bounds meet, for this low level.
    short = high * lo / hi - high if high > 0 and hi > 0 else float("inf")
    return Shortfall("level window", short, "V",
                     f"a {ctx.name} {role} divider needs the high level {short:.1f} V higher "
                     f"when the low level is {low_volts:.1f} V")


def design_receiver(ctx: TubeContext, role: str, low_volts: float, high_volts: float) -> Receiver | Shortfall:
    """The lightest divider for ``role`` of ``ctx.tube`` that accepts the levels, or why none does.

    Scans R1 down the E series from the largest value; for each, the R2
    values between the closed-form bounds are checked, and the scan stops
    once R1 has fallen a few steps below the first R1 that passed (the load
    only grows as R1 falls). A diode input then gets its pull-up. Cost:
    O(values * window) closed forms plus one grid clamp solve per candidate.
    """
    if not ctx.has_role(role):
        return Shortfall("cut-off", 0.0, "V", f"{ctx.name} {role} cannot be cut off at these supplies")
    problem = window_shortfall(ctx, role, low_volts, high_volts)
    if problem is not None:
        return problem
    rules, box = ctx.rules, ctx.box
    low, high = _levels_at_divider(ctx, role, low_volts, high_volts)
    cutoff = ctx.cutoff_volts(role)
    aim = cutoff - rules.margin_volts
    rmax = rules.max_grid_circuit_ohms
    found: list[tuple[float, float, Receiver]] = []
    first_r1 = None
    last_problem = None
    for r1 in reversed(box.values()):
        if first_r1 is not None and r1 < first_r1 / 1.25:
            break
        lo, hi = _r2_range(ctx, r1, low, high, aim)
        if (1 + box.t) * r1 > rmax:
            hi = min(hi, rmax * r1 / ((1 + box.t) * r1 - rmax))
        if lo > hi:
            continue
        for r2 in box.values(lo, hi):
            result = _check(ctx, role, r1, r2, low, high, cutoff)
            if isinstance(result, Shortfall):
                last_problem = result
                continue
            first_r1 = first_r1 or r1
            found.append((result.load_amps_high, -min(result.margin_high_volts,
                                                    result.margin_low_volts - rules.margin_volts), result))
    if not found:
        return last_problem or Shortfall("E-series step", 0.0, "ohm",
                                         f"no {rules.series} pair for a {ctx.name} {role} divider "
                                         f"between {low_volts:.1f} V and {high_volts:.1f} V")
    lightest = min(f[0] for f in found)
    close = [f for f in found if f[0] <= lightest * 1.02]
    best = min(close, key=lambda f: (f[1], f[0], f[2].upper_ohms, f[2].lower_ohms))[2]
    return _with_pullup(ctx, best, low_volts, high_volts) if role == "diode" else best


def _with_pullup(ctx: TubeContext, rec: Receiver, low_volts: float, high_volts: float) -> Receiver | Shortfall:
    """A diode input's pull-up: the largest value that lifts the gate node to the high input plus the drop.

    Worst case: lowest supply, pull-up high, divider drawing its most. The
    node figures of the Receiver become those seen from the driving node:
    the current drawn at a high level (none, as a rule), the most pushed
    back into a node at a low level.
    """
    box = ctx.box
    d_lo, _ = _drops(ctx)
    gate = high_volts + d_lo
    div = Load(box.r(rec.upper_ohms, -1), box.r(rec.lower_ohms, -1), box.vc(+1), ctx.tube)
    top = (box.vb(-1) - gate) / (load_amps(div, gate) * (1 + box.t))
    pull = next(reversed(box.values(hi_ohms=top)), None)
    if pull is None:
        return Shortfall("pull-up", 0.0, "ohm", f"no pull-up lifts a {ctx.name} diode gate to {gate:.1f} V")
    watts = resistor_rating_watts((box.vb(+1) - d_lo) ** 2 / box.r(pull, -1))
    if watts is None:
        return Shortfall("resistor watts", 0.0, "W", "the diode gate's pull-up needs more than a 2 W rating")
    rec = replace(rec, pullup_ohms=pull, pullup_watts=watts)
    pushed = -load_amps(light_load(ctx, rec), low_volts)
    drawn = load_amps(heavy_load(ctx, rec), high_volts)
    return replace(rec, load_amps_high=max(drawn, 0.0), inject_amps_low=max(pushed, 0.0))


def _check(ctx: TubeContext, role: str, r1: float, r2: float, low: float, high: float,
           cutoff: float) -> Receiver | Shortfall:
    """All divider checks for nominal (r1, r2) between top levels ``low`` and ``high``."""
    box, rules, tube = ctx.box, ctx.rules, ctx.tube
    vb = box.vb(+1)
    vc_most = -box.vc(+1)
    # High: the tap's open-circuit voltage, lowest corner.
    tap_hi, rth_hi = thevenin(Load(box.r(r1, +1), box.r(r2, -1), box.vc(+1), tube), high)
    if tap_hi < 0:
        return Shortfall("high margin", -tap_hi, "V", f"a high input leaves the grid {-tap_hi:.2f} V below 0 V")
    grid_high = clamp_grid_volts(tube, tap_hi, rth_hi)
    # Low: the highest grid voltage for the highest low input.
    grid_low = thevenin(Load(box.r(r1, -1), box.r(r2, +1), box.vc(-1), tube), low)[0]
    margin_low = cutoff - grid_low
    if margin_low < rules.margin_volts:
        short = rules.margin_volts - margin_low
        return Shortfall("low margin", short, "V", f"a low input holds the grid only {margin_low:.2f} V below cut-off")
    # Clamp current: divider top at the highest supply, most current into the grid.
    vt, rth = thevenin(Load(box.r(r1, -1), box.r(r2, +1), box.vc(-1), tube), vb)
    vg_top = clamp_grid_volts(tube, vt, rth)
    grid_amps = (vt - vg_top) / rth
    if grid_amps > ctx.max_grid_amps:
        excess = milliamps(grid_amps - ctx.max_grid_amps)
        return Shortfall("grid current", excess, "mA", f"clamp current exceeds {milliamps(ctx.max_grid_amps):g} mA")
    # Resistor watts: the upper resistor carries at most the whole supply (grid clamped at 0 V or above).
    lower_v = vg_top + vc_most
    upper_w = resistor_rating_watts(vb**2 / box.r(r1, -1))
    lower_w = resistor_rating_watts(lower_v**2 / box.r(r2, -1))
    if upper_w is None or lower_w is None:
        return Shortfall("resistor watts", 0.0, "W", "a divider resistor needs more than a 2 W rating")
    load = load_amps(Load(box.r(r1, -1), box.r(r2, -1), box.vc(+1), tube), high)
    speedup = None
    if rules.speedup_caps and tube.c_in_farads:
        speedup = nearest_log_value(tube.c_in_farads * r2 / r1)
    return Receiver(
        tube=tube.name, grid_role=role, upper_ohms=r1, lower_ohms=r2, upper_watts=upper_w, lower_watts=lower_w,
        grid_high_volts=grid_high, grid_low_volts=grid_low, cutoff_volts=cutoff,
        margin_high_volts=tap_hi, margin_low_volts=margin_low,
        bias_amps_worst=lower_v / box.r(r2, -1), load_amps_high=load, grid_amps_worst=grid_amps,
        speedup_farads=speedup)
