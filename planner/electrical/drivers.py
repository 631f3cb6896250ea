"""Design of an inverting stage's plate load (and screen feed) for given levels.

A driver must hold its plate node at or above ``high_volts`` with all its
branches cut off and F loads of the family's heaviest receiver, and at or
below ``low_volts`` with one branch on (the weakest case: a worn tube, its
grids just at 0 V) and the lightest loads: one plain receiver, or F diode
inputs when diode inputs (which push current into a low node) are in the
family.

The plate node's residual ``(B+ - V)/RL - tube current - load currents``
falls monotonically in V, so "the node sits at or above V_H" is the same as
"the residual at V_H is not negative". Both level checks are therefore
closed forms evaluated at the level itself, and the fan-out limit comes out
directly: F = floor((pull-up current at V_H - cut-off leakage) / load
current at V_H), and likewise for the current diode inputs push in at V_L.
Worst corners: for the high level RL high, the cut-off sections new (most
leakage), their screens fed strongest, the loads at their heaviest corner;
for the low level RL low, the conducting section worn, its screen fed
weakest, the loads at their lightest corner. The plate supply moves the
pull-up and (through the screen) the tube current the same way, so both of
its ends are evaluated.

Dissipation and resistor watts are checked on solved operating points of
the chosen values, strongest corner.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from .circuit import Load, SectionState, load_amps, section_amps, solve_plate
from .context import ScreenOption, TubeContext
from .eseries import resistor_rating_watts
from .parts import Driver, Receiver, Shortfall
from .receivers import corner_load, heavy_load, light_load

SIGNS = (-1, +1)
FANOUT_CAP = 99
"""Largest fan-out reported; a stage that could drive more is listed with this."""
_UNEXPLAINED = Shortfall("plate dissipation", 0.0, "W", "")


@dataclass(frozen=True)
class Envelope:
    """The receivers a driver may meet, reduced to the extreme loads at two levels.

    ``heavy``: concrete load drawing the most at ``high_volts``; ``light``:
    the least at ``low_volts`` (negative when a diode input pushes current
    back); ``heavy_low``: the most at ``low_volts`` (for the low-state
    resistor watts and supply current); ``nominal``: the heavy receiver at
    nominal values (typical supply figures).
    """

    high_volts: float
    low_volts: float
    heavy: Load
    light: Load
    heavy_low: Load
    nominal: Load

    @property
    def heavy_amps(self) -> float:
        return load_amps(self.heavy, self.high_volts)

    @property
    def light_amps(self) -> float:
        return load_amps(self.light, self.low_volts)

    def light_loads(self, fanout: int) -> tuple[tuple[int, Load], ...]:
        """Loads of the worst low state: one light load, or ``fanout`` of them if they push current in."""
        return ((fanout if self.light_amps < 0 else 1, self.light),)


def make_envelope(pairs: list[tuple[TubeContext, Receiver]], high_volts: float, low_volts: float) -> Envelope:
    """The extreme loads over ``pairs`` (context of the receiving tube, receiver). Cost O(len(pairs))."""
    heavy = [(load_amps(heavy_load(c, r), high_volts), -i) for i, (c, r) in enumerate(pairs)]
    light = [(load_amps(light_load(c, r), low_volts), i) for i, (c, r) in enumerate(pairs)]
    heavy_low = [(load_amps(heavy_load(c, r), low_volts), -i) for i, (c, r) in enumerate(pairs)]
    c, r = pairs[-max(heavy)[1]]
    return Envelope(high_volts, low_volts, heavy_load(c, r), light_load(*pairs[min(light)[1]]),
                    heavy_load(*pairs[-max(heavy_low)[1]]), corner_load(c, r, 0, 0, 0))


class _Option:
    """One screen feed (or none) with the section currents the level checks need, per supply end."""

    def __init__(self, ctx: TubeContext, means: str, option: ScreenOption | None, low_volts: float,
                 high_volts: float, off_grids: tuple[tuple[float, float], ...]):
        self.option = option
        feed = option.feed if option else None
        box = ctx.box
        self.weak = {vb: ctx.section(0.0, 0.0, ctx.wear, feed, -1) for vb in SIGNS}
        self.on_weak = {vb: section_amps(self.weak[vb], box.vb(vb), low_volts)[0] for vb in SIGNS}
        self.leak_state, self.leak = {}, {}
        for vb in SIGNS:
            states = [ctx.section(g1, g3, ctx.strong, feed, +1) for g1, g3 in off_grids]
            amps = [section_amps(s, box.vb(vb), high_volts)[0] for s in states]
            k = max(range(len(amps)), key=lambda i: amps[i])
            self.leak_state[vb], self.leak[vb] = states[k], amps[k]
        vh = 0.0 if means == "diode" else ctx.grid_high_max_volts
        self.strong = ctx.section(vh, vh if means == "dual" else 0.0, ctx.strong, feed, +1)
        self.nominal_on = ctx.section(0.0, 0.0, 1.0, feed, 0)
        self.nominal_off = ctx.section(off_grids[0][0], off_grids[0][1], 1.0, feed, 0)
        if feed is None:
            self.screen_amps = 0.0
        else:
            _, i_s, vs = section_amps(self.nominal_on, box.vb(0), low_volts)
            self.screen_amps = i_s + (vs / feed.shunt_ohms if feed.shunt_ohms else 0.0)
        self.min_rl_index: int | None = None


def _off_grids(ctx: TubeContext, means: str) -> tuple[tuple[float, float], ...]:
    """(g1, g3) of a cut-off branch: one grid at cut-off less the margin, the other at its highest."""
    m = ctx.rules.margin_volts
    if means == "dual":
        vh = ctx.grid_high_max_volts
        return ((ctx.cutoff_volts("grid") - m, vh), (vh, ctx.cutoff_volts("grid3") - m))
    role = "diode" if means == "diode" else "grid"
    return ((ctx.cutoff_volts(role) - m, 0.0),)


def _supply_amps(s: SectionState, vb: float, rl: float | None, v: float) -> float:
    """Plate-supply current: through the plate load (if ``rl``) plus the section's screen feed."""
    out = (vb - v) / rl if rl else 0.0
    if s.screen is not None:
        out += (vb - section_amps(s, vb, v)[2]) / s.screen.series_ohms
    return out


