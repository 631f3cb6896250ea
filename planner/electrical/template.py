"""One stage template: a tube type driving ``fanout`` loads of its own kind.

The template is a one-type family (same search over levels, restricted to
one means and the receivers that means needs), ranked by: whether it
carries the fan-out asked for; its fan-out (up to the larger of that and
the rules' goal); its smallest margin over requirement. Its worst-case
figures are then solved at the fan-out asked for, with the load being
watched taken at each corner of its own tolerances while the other loads
sit at their heaviest (high state) or lightest (low state).
"""

from __future__ import annotations

import itertools

from planner.catalogue import TubeType

from .circuit import follower_cathode_volts, load_state, solve_plate, thevenin
from .context import TubeContext
from .drivers import SIGNS, _Option, _off_grids, make_envelope, precheck
from .family import Outcome, search_levels
from .parts import FollowerTemplate, NoTemplate, Receiver, Shortfall, Template
from .receivers import corner_load
from .rules import DesignRules, Rails

MEANS_ALL = ("single", "dual", "diode")


def design_template(tube: TubeType, means: str, rails: Rails, fanout: int = 1,
                    rules: DesignRules = DesignRules(), elevation_volts: float | None = None) -> Template:
    """The stage template for ``tube`` as a ``means`` branch driving ``fanout`` loads of its own kind.

    Raises ``NoTemplate`` naming the failing limit and by how much. The
    tube is taken worn to ``rules.wear``. With ``elevation_volts`` given
    (the heater's DC reference), a triode type also gets its follower at
    ``fanout`` loads (:func:`_follower`: one more family search), or the
    reason none passes. Cost: one family search (about 65
    evaluations of one driver and its receivers) plus a few dozen solves.

    >>> from planner.catalogue import builtin_catalogue
    >>> t = design_template(builtin_catalogue().get("12AT7"), "single", Rails(250, -100), 2)
    >>> t.fanout_limit >= 2 and t.margin_low_volts >= 2.0 and t.margin_high_volts >= 0.0
    True
    """
    if fanout < 1:
        raise ValueError("fanout must be at least 1")
    if means not in MEANS_ALL:
        raise ValueError(f"means must be one of {', '.join(MEANS_ALL)}, got {means!r}")
    ctx = TubeContext(tube, rules.wear, rails, rules)
    where = f"{tube.name} ({means}) on {rails.plate_volts:g} V / {rails.bias_volts:g} V"
    problem = precheck(ctx, means)
    if problem is not None:
        raise NoTemplate(f"no template for {where}: {problem.message}", problem)
    key = (tube.name, means)
    goal = max(fanout, rules.fanout_goal)

    def rank(o: Outcome) -> tuple:
        d = o.drivers.get(key)
        if d is None:
            why = o.rejected.get(key)
            return (0, 0, -(why.amount if why else float("inf")))
        margin = min(min(r.margin_high_volts, r.margin_low_volts - rules.margin_volts) for r in o.receivers.values())
        return (1 if d.fanout_limit >= fanout else 0, min(d.fanout_limit, goal), round(margin, 2))

    best = search_levels([ctx], means_filter={key}, goal=goal, better=rank)
    driver = best.drivers.get(key)
    if driver is None:
        why = best.rejected[key]
        raise NoTemplate(f"no template for {where}: {why.message}", why)
    receivers = tuple(best.receivers[(tube.name, r)] for r in ctx.roles(means))
    if driver.fanout_limit < fanout:
        short = _high_shortfall(ctx, means, best, receivers, fanout)
        why = Shortfall("fan-out", float(fanout - driver.fanout_limit), "loads",
                        f"at most {driver.fanout_limit} loads pass; with {fanout} the worst-case high level "
                        f"falls {short:.1f} V below the {best.levels.high:.1f} V its loads need")
        raise NoTemplate(f"no template for {where}: {why.message}", why)
    figures = _figures(ctx, means, best, receivers, fanout)
    return Template(tube=tube.name, means=means, rails=rails, rules=rules, fanout=fanout, driver=driver,
                    receivers=receivers, fanout_limit=driver.fanout_limit, design_high_volts=best.levels.high,
                    design_low_volts=best.levels.drive_low, from_memory=tube.model_from_memory,
                    follower=None if elevation_volts is None else _follower(ctx, means, fanout, elevation_volts),
                    **figures)


