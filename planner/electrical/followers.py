"""Design of a cathode follower: the cathode resistor of a triode section for given levels.

The follower's grid takes an inverting stage's plate node directly (its
levels: at or above ``high_volts``, at or below ``drive_low_volts``); its
cathode, returned to the bias supply through Rk, is a new node that must
sit at or above ``high_volts`` with F loads and at or below
``accept_low_volts`` with one. A conducting follower's cathode sits above
its grid by the grid-cathode bias it needs, so its low output is higher
than its input: the family leaves ``accept_low_volts - drive_low_volts`` for
that.

As for drivers, the cathode node's residual (plate + grid current -
(Vk - Vbias)/Rk - loads) falls monotonically in Vk, so both level checks
are closed forms at the level itself. Worst corners: high output with a
worn tube, lowest plate supply, Rk low, bias most negative, heavy loads;
low output with a new tube, highest supply, Rk high, bias least negative,
the lightest load.
"""

from __future__ import annotations

import math

from planner.catalogue import plate_current_amps
from planner.units import milliamps

from .circuit import follower_cathode_volts, follower_on_node, load_amps
from .context import TubeContext
from .drivers import FANOUT_CAP, Envelope
from .eseries import resistor_rating_watts
from .parts import Follower, Shortfall

STOPPER_OHMS = (0.0, 10e3, 47e3, 100e3, 220e3, 470e3)
"""Grid stoppers tried, smallest first (0: none); tens to hundreds of kilohms are common practice."""

MAX_TRIES = 12
"""Candidate cathode resistors verified (in order of preference) before giving up."""

def design_follower(ctx: TubeContext, high_volts: float, accept_low_volts: float, drive_low_volts: float,
                    env: Envelope, node_load_ohms: float,
                    elevations: tuple[float, ...] = (0.0,)) -> Follower | Shortfall:
    """Cathode resistor of a follower on ``ctx.tube`` for the levels, or why none passes.

    ``env`` must be the family's envelope at (``high_volts``,
    ``accept_low_volts``); ``node_load_ohms`` the smallest plate load of
    any driver that may feed the follower (it limits the grid current when
    the input node rises towards B+). Rk is scanned over the E series; the
    pair with the largest fan-out (then the least current) that also passes
    grid current, heater-cathode voltage, dissipation and watts wins.
    Values whose cathode resistor would need more than a 2 W rating with
    the whole span from B+ to the bias rail across it are tried last.
    ``elevations``: the DC references of the heater windings available
    (volts to ground; 0 for a grounded winding); the follower passes the
    heater-cathode check when its cathode's whole range fits the rating
    around one of them (:func:`heater_cathode_excess`).
    Cost: O(values) closed forms plus a few nested solves per value tried.
    """
    tube, box = ctx.tube, ctx.box
    if not ctx.follower_capable:
        return Shortfall("section kind", 0.0, "", f"{ctx.name} has no triode section for a follower")
    if ctx.plate_rating_problem:
        limit, excess, unit = ctx.plate_rating_problem
        return Shortfall(limit, excess, unit,
                         f"the plate supply exceeds the {ctx.name}'s plate rating by {excess:.1f} V")
    delta = accept_low_volts - drive_low_volts
    if delta <= 0:
        return Shortfall("follower allowance", 0.0, "V",
                         "the family's levels leave no room for a follower's grid-cathode voltage "
                         "(at the levels chosen, followers would cost more fan-out than they add)")
    heavy, light = env.heavy_amps, env.light_amps
    vb_lo, vb_hi = box.vb(-1), box.vb(+1)
    vc_most, vc_least = box.vc(+1), box.vc(-1)
    on_weak = ctx.wear * plate_current_amps(tube, plate_volts=vb_lo - high_volts, grid_volts=0.0)
    on_low = plate_current_amps(tube, plate_volts=vb_hi - accept_low_volts, grid_volts=-delta)
    candidates = []
    low_fail = high_fail = None
    for rk in box.values():
        slack = (accept_low_volts - vc_least) / box.r(rk, +1) - on_low
        if slack + light < 0:
            low_fail = rk if low_fail is None else low_fail
            continue
        spare = on_weak - (high_volts - vc_most) / box.r(rk, -1)
        fanout = math.floor(spare / heavy) if heavy > 0 else FANOUT_CAP
        if light < 0:  # diode inputs push current into a low output: the cathode resistor must take it
            fanout = min(fanout, math.floor(slack / -light))
        fanout = min(fanout, FANOUT_CAP)
        if fanout < 1:
            high_fail = rk if high_fail is None else max(high_fail, rk)
            continue
        # Rk takes nearly the whole span from B+ to the bias rail when the input rises to B+: values
        # whose 2 W rating (at half load) that span would exceed are tried last.
        hot = (vb_hi - vc_most) ** 2 / box.r(rk, -1) > 1.0
        candidates.append((hot, -fanout, -rk))
    if not candidates:
        if high_fail is not None:
            rk = box.r(high_fail, -1)
            v = follower_cathode_volts(tube, ctx.wear, vb_lo, high_volts, rk, vc_most, ((1, env.heavy),))
            return Shortfall("high level", high_volts - v, "V",
                             f"a worn {ctx.name} follower's high output is {v:.1f} V with one load, "
                             f"{high_volts - v:.1f} V below {high_volts:.1f} V")
        rk = box.r(box.values()[0], +1)
        v = follower_cathode_volts(tube, 1.0, vb_hi, drive_low_volts, rk, vc_least, env.light_loads(1))
        return Shortfall("low level", v - accept_low_volts, "V",
                         f"a {ctx.name} follower's low output is {v:.1f} V, {v - accept_low_volts:.1f} V above "
                         f"{accept_low_volts:.1f} V")
    candidates.sort()
    problem = None
    for _hot, neg_f, neg_rk in candidates[:MAX_TRIES]:
        result = _verify(ctx, -neg_rk, -neg_f, high_volts, accept_low_volts, drive_low_volts, env, node_load_ohms,
                         elevations)
        if isinstance(result, Follower):
            return result
        problem = problem or result
    return problem