def precheck(ctx: TubeContext, means: str) -> Shortfall | None:
    """Limits that fail whatever the levels: means, plate rating, cut-off, screen ratings."""
    if means not in ctx.means:
        return Shortfall("means", 0.0, "", f"{ctx.name} has no {means} branch")
    if ctx.plate_rating_problem:
        limit, excess, unit = ctx.plate_rating_problem
        return Shortfall(limit, excess, unit, f"the plate supply ({ctx.box.vb(+1):.1f} V worst case) exceeds "
                                              f"the {ctx.name}'s {ctx.tube.max_plate_volts:g} V plate rating "
                                              f"by {excess:.1f} V")
    for role in ctx.roles(means):
        if not ctx.has_role(role):
            return Shortfall("cut-off", 0.0, "V", f"{ctx.name} {role} cannot be cut off")
    if ctx.screened and not ctx.screen_options:
        return Shortfall("screen ratings", 0.0, "W", f"no screen feed keeps the {ctx.name}'s screen within ratings")
    return None


def design_driver(ctx: TubeContext, means: str, low_volts: float, high_volts: float, env: Envelope,
                  goal: int) -> Driver | Shortfall:
    """Plate load and screen feed of a ``means`` stage of ``ctx.tube`` for the levels, or why none.

    Every (screen feed, E-series RL) pair is scored by the closed-form
    checks; pairs are tried in order of preference (fan-out up to
    ``goal``, then least supply current, then more fan-out) until one also
    passes dissipation and resistor watts on solved operating points.
    Cost: O(feeds * values) closed forms, a few plate-node solves per pair tried.
    """
    problem = precheck(ctx, means)
    if problem is not None:
        return problem
    box, rules = ctx.box, ctx.rules
    nb = rules.max_branches
    off = _off_grids(ctx, means)
    options = [_Option(ctx, means, o, low_volts, high_volts, off)
               for o in (ctx.screen_options if ctx.screened else (None,))]
    values = box.values(hi_ohms=rules.max_plate_load_ohms)
    heavy, light = env.heavy_amps, env.light_amps
    candidates = []
    low_fails = None  # (smallest RL that would meet the low level, option) when no RL in range does
    high_fails = None  # (option, RL index) meeting the low level with a high level too low for one load
    for oi, opt in enumerate(options):
        # Low level with one light load: RL at its low end must be at least rl_need.
        rl_need = max((box.vb(vb) - low_volts) / ((opt.on_weak[vb] + light) * (1 - box.t))
                      if opt.on_weak[vb] + light > 0 else float("inf") for vb in SIGNS)
        for ri, rl in enumerate(values):
            if rl < rl_need:
                continue
            spare = min((box.vb(vb) - high_volts) / (rl * (1 + box.t)) - nb * opt.leak[vb] for vb in SIGNS)
            fanout = math.floor(spare / heavy) if heavy > 0 else FANOUT_CAP
            if light < 0:  # diode inputs push current into a low node: the section must sink it
                sink = min(opt.on_weak[vb] - (box.vb(vb) - low_volts) / (rl * (1 - box.t)) for vb in SIGNS)
                fanout = min(fanout, math.floor(sink / -light))
            fanout = min(fanout, FANOUT_CAP)
            if fanout < 1:
                if high_fails is None or rl < values[high_fails[1]]:
                    high_fails = (oi, ri)
                break  # fan-out only falls as RL rises
            proxy = (box.vb(0) - low_volts) / rl + opt.screen_amps
            candidates.append((-min(fanout, goal), proxy, -fanout, rl, oi, ri))
        else:
            if rl_need > values[-1] and (low_fails is None or rl_need < low_fails[0]):
                low_fails = (rl_need, oi)
    if not candidates:
        return _no_candidate(ctx, means, options, values, low_volts, high_volts, env, low_fails, high_fails)
    candidates.sort()
    first_problem = None
    for _, _, neg_f, _rl, oi, ri in candidates:
        result = _verify(ctx, means, options[oi], values, ri, -neg_f, env, first_problem is None)
        if isinstance(result, Driver):
            return result
        first_problem = first_problem or result
    return first_problem


