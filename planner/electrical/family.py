"""A logic family for given rails and tube types: levels, drivers, receivers, followers.

Mixing rule. The family fixes three node levels: ``high_min``, ``low_max``
and ``follower_low_max`` (> low_max when followers pass). Every inverting
driver holds its node at or above ``high_min`` with up to its
``fanout_limit`` loads of the family's heaviest receiver (the one drawing
most current at ``high_min``) and at or below ``low_max`` with one load of
the lightest; every receiver's divider turns any level at or above
``high_min`` into a grid at or above 0 V and any level at or below
``low_max`` into a grid at least the margin below cut-off, worst case.
Every follower holds its cathode at or above ``high_min`` and at or below
``follower_low_max`` with up to its fan-out of the heaviest follower-fed
receiver: a load fed by a follower takes a divider of its own, designed
the same way between ``follower_low_max`` and ``high_min`` (a conducting
follower's cathode sits above its grid, so its low output is higher than
a driver's). A node's voltage falls monotonically as its loads draw more,
so a node with fewer or lighter loads than the extremes only sits further
from the threshold that matters. Hence any driver may feed any mix of
receivers up to its fan-out limit, and any follower any mix of
follower-fed receivers up to its own.

How the levels are chosen. Candidate levels are fractions of the nominal
plate supply: high_min from 35 % to 85 %, low_max from 6 % to 36 % (at
least 15 % below high_min). Each candidate is scored by, in order: how many
tube types have a driver that passes with a fan-out of at least two (one
counting half), so that the family serves as much of the stock as it can;
whether some follower passes with a fan-out of at least two (without one a
net cannot drive more loads than its driver's fan-out); the sum, over the
tube types with a driver that passes and over the followers that pass, of
the fan-out (a type's best means; each counted up to the rules' fan-out
goal); the least driver fan-out; the least receiver margin over its
requirement. A coarse grid of (high, low) without followers comes first;
then the neighbours of its best point at half the step (and one more half
step down in low when followers are possible), each with its followers,
whose allowance ``follower_low_max - low_max`` is chosen per
candidate (:func:`add_followers`). Drivers and their receivers do not
depend on the allowance. Cost: about 39 evaluations of every receiver and
driver, and for 12 of them 6 allowances of the follower-fed dividers and
the followers.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

from planner.catalogue import FrozenMap, TubeType

from .context import TubeContext
from .drivers import design_driver, make_envelope, precheck
from .followers import design_follower
from .parts import Family, Receiver, Shortfall
from .receivers import design_receiver
from .rules import DesignRules, Rails

HIGH_FRACTIONS = (0.35, 0.45, 0.55, 0.65, 0.75, 0.85)
LOW_FRACTIONS = (0.06, 0.12, 0.18, 0.24, 0.30, 0.36)
FOLLOWER_FRACTIONS = (0.015, 0.03, 0.045, 0.06, 0.09, 0.12)
"""Follower allowances tried: how far (fraction of the nominal plate supply) a follower's low
output may sit above the drivers' low level; follower-fed dividers are designed for it."""
MIN_WINDOW_FRACTION = 0.15


@dataclass(frozen=True)
class Levels:
    """Family levels in volts: drivers meet ``high`` and ``drive_low``; followers ``high`` and ``accept_low``."""

    high: float
    accept_low: float
    drive_low: float


@dataclass(frozen=True)
class Outcome:
    """Everything designed for one candidate of levels, with its score."""

    levels: Levels
    score: tuple
    receivers: dict
    drivers: dict
    followers: dict
    rejected: dict
    follower_receivers: dict = field(default_factory=dict)


