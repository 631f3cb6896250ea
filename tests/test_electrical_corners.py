"""Worst-case figures agree with a brute-force walk over every corner of the tolerance box.

The design picks each worst corner from the monotonicity of the circuit
equations; here every resistor (each load's own resistors independently),
both supplies and the tube wear (with the wider allowance of a type whose
data are from memory) are walked over both ends, every number of
loads from one to the fan-out is tried, and the extremes must be the ones
the design reported.
"""

import itertools

import pytest

from planner.catalogue import builtin_catalogue
from planner.electrical import DesignRules, Rails, design_family, design_template
from planner.electrical.circuit import Load, ScreenFeed, SectionState, load_state, solve_plate, thevenin
from planner.electrical.context import TubeContext
from planner.electrical.rules import DIODE_DROP_VOLTS

CAT = builtin_catalogue()
PM = (-1, +1)
TOL = 1e-3  # volts: the node solver's tolerance is 1e-6 V


def _feeds(driver, t):
    if driver.screen_series_ohms is None:
        return [None]
    shunts = [None] if driver.screen_shunt_ohms is None else [driver.screen_shunt_ohms * (1 + s * t) for s in PM]
    return [ScreenFeed(driver.screen_series_ohms * (1 + s * t), b) for s in PM for b in shunts]


def _load_corners(ctx_of, rec, vc, vb, t, rules):
    """Every concrete version of receiver ``rec`` at bias ``vc`` and supply ``vb``."""
    tube = ctx_of[rec.tube].tube
    r1s = [rec.upper_ohms * (1 + s * t) for s in PM]
    r2s = [rec.lower_ohms * (1 + s * t) for s in PM]
    if rec.grid_role != "diode":
        return [Load(a, b, vc, tube) for a in r1s for b in r2s]
    drops = DIODE_DROP_VOLTS[rules.diodes]
    pulls = [rec.pullup_ohms * (1 + s * t) for s in PM]
    return [Load(a, b, vc, tube, d, p, vb) for a in r1s for b in r2s for d in drops for p in pulls]


def _off_grids(ctx, means, rules):
    """A cut-off branch: one control grid at cut-off less the margin, the other at its highest level."""
    m, vh = rules.margin_volts, ctx.grid_high_max_volts
    if means == "dual":
        return [(ctx.cutoff_volts("grid") - m, vh), (vh, ctx.cutoff_volts("grid3") - m)]
    return [(ctx.cutoff_volts("diode" if means == "diode" else "grid") - m, 0.0)]


def walk(tube, means, rails, rules, driver, receivers, ctx_of, max_loads):
    """Extremes over the whole tolerance box with 1..max_loads loads drawn from ``receivers``.

    Returns dict: high (lowest high level), low (highest low level), tap_high (lowest open-circuit
    grid drive at a high input), grid_high, grid_low (highest grid at a low input), margin_low.
    """
    ctx = ctx_of[tube.name]
    t, s = rules.resistor_tolerance, rules.supply_tolerance
    out = dict(high=float("inf"), low=-float("inf"), tap_high=float("inf"), grid_high=float("inf"),
               grid_low=-float("inf"), margin_low=float("inf"))
    nb = rules.max_branches
    for sb, sc, sr in itertools.product(PM, PM, PM):
        vb, vc = rails.plate_volts * (1 + sb * s), rails.bias_volts * (1 + sc * s)
        rl = driver.plate_load_ohms * (1 + sr * t)
        choices = [(rec, ld) for rec in receivers for ld in _load_corners(ctx_of, rec, vc, vb, t, rules)]
        for n in range(1, max_loads + 1):
            for combo in itertools.product(choices, repeat=n):
                loads = tuple((1, ld) for _, ld in combo)
                # Worn and strong ends of the tube (wider for a type with data from memory).
                for feed, wear in itertools.product(_feeds(driver, t), (ctx.wear, ctx.strong)):
                    for g1, g3 in _off_grids(ctx, means, rules):
                        v = solve_plate(vb, rl, ((nb, SectionState(tube, g1, g3, wear, feed)),), loads)
                        out["high"] = min(out["high"], v)
                        for _, ld in combo:
                            st = load_state(ld, v)
                            out["tap_high"] = min(out["tap_high"], thevenin(ld.divider, st.gate_volts)[0])
                            out["grid_high"] = min(out["grid_high"], st.grid_volts)
                    v = solve_plate(vb, rl, ((1, SectionState(tube, 0.0, 0.0, wear, feed)),), loads)
                    out["low"] = max(out["low"], v)
                    for rec, ld in combo:
                        g = load_state(ld, v).grid_volts
                        out["grid_low"] = max(out["grid_low"], g)
                        out["margin_low"] = min(out["margin_low"], rec.cutoff_volts - g)
    return out


CASES = [
    ("12AT7", "single", Rails(250, -100), 2),
    ("6AU6", "single", Rails(250, -100), 2),   # pentode, screen bleeder
    ("12AU7", "diode", Rails(180, -90), 2),    # diode-AND inputs push current into a low node
    ("5915", "dual", Rails(180, -90), 1),      # dual-control: g1 and g3 receivers
]