def _strong_low_volts(ctx: TubeContext, opt: _Option, rl: float, loads) -> float:
    return solve_plate(ctx.box.vb(+1), rl, ((1, opt.strong),), loads)


def _plate_watts(ctx: TubeContext, opt: _Option, rl: float, loads=()) -> float:
    """Dissipation of the conducting section: strongest tube, highest supply, lowest RL, lightest loads."""
    v = _strong_low_volts(ctx, opt, ctx.box.r(rl, -1), loads)
    return v * section_amps(opt.strong, ctx.box.vb(+1), v)[0]


def _min_rl_index(ctx: TubeContext, opt: _Option, values) -> int:
    """Index of the smallest RL whose unloaded section dissipation is within rating (it falls as RL rises)."""
    limit = ctx.tube.max_plate_watts
    lo, hi = 0, len(values)
    while lo < hi:
        mid = (lo + hi) // 2
        if _plate_watts(ctx, opt, values[mid]) <= limit:
            hi = mid
        else:
            lo = mid + 1
    return lo


def _verify(ctx: TubeContext, means: str, opt: _Option, values, ri: int, fanout: int, env: Envelope,
            explain: bool) -> Driver | Shortfall:
    """Dissipation and watts checks of one candidate; the Driver with its figures if it passes.

    ``explain`` False skips working out the excess of a failing candidate.
    """
    box, tube = ctx.box, ctx.tube
    rl = values[ri]
    if opt.min_rl_index is None:
        opt.min_rl_index = _min_rl_index(ctx, opt, values)
    pushing = env.light_amps < 0
    light_loads = env.light_loads(fanout)
    if ri < opt.min_rl_index or pushing:
        watts = _plate_watts(ctx, opt, rl, light_loads if pushing else ())
        if watts > tube.max_plate_watts:
            if not explain:
                return _UNEXPLAINED
            excess = watts - tube.max_plate_watts
            return Shortfall("plate dissipation", excess, "W",
                             f"a {ctx.name} section would dissipate {watts:.2f} W, {excess:.2f} W over its rating")
    vb = box.vb(+1)
    watts_rl, supply_low = 0.0, 0.0
    for sign in SIGNS:
        r = box.r(rl, sign)
        v = _strong_low_volts(ctx, opt, r, ((fanout, env.heavy_low),))
        watts_rl = max(watts_rl, (vb - v) ** 2 / r)
        supply_low = max(supply_low, _supply_amps(opt.strong, vb, r, v))
    rating = resistor_rating_watts(watts_rl)
    if rating is None:
        excess = 2 * watts_rl - 2.0
        return Shortfall("resistor watts", excess, "W",
                         f"the plate load would dissipate {watts_rl:.2f} W, beyond a 2 W resistor at half rating")
    section_w = _plate_watts(ctx, opt, rl, light_loads if pushing else ())
    rhi, rlo = box.r(rl, +1), box.r(rl, -1)
    nb = ctx.rules.max_branches
    high = min(solve_plate(box.vb(s), rhi, ((nb, opt.leak_state[s]),), ((fanout, env.heavy),)) for s in SIGNS)
    low = max(solve_plate(box.vb(s), rlo, ((1, opt.weak[s]),), light_loads) for s in SIGNS)
    leak_top = solve_plate(vb, rlo, ((nb, opt.leak_state[+1]),), ())
    branch_supply = _supply_amps(opt.leak_state[+1], vb, None, leak_top)
    vn = box.vb(0)
    typical = 0.0
    for state in (opt.nominal_on, opt.nominal_off):
        v = solve_plate(vn, rl, ((1, state),), ((1, env.nominal),))
        typical += 0.5 * _supply_amps(state, vn, rl, v)
    o = opt.option
    return Driver(
        tube=tube.name, means=means, plate_load_ohms=rl, plate_load_watts=rating, fanout_limit=fanout,
        supply_amps_worst=supply_low, supply_amps_typical=typical,
        branch_supply_amps_worst=branch_supply,
        section_watts_worst=section_w, screen_watts_worst=o.screen_watts_worst if o else None,
        screen_series_ohms=o.feed.series_ohms if o else None, screen_series_watts=o.series_watts if o else None,
        screen_shunt_ohms=o.feed.shunt_ohms if o else None, screen_shunt_watts=o.shunt_watts if o else None,
        high_volts=high, low_volts=low)