def evaluate(ctxs: Sequence[TubeContext], levels: Levels, means_filter=None, with_followers=True,
             goal: int | None = None, elevations: tuple[float, ...] = (0.0,)) -> Outcome:
    """Design receivers, drivers and followers for one set of levels and score the result.

    ``means_filter``: optional set of (tube, means) to consider (templates
    use one). Receivers are designed for every role a considered means
    needs, between ``levels.drive_low`` and ``levels.high``; drivers against
    the envelope of those receivers; then, so that receivers of rejected
    drivers do not burden the rest, once more against the receivers the
    accepted drivers need. Followers last (:func:`add_followers`, which
    picks ``accept_low``), unless ``with_followers`` is False or a filter is given.
    """
    rules = ctxs[0].rules
    goal = goal or rules.fanout_goal
    receivers: dict[tuple[str, str], Receiver] = {}
    rejected: dict[tuple[str, str], Shortfall] = {}
    wanted = {}
    for c in ctxs:
        for m in c.means:
            if means_filter is not None and (c.name, m) not in means_filter:
                continue
            problem = precheck(c, m)
            if problem is None:
                wanted[(c.name, m)] = (c, m)
            else:
                rejected[(c.name, m)] = problem
    roles_needed = sorted({(c.name, r): c for c, m in wanted.values() for r in c.roles(m)}.items())
    ctx_of = {c.name: c for c in ctxs}
    for (name, role), c in roles_needed:
        result = design_receiver(c, role, levels.drive_low, levels.high)
        if isinstance(result, Shortfall):
            rejected[(name, f"{role} receiver")] = result
        else:
            receivers[(name, role)] = result

    def run(keys, recs):
        pairs = [(ctx_of[k[0]], r) for k, r in sorted(recs.items())]
        env = make_envelope(pairs, levels.high, levels.drive_low)
        out, bad = {}, {}
        for key in keys:
            c, m = wanted[key]
            missing = [r for r in c.roles(m) if (c.name, r) not in receivers]
            if missing:
                bad[key] = rejected[(c.name, f"{missing[0]} receiver")]
                continue
            d = design_driver(c, m, levels.drive_low, levels.high, env, goal)
            (bad if isinstance(d, Shortfall) else out)[key] = d
        return out, bad

    if not receivers:
        drivers, bad = {}, {k: rejected[(k[0], f"{wanted[k][0].roles(k[1])[0]} receiver")] for k in wanted}
    else:
        drivers, bad = run(sorted(wanted), receivers)
        used = {(k[0], r) for k in drivers for r in wanted[k][0].roles(k[1])}
        if drivers and used != set(receivers):
            lighter = {k: r for k, r in receivers.items() if k in used}
            drivers2, bad2 = run(sorted(drivers), lighter)
            if set(drivers2) == set(drivers):
                drivers = drivers2
                bad.update(bad2)
                for k in sorted(set(receivers) - used):
                    del receivers[k]
    rejected.update(bad)
    core = Outcome(Levels(levels.high, levels.drive_low, levels.drive_low),
                   _score(rules, goal, receivers, drivers, {}), receivers, drivers, {}, rejected)
    if not with_followers or means_filter is not None or not drivers:
        return core
    return add_followers(ctxs, core, elevations, goal)


# --- followers and the dividers they feed (issue 12, electrical half) ---------------------------

_PROGRESS = {"low level": 0, "high level": 0, "follower allowance": 0, "grid current": 1,
             "heater-cathode voltage": 2, "plate dissipation": 3, "resistor watts": 4}
"""How far a follower's design got before its shortfall (its checks run in this order)."""


def add_followers(ctxs: Sequence[TubeContext], core: Outcome, elevations: tuple[float, ...] = (0.0,),
                  goal: int | None = None) -> Outcome:
    """``core`` (drivers and receivers designed) with followers and the dividers they feed.

    A follower's low output sits above its grid by the grid-cathode voltage
    its current needs, so the loads it feeds get their own dividers
    (``follower_receivers``: one per receiver role of ``core``, designed
    between ``accept_low`` and the family's high level) and the drivers'
    receivers keep the narrower window. ``accept_low`` is the drivers' low
    level plus each of :data:`FOLLOWER_FRACTIONS` of the plate supply in
    turn; the allowance kept is the one with the most followers of a
    fan-out of two or more, then the most follower-fed dividers, then the
    most follower fan-out, then (when none passes) the followers whose
    designs got furthest (so the reason given is the nearest miss), then
    the smallest allowance. Each follower is fed by the accepted driver
    with the smallest plate load and checked against the heater references
    ``elevations``. Cost: per allowance, one divider per role and one
    follower design per triode type.
    """
    rules = ctxs[0].rules
    goal = goal or rules.fanout_goal
    capable = [c for c in ctxs if c.follower_capable]
    if not capable or not core.drivers:
        return core
    ctx_of = {c.name: c for c in ctxs}
    vb = ctxs[0].box.vb(0)
    high, low = core.levels.high, core.levels.drive_low
    node = min(d.plate_load_ohms for d in core.drivers.values())
    best = None
    for fraction in FOLLOWER_FRACTIONS:
        accept = low + fraction * vb
        if accept >= high:
            break
        recs, rejected, followers = {}, {}, {}
        for name, role in sorted(core.receivers):
            r = design_receiver(ctx_of[name], role, accept, high)
            if isinstance(r, Shortfall):
                rejected[(name, f"{role} receiver after a follower")] = r
            else:
                recs[(name, role)] = r
        env = make_envelope([(ctx_of[k[0]], r) for k, r in sorted(recs.items())], high, accept) if recs else None
        for c in capable:
            f = design_follower(c, high, accept, low, env, node, elevations) if env else Shortfall(
                "follower-fed divider", accept - low, "V",
                f"no divider accepts a follower's low output up to {accept:.1f} V")
            if isinstance(f, Shortfall):
                rejected[(c.name, "follower")] = f
            else:
                followers[c.name] = f
        progress = sum(_PROGRESS.get(rejected[(c.name, "follower")].limit, 0) if c.name not in followers else 5
                       for c in capable)
        key = (sum(1 for f in followers.values() if f.fanout_limit >= 2), len(followers), len(recs),
               sum(min(f.fanout_limit, goal) for f in followers.values()), progress, -fraction)
        if best is None or key > best[0]:
            best = (key, accept, recs, followers, rejected)
    if best is None:
        return core
    _, accept, recs, followers, rejected = best
    return Outcome(Levels(high, accept, low), _score(rules, goal, core.receivers, core.drivers, followers),
                   core.receivers, core.drivers, followers, {**core.rejected, **rejected}, recs)