def _follower(ctx: TubeContext, means: str, fanout: int, elevation_volts: float) -> FollowerTemplate | Shortfall | None:
    """The type's follower driving ``fanout`` loads of the template's kind, or why none passes.

    The one-type family (every means of the type, with followers, the
    heater at ``elevation_volts``: what a stock of this type alone gets),
    then the follower's worst-case cathode levels solved at ``fanout``
    loads of the family's heaviest follower-fed divider (high state) and
    its lightest (low state). None when the type cannot follow.
    """
    if not ctx.follower_capable:
        return None
    done = search_levels([ctx], elevations=(elevation_volts,))
    found = done.followers.get(ctx.name)
    if found is None:
        return done.rejected.get((ctx.name, "follower")) or Shortfall(
            "follower", 0.0, "", f"no {ctx.name} follower: the type has no driver to feed it")
    if found.fanout_limit < fanout:
        return Shortfall("fan-out", float(fanout - found.fanout_limit), "loads",
                         f"a {ctx.name} follower carries at most {found.fanout_limit} loads worst case, "
                         f"{fanout - found.fanout_limit} short of {fanout}")
    lv, box = done.levels, ctx.box
    env = make_envelope([(ctx, r) for _k, r in sorted(done.follower_receivers.items())], lv.high, lv.accept_low)
    rk = found.cathode_load_ohms
    high = follower_cathode_volts(ctx.tube, ctx.wear, box.vb(-1), lv.high, box.r(rk, -1), box.vc(+1),
                                  ((fanout, env.heavy),))
    low = follower_cathode_volts(ctx.tube, 1.0, box.vb(+1), lv.drive_low, box.r(rk, +1), box.vc(-1),
                                 env.light_loads(fanout))
    recs = tuple(done.follower_receivers[(ctx.name, r)] for r in ctx.roles(means)
                 if (ctx.name, r) in done.follower_receivers)
    return FollowerTemplate(found, recs, fanout, lv.high, lv.drive_low, lv.accept_low, high, low, elevation_volts)


def _option(ctx: TubeContext, means: str, outcome: Outcome):
    d = outcome.drivers[(ctx.name, means)]
    feed = next((o for o in ctx.screen_options if o.feed.series_ohms == d.screen_series_ohms
                 and o.feed.shunt_ohms == d.screen_shunt_ohms), None)
    lv = outcome.levels
    return d, _Option(ctx, means, feed, lv.drive_low, lv.high, _off_grids(ctx, means))


def _high_shortfall(ctx: TubeContext, means: str, outcome: Outcome, receivers, fanout: int) -> float:
    """How far below the family high level the node falls with ``fanout`` heavy loads, worst case."""
    d, opt = _option(ctx, means, outcome)
    env = make_envelope([(ctx, r) for r in receivers], outcome.levels.high, outcome.levels.drive_low)
    box = ctx.box
    v = min(solve_plate(box.vb(s), box.r(d.plate_load_ohms, +1), ((ctx.rules.max_branches, opt.leak_state[s]),),
                        ((fanout, env.heavy),)) for s in SIGNS)
    return outcome.levels.high - v


def _figures(ctx: TubeContext, means: str, outcome: Outcome, receivers: tuple[Receiver, ...],
             fanout: int) -> dict:
    """Worst-case levels, grid voltages and margins at ``fanout``, solved on the circuit.

    High state: cut-off sections new and at the highest leakage, RL high;
    F - 1 loads at the heaviest corner of the heaviest receiver (none, if
    loads push current in) plus the watched load at each corner of its own
    resistors (and pull-up and drop, for a diode input), bias most negative.
    Low state: one section on, worn, weakest screen feed, RL low; F - 1
    lightest loads if they push current in (else none) plus the watched
    load at each corner, bias least negative. Both supply ends each time.
    """
    box, rules = ctx.box, ctx.rules
    d, opt = _option(ctx, means, outcome)
    lv = outcome.levels
    env = make_envelope([(ctx, r) for r in receivers], lv.high, lv.drive_low)
    rhi, rlo = box.r(d.plate_load_ohms, +1), box.r(d.plate_load_ohms, -1)
    others_high = ((fanout - 1, env.heavy),) if env.heavy_amps > 0 and fanout > 1 else ()
    others_low = ((fanout - 1, env.light),) if env.light_amps < 0 and fanout > 1 else ()
    nb = rules.max_branches
    high_v, grid_hi, margin_hi = float("inf"), float("inf"), float("inf")
    low_v, grid_lo, margin_lo, cutoff = -float("inf"), -float("inf"), float("inf"), None
    for rec in receivers:
        diode = rec.grid_role == "diode"
        extra = (SIGNS, SIGNS) if diode else ((0,), (0,))
        for s, r1, r2, pull, vd in itertools.product(SIGNS, SIGNS, SIGNS, *extra):
            watched = corner_load(ctx, rec, r1, r2, +1, pull=pull, vd=vd, vb=s)
            v = solve_plate(box.vb(s), rhi, ((nb, opt.leak_state[s]),), others_high + ((1, watched),))
            st = load_state(watched, v)
            tap = thevenin(watched.divider, st.gate_volts)[0]
            high_v, grid_hi, margin_hi = min(high_v, v), min(grid_hi, st.grid_volts), min(margin_hi, tap)
            watched = corner_load(ctx, rec, r1, r2, -1, pull=pull, vd=vd, vb=s)
            v = solve_plate(box.vb(s), rlo, ((1, opt.weak[s]),), others_low + ((1, watched),))
            g = load_state(watched, v).grid_volts
            low_v, grid_lo = max(low_v, v), max(grid_lo, g)
            if rec.cutoff_volts - g < margin_lo:
                margin_lo, cutoff = rec.cutoff_volts - g, rec.cutoff_volts
    return dict(high_volts=high_v, low_volts=low_v, grid_high_volts=grid_hi, grid_low_volts=grid_lo,
                cutoff_volts=cutoff, margin_high_volts=margin_hi, margin_low_volts=margin_lo)