def _no_candidate(ctx: TubeContext, means: str, options, values, low_volts: float, high_volts: float,
                  env: Envelope, low_fails, high_fails) -> Shortfall:
    """Why no (feed, RL) pair met both levels, in volts at the plate node."""
    box = ctx.box
    nb = ctx.rules.max_branches
    if high_fails is not None:
        oi, ri = high_fails
        opt = options[oi]
        rl = box.r(values[ri], +1)
        v = min(solve_plate(box.vb(s), rl, ((nb, opt.leak_state[s]),), ((1, env.heavy),)) for s in SIGNS)
        if v < high_volts:
            short = high_volts - v
            return Shortfall("high level", short, "V",
                             f"with one load the {ctx.name} {means} stage's high level is {v:.1f} V, "
                             f"{short:.1f} V below {high_volts:.1f} V")
        rl = box.r(values[ri], -1)
        v = max(solve_plate(box.vb(s), rl, ((1, opt.weak[s]),), env.light_loads(1)) for s in SIGNS)
        return Shortfall("low level", max(v - low_volts, 0.0), "V",
                         f"a worn {ctx.name} cannot sink the current one diode input pushes into its plate "
                         f"and stay below {low_volts:.1f} V")
    _, oi = low_fails
    opt = options[oi]
    rl = box.r(values[-1], -1)
    v = max(solve_plate(box.vb(s), rl, ((1, opt.weak[s]),), env.light_loads(1)) for s in SIGNS)
    short = v - low_volts
    return Shortfall("low level", short, "V",
                     f"a worn {ctx.name} ({ctx.wear:.0%} of nominal current) pulls its plate only to {v:.1f} V, "
                     f"{short:.1f} V above {low_volts:.1f} V")