def _score(rules: DesignRules, goal: int, receivers, drivers, followers) -> tuple:
    if not drivers:
        return (0, 0, 0, 0.0)
    best_per_tube: dict[str, int] = {}
    for (tube, _), d in drivers.items():
        best_per_tube[tube] = max(best_per_tube.get(tube, 0), min(d.fanout_limit, goal))
    useful = sum(best_per_tube.values()) + sum(min(f.fanout_limit, goal) for f in followers.values())
    fan = min(min(d.fanout_limit, goal) for d in drivers.values())
    margin = min(min(r.margin_high_volts, r.margin_low_volts - rules.margin_volts) for r in receivers.values())
    types = sum(min(f, 2) for f in best_per_tube.values())
    helps = any(f.fanout_limit >= 2 for f in followers.values())
    return (types, 1 if helps else 0, useful, fan, round(margin, 1))


def _grid(vb: float, highs, lows) -> list[Levels]:
    return [Levels(h * vb, lo * vb, lo * vb) for h in highs for lo in lows
            if not lo > h - MIN_WINDOW_FRACTION and lo > 0]


def search_levels(ctxs: Sequence[TubeContext], means_filter=None, goal=None, better=None,
                  elevations: tuple[float, ...] = (0.0,)) -> Outcome:
    """Best-scoring levels: a coarse grid without followers, then a finer one around its best.

    Stage 1 scores the coarse grid of (high, low) with no followers. Stage 2
    scores the neighbours of the best point at half the step (and, with
    followers, also one more half step down in low, so that a follower's
    dividers find room), each with its followers (:func:`add_followers`; when some type can be a follower; not
    for templates, ``means_filter`` given). ``better(outcome) -> tuple``
    replaces the score as the sort key when given. Ties go to the candidate
    met first, so the result is deterministic.
    """
    vb = ctxs[0].box.vb(0)
    follow = any(c.follower_capable for c in ctxs) and means_filter is None
    key = better or (lambda o: o.score)
    seen: dict[tuple, Outcome] = {}

    def best_of(grid, with_followers):
        best = None
        for levels in grid:
            tag = (round(levels.high, 6), round(levels.drive_low, 6), with_followers)
            if tag not in seen:
                seen[tag] = evaluate(ctxs, levels, means_filter, with_followers, goal, elevations)
            o = seen[tag]
            if best is None or key(o) > key(best):
                best = o
        return best

    first = best_of(_grid(vb, HIGH_FRACTIONS, LOW_FRACTIONS), False)
    h, lo = first.levels.high / vb, first.levels.drive_low / vb
    dh, dl = (HIGH_FRACTIONS[1] - HIGH_FRACTIONS[0]) / 2, (LOW_FRACTIONS[1] - LOW_FRACTIONS[0]) / 2
    # Followers need room below the high level for their own dividers: a second step down in low.
    lows = (lo - 2 * dl, lo - dl, lo, lo + dl) if follow else (lo - dl, lo, lo + dl)
    return best_of(_grid(vb, (h - dh, h, h + dh), lows), follow)


def design_family(rails: Rails, tubes: Sequence[tuple[TubeType, float]], rules: DesignRules = DesignRules(),
                  elevations: Sequence[float] = (0.0,)) -> Family:
    """The logic family for ``rails`` and the tube types in view, each with its wear (condition).

    See the module docstring for the mixing rule and how levels are chosen.
    ``elevations``: DC references of the heater windings (volts; 0 for a
    grounded winding), against which followers' heater-cathode voltages are
    checked. Types are taken in name order (the result does not depend on
    the order given). Raises ValueError for an empty list.

    >>> from planner.catalogue import builtin_catalogue
    >>> t = builtin_catalogue().get("12AT7")
    >>> fam = design_family(Rails(250, -100), [(t, 0.7)])
    >>> ("12AT7", "single") in fam.drivers, fam.high_min_volts > fam.follower_low_max_volts
    (True, True)
    """
    if not tubes:
        raise ValueError("design_family needs at least one tube type")
    by_name = {}
    for tube, wear in tubes:
        by_name[tube.name] = min(wear, by_name.get(tube.name, wear))
    types = {t.name: t for t, _ in tubes}
    ctxs = [TubeContext(types[n], by_name[n], rails, rules) for n in sorted(by_name)]
    refs = tuple(sorted({float(e) for e in elevations})) or (0.0,)
    best = search_levels(ctxs, elevations=refs)
    lv = best.levels
    return Family(rails=rails, rules=rules, high_min_volts=lv.high, low_max_volts=lv.drive_low,
                  follower_low_max_volts=lv.accept_low,
                  drivers=FrozenMap(best.drivers), receivers=FrozenMap(best.receivers),
                  followers=FrozenMap(best.followers), rejected=FrozenMap(best.rejected),
                  follower_receivers=FrozenMap(best.follower_receivers), elevations=refs)