def _verify(ctx: TubeContext, rk: float, fanout: int, high_volts: float, accept_low_volts: float,
            drive_low_volts: float, env: Envelope, node_load_ohms: float,
            elevations: tuple[float, ...]) -> Follower | Shortfall:
    tube, box = ctx.tube, ctx.box
    vb_lo, vb_hi = box.vb(-1), box.vb(+1)
    vc_most, vc_least = box.vc(+1), box.vc(-1)
    rk_lo, rk_hi = box.r(rk, -1), box.r(rk, +1)
    node = box.r(node_load_ohms, -1)
    heavy_loads = ((fanout, env.heavy),)
    # Input node rising towards B+: a worn tube and heavy loads leave the grid most positive; the
    # smallest grid stopper (in series with the grid) that holds the grid current in its limit.
    for stopper in STOPPER_OHMS:
        _, _, grid_amps = follower_on_node(tube, ctx.wear, vb_hi, node + box.r(stopper, -1), rk_lo, vc_most,
                                           heavy_loads)
        if grid_amps <= ctx.max_grid_amps:
            break
    else:
        excess = milliamps(grid_amps - ctx.max_grid_amps)
        return Shortfall("grid current", excess, "mA",
                         f"the follower's grid would draw {milliamps(grid_amps):.2f} mA even behind "
                         f"{STOPPER_OHMS[-1] / 1e3:g} kOhm")
    # Highest cathode: new tube, no loads, Rk high, bias least negative.
    _, vk_max, _ = follower_on_node(tube, 1.0, vb_hi, node, rk_hi, vc_least, ())
    # Lowest cathode: the grid at 0 V (no plate node falls below its grounded cathodes), a worn tube
    # at the lowest supply, Rk low, bias most negative, heavy loads: the section works hardest.
    vk_min = follower_cathode_volts(tube, ctx.wear, vb_lo, 0.0, rk_lo, vc_most, heavy_loads)
    problem = _heater_cathode_problem(ctx, vk_min, vk_max, elevations)
    if problem is not None:
        return problem
    watts = _plate_watts_bound(vb_hi, rk_lo, vc_most, env, fanout, accept_low_volts, high_volts, vk_max)
    if watts > tube.max_plate_watts:
        return Shortfall("plate dissipation", watts - tube.max_plate_watts, "W",
                         f"the follower section could dissipate {watts:.2f} W")
    rk_watts = resistor_rating_watts((vk_max - vc_most) ** 2 / rk_lo)
    if rk_watts is None:
        return Shortfall("resistor watts", 2 * (vk_max - vc_most) ** 2 / rk_lo - 2.0, "W",
                         "the cathode resistor needs more than a 2 W rating")
    high = follower_cathode_volts(tube, ctx.wear, vb_lo, high_volts, rk_lo, vc_most, heavy_loads)
    low = follower_cathode_volts(tube, 1.0, vb_hi, drive_low_volts, rk_hi, vc_least, env.light_loads(fanout))
    vp, vk, _ = follower_on_node(tube, 1.0, vb_hi, node, rk_lo, vc_most, heavy_loads)
    supply = plate_current_amps(tube, plate_volts=vb_hi - vk, grid_volts=vp - vk)
    vn, vcn = box.vb(0), box.vc(0)
    typical = 0.0
    for grid in (high_volts, drive_low_volts):
        k = follower_cathode_volts(tube, 1.0, vn, grid, rk, vcn, ((1, env.nominal),))
        typical += 0.5 * plate_current_amps(tube, plate_volts=vn - k, grid_volts=grid - k)
    return Follower(
        tube=tube.name, cathode_load_ohms=rk, cathode_load_watts=rk_watts, fanout_limit=fanout,
        supply_amps_worst=supply, supply_amps_typical=typical,
        bias_amps_worst=(vk_max - vc_most) / rk_lo, section_watts_worst=watts,
        grid_amps_worst=grid_amps, grid_stopper_ohms=stopper, cathode_volts_max=vk_max,
        high_volts=high, low_volts=low, cathode_volts_min=vk_min,
        elevations=tuple(e for e in elevations if heater_cathode_excess(tube, e, vk_min, vk_max) <= 0))