@pytest.mark.parametrize("name,means,rails,fanout", CASES)
def test_template_worst_case_equals_brute_force(name, means, rails, fanout):
    rules = DesignRules()
    tube = CAT.get(name)
    tpl = design_template(tube, means, rails, fanout, rules)
    ctx_of = {name: TubeContext(tube, rules.wear, rails, rules)}
    bf = walk(tube, means, rails, rules, tpl.driver, tpl.receivers, ctx_of, fanout)
    assert tpl.high_volts == pytest.approx(bf["high"], abs=TOL)  # brute-force corner walk
    assert tpl.low_volts == pytest.approx(bf["low"], abs=TOL)  # brute-force corner walk
    assert tpl.margin_high_volts == pytest.approx(bf["tap_high"], abs=TOL)  # brute-force corner walk
    assert tpl.grid_high_volts == pytest.approx(bf["grid_high"], abs=TOL)  # brute-force corner walk
    assert tpl.grid_low_volts == pytest.approx(bf["grid_low"], abs=TOL)  # brute-force corner walk
    assert tpl.margin_low_volts == pytest.approx(bf["margin_low"], abs=TOL)  # brute-force corner walk
    # The requirements themselves (issue: grid at or above 0 V high, margin below cut-off low).
    assert bf["tap_high"] >= 0 and bf["grid_high"] >= 0
    assert bf["margin_low"] >= rules.margin_volts


def test_mixed_family_any_driver_feeds_any_receiver():
    """Mixing rule, brute force: each driver type feeding a mix of the other type's receivers."""
    rules = DesignRules()
    rails = Rails(250, -100)
    tubes = [(CAT.get("12AT7"), 0.7), (CAT.get("6AU6"), 0.6)]
    fam = design_family(rails, tubes, rules)
    ctx_of = {t.name: TubeContext(t, w, rails, rules) for t, w in tubes}
    pairs = [(("12AT7", "single"), [("6AU6", "grid"), ("6AU6", "diode")]),
             (("6AU6", "single"), [("12AT7", "grid")])]
    for key, rec_keys in pairs:
        driver = fam.drivers[key]
        assert driver.fanout_limit >= 2
        receivers = [fam.receivers[k] for k in rec_keys]
        bf = walk(ctx_of[key[0]].tube, key[1], rails, rules, driver, receivers, ctx_of, 2)
        assert bf["high"] >= fam.high_min_volts - TOL  # brute force: the family's high level holds
        assert bf["low"] <= fam.low_max_volts + TOL  # brute force: the family's low level holds
        assert bf["tap_high"] >= -TOL and bf["grid_high"] >= -TOL  # every grid at or above 0 V
        assert bf["margin_low"] >= rules.margin_volts - TOL  # every grid the margin below cut-off


def test_receivers_accept_every_family_level():
    """Each receiver, every corner, at the family's threshold levels (the receiver half of the mixing rule)."""
    rules = DesignRules()
    rails = Rails(180, -90)
    tubes = [(CAT.get("5965"), 0.7), (CAT.get("5915"), 0.7)]
    fam = design_family(rails, tubes, rules)
    ctx_of = {t.name: TubeContext(t, w, rails, rules) for t, w in tubes}
    s = rules.supply_tolerance
    # Drivers' loads accept up to low_max; a follower's loads (their own dividers) up to follower_low_max.
    variants = [(r, fam.low_max_volts) for r in fam.receivers.values()]
    variants += [(r, fam.follower_low_max_volts) for r in fam.follower_receivers.values()]
    assert fam.follower_receivers or not fam.followers
    for rec, low_level in variants:
        for sc, sb in itertools.product(PM, PM):
            vc, vb = rails.bias_volts * (1 + sc * s), rails.plate_volts * (1 + sb * s)
            for ld in _load_corners(ctx_of, rec, vc, vb, rules.resistor_tolerance, rules):
                high = load_state(ld, fam.high_min_volts)
                assert thevenin(ld.divider, high.gate_volts)[0] >= 0 and high.grid_volts >= 0  # brute force
                low = load_state(ld, low_level)
                assert low.grid_volts <= rec.cutoff_volts - rules.margin_volts  # brute force


def test_fanout_limit_is_sharp():
    """The driver meets its design high level with fanout_limit heaviest loads, worst case, not with one more."""
    rules = DesignRules()
    rails = Rails(250, -100)
    tube = CAT.get("5965")
    tpl = design_template(tube, "single", rails, 1, rules)
    rec = tpl.receivers[0]
    t, s = rules.resistor_tolerance, rules.supply_tolerance
    heavy = Load(rec.upper_ohms * (1 - t), rec.lower_ohms * (1 - t), rails.bias_volts * (1 + s), tube)
    off = SectionState(tube, rec.cutoff_volts - rules.margin_volts, 0.0, 1.0, None)
    f = tpl.fanout_limit
    vb, rl = rails.plate_volts * (1 - s), tpl.plate_load_ohms * (1 + t)
    at = solve_plate(vb, rl, ((rules.max_branches, off),), ((f, heavy),))
    over = solve_plate(vb, rl, ((rules.max_branches, off),), ((f + 1, heavy),))
    assert f < 99 and at >= tpl.design_high_volts > over