def heater_cathode_excess(tube, elevation_volts: float, cathode_low_volts: float, cathode_high_volts: float) -> float:
    """How far a cathode spanning [low, high] exceeds ``tube``'s heater-cathode rating (<= 0: within it).

    The heater sits at ``elevation_volts`` (its winding's DC reference).
    The catalogue gives one rating, ``max_heater_cathode_volts``, which is
    applied to both signs (cathode above or below the heater): the
    stricter reading where a datasheet gives two (common practice). A
    type without a rating never exceeds it. O(1).

    >>> from planner.catalogue import builtin_catalogue
    >>> t = builtin_catalogue().get("12AT7")  # rated 90 V
    >>> heater_cathode_excess(t, 0.0, 5.0, 150.0), heater_cathode_excess(t, 60.0, 5.0, 150.0)
    (60.0, 0.0)
    """
    rating = tube.max_heater_cathode_volts
    if rating is None:
        return -float("inf")
    return max(cathode_high_volts - elevation_volts, elevation_volts - cathode_low_volts) - rating


def _heater_cathode_problem(ctx: TubeContext, vk_min: float, vk_max: float,
                            elevations: tuple[float, ...]) -> Shortfall | None:
    """None when some heater reference keeps the cathode's range within rating; else the smallest excess."""
    tube = ctx.tube
    excess, best = min((heater_cathode_excess(tube, e, vk_min, vk_max), e) for e in elevations)
    if excess <= 0:
        return None
    hk = tube.max_heater_cathode_volts
    centre = 0.5 * (vk_min + vk_max)
    if vk_max - vk_min <= 2 * hk:
        hint = f"; a heater winding elevated to about {centre:.0f} V would fit"
    else:
        hint = "; its cathode swings too far for any heater elevation"
    where = "grounded" if best == 0 else f"elevated to {best:g} V"
    return Shortfall("heater-cathode voltage", excess, "V",
                     f"a {ctx.name} follower's cathode spans {vk_min:.1f} to {vk_max:.1f} V; with its heater "
                     f"{where} that is {excess:.1f} V over the {hk:g} V heater-cathode rating{hint}")


def _plate_watts_bound(vb: float, rk: float, vc: float, env: Envelope, fanout: int,
                       low_top: float, high_bottom: float, vk_max: float) -> float:
    """Upper bound on the follower's plate dissipation over both output states.

    The cathode may sit anywhere in [0, low_top] (output low) or
    [high_bottom, vk_max] (output high); there the section carries the Rk
    current plus ``fanout`` heavy loads and drops B+ - Vk. On a range [a, b]
    the Rk part (B+ - Vk)(Vk - Vbias)/Rk is a parabola, maximised in closed
    form; the load part is at most (B+ - a) * F * I_load(b), both factors
    being monotone. Cost O(1) plus two load evaluations per range.
    """
    best = 0.0
    for a, b in ((0.0, low_top), (high_bottom, max(high_bottom, vk_max))):
        peak = min(max(0.5 * (vb + vc), a), b)
        parabola = (vb - peak) * (peak - vc) / rk
        best = max(best, parabola + (vb - a) * fanout * load_amps(env.heavy, b))
    return best
