"""Templates and families: limits, ratings, messages, JSON and determinism."""

import dataclasses
import itertools

import pytest

from planner.catalogue import builtin_catalogue
from planner.electrical import (
    DesignRules, NoTemplate, Rails, design_family, design_template, e_series, resistor_rating_watts,
)
from planner.electrical.circuit import Load, SectionState, solve_plate
from planner.electrical.context import TubeContext

CAT = builtin_catalogue()
RAILS = Rails(250, -100)


def _in_series(value: float, series: str) -> bool:
    mantissa = value
    while mantissa >= 10:
        mantissa /= 10
    return any(abs(mantissa - m) < 1e-9 for m in e_series(series))


def test_rails_and_rules_are_checked():
    with pytest.raises(ValueError, match="positive"):
        Rails(-10, -100)
    with pytest.raises(ValueError, match="negative"):
        Rails(250, 10)
    with pytest.raises(ValueError, match="E6, E12, E24"):
        DesignRules(series="E96")
    with pytest.raises(ValueError, match="wear"):
        DesignRules(wear=1.5)
    with pytest.raises(ValueError, match="diodes"):
        DesignRules(diodes="germanium")


def test_template_json_has_the_cli_keys():
    t = design_template(CAT.get("12AT7"), "single", RAILS, 3)
    doc = t.to_json()
    for key in ("tube", "plate_load_ohms", "fanout_limit"):
        assert key in doc
    assert set(doc["divider"]) >= {"upper_ohms", "lower_ohms"}
    assert set(doc["levels"]) >= {"high_volts", "low_volts"}
    assert set(doc["grid"]) >= {"high_volts", "low_volts", "cutoff_volts"}
    assert set(doc["margins"]) >= {"high_volts", "low_volts"}
    assert doc["tube"] == "12AT7" and doc["fanout_limit"] >= 3


@pytest.mark.parametrize("name,means", [("12AT7", "single"), ("6AU6", "single"), ("5915", "dual"),
                                        ("12AX7", "diode")])
def test_template_meets_every_rule(name, means):
    rules = DesignRules()
    tube = CAT.get(name)
    t = design_template(tube, means, Rails(180, -90), 2, rules)
    d = t.driver
    # The requirements: grid >= 0 V high, margin below cut-off low, ratings kept.
    assert t.margin_high_volts >= 0 and t.grid_high_volts >= 0
    assert t.margin_low_volts >= rules.margin_volts
    assert t.grid_low_volts <= t.cutoff_volts - rules.margin_volts
    assert t.high_volts >= t.design_high_volts and t.low_volts <= t.design_low_volts
    assert d.section_watts_worst <= tube.max_plate_watts  # datasheet rating from the catalogue
    if d.screen_watts_worst is not None:
        assert d.screen_watts_worst <= tube.max_screen_watts  # datasheet rating from the catalogue
    for r in t.receivers:
        assert r.upper_watts in (0.25, 0.5, 1.0, 2.0) and r.lower_watts in (0.25, 0.5, 1.0, 2.0)
        assert _in_series(r.upper_ohms, rules.series) and _in_series(r.lower_ohms, rules.series)  # IEC 60063
        assert r.grid_amps_worst <= rules.max_grid_amps
    assert _in_series(d.plate_load_ohms, rules.series)  # IEC 60063
    assert d.plate_load_watts in (0.25, 0.5, 1.0, 2.0)


def test_e12_option_uses_only_e12_values():
    rules = DesignRules(series="E12")
    t = design_template(CAT.get("5965"), "single", RAILS, 2, rules)
    assert _in_series(t.plate_load_ohms, "E12")  # IEC 60063 E12
    assert all(_in_series(v, "E12") for r in t.receivers for v in (r.upper_ohms, r.lower_ohms))  # IEC 60063 E12


def test_plate_rating_refusal_names_the_limit_and_the_excess():
    with pytest.raises(NoTemplate, match=r"^no template for 6AK5 \(single\) on 250 V / -100 V: the plate supply "
                       r"\(262\.5 V worst case\) exceeds the 6AK5's 180 V plate rating by 82\.5 V$") as err:
        design_template(CAT.get("6AK5"), "single", RAILS, 1)
    # 250 V + 5 % = 262.5 V against the catalogue's 180 V rating: 82.5 V over.
    assert err.value.shortfall.limit == "max plate voltage"
    assert err.value.shortfall.amount == pytest.approx(82.5)
    assert "82.5 V" in str(err.value)


def test_fanout_refusal_says_how_many_loads_pass():
    tube = CAT.get("12AX7")
    best = design_template(tube, "single", RAILS, 1)
    with pytest.raises(NoTemplate, match=r"^no template for 12AX7 \(single\) on 250 V / -100 V: at most 3 loads pass; "
                       r"with 8 the worst-case high level falls 70\.1 V below the 150\.0 V its loads need$") as err:
        design_template(tube, "single", RAILS, best.fanout_limit + 5)
    assert err.value.shortfall.limit == "fan-out"
    assert "at most" in str(err.value) and "below" in str(err.value)


def test_no_dual_means_on_a_triode():
    with pytest.raises(NoTemplate, match="no dual branch"):
        design_template(CAT.get("12AU7"), "dual", RAILS, 1)


def test_worn_tubes_never_carry_more():
    tube = CAT.get("5965")
    fresh = design_template(tube, "single", RAILS, 1, DesignRules(wear=0.9))
    worn = design_template(tube, "single", RAILS, 1, DesignRules(wear=0.5))
    assert worn.fanout_limit <= fresh.fanout_limit


def test_speedup_capacitor_compensates_the_divider():
    t = design_template(CAT.get("12AT7"), "single", RAILS, 1, DesignRules(speedup_caps=True))
    r = t.receivers[0]
    ideal = CAT.get("12AT7").c_in_farads * r.lower_ohms / r.upper_ohms  # compensated divider: R1*C1 = R2*Cin
    assert _in_series(r.speedup_farads * 1e12, "E12") and 0.8 < r.speedup_farads / ideal < 1.25


def test_family_levels_and_parts():
    rules = DesignRules()
    tubes = [(CAT.get("12AU7"), 0.7), (CAT.get("12AT7"), 0.8)]
    fam = design_family(Rails(180, -90), tubes, rules)
    assert fam.high_min_volts > fam.follower_low_max_volts >= fam.low_max_volts > 0
    assert fam.drivers, fam.rejected
    for d in fam.drivers.values():
        assert d.fanout_limit >= 1
        assert d.high_volts >= fam.high_min_volts and d.low_volts <= fam.low_max_volts
    for r in fam.receivers.values():
        assert r.margin_high_volts >= 0 and r.margin_low_volts >= rules.margin_volts
    for f in fam.followers.values():
        assert f.high_volts >= fam.high_min_volts and f.low_volts <= fam.follower_low_max_volts
        assert f.section_watts_worst <= CAT.get(f.tube).max_plate_watts  # catalogue rating
    for _key, why in fam.rejected.items():
        assert why.message and why.limit


def test_family_does_not_depend_on_order():
    a = [(CAT.get("6AU6"), 0.7), (CAT.get("12AT7"), 0.7)]
    fa = design_family(RAILS, a)
    fb = design_family(RAILS, list(reversed(a)))
    assert fa == fb


def test_unusable_type_is_listed_with_reason():
    fam = design_family(RAILS, [(CAT.get("6AS6"), 0.7), (CAT.get("12AT7"), 0.7)])
    assert ("12AT7", "single") in fam.drivers
    why = fam.rejected[("6AS6", "dual")]
    assert why.limit == "max plate voltage" and why.amount == pytest.approx(82.5)


def test_plate_load_rating_is_twice_its_worst_dissipation():
    """Brute force over the box: the plate load's rating covers twice its dissipation (common practice)."""
    rules = DesignRules()
    tube = CAT.get("6SN7")
    t = design_template(tube, "single", RAILS, 2, rules)
    d, r = t.driver, t.receivers[0]
    ctx = TubeContext(tube, rules.wear, RAILS, rules)
    worst = 0.0
    for sb, sc, sr, s1, s2, wear in itertools.product((-1, 1), (-1, 1), (-1, 1), (-1, 1), (-1, 1), (rules.wear, 1.0)):
        vb, rl = 250 * (1 + 0.05 * sb), d.plate_load_ohms * (1 + 0.05 * sr)
        load = Load(r.upper_ohms * (1 + 0.05 * s1), r.lower_ohms * (1 + 0.05 * s2), -100 * (1 + 0.05 * sc), tube)
        for grid in (0.0, ctx.grid_high_max_volts):
            for n in range(0, d.fanout_limit + 1):
                v = solve_plate(vb, rl, ((1, SectionState(tube, grid, 0.0, wear, None)),), ((n, load),) if n else ())
                worst = max(worst, (vb - v) ** 2 / rl)
    assert d.plate_load_watts >= 2 * worst  # common practice: rating at least twice the dissipation
    assert d.plate_load_watts == resistor_rating_watts(worst)  # and the smallest offered rating that does


def test_template_is_frozen():
    t = design_template(CAT.get("12AT7"), "single", RAILS, 1)
    with pytest.raises(dataclasses.FrozenInstanceError, match=r"^cannot assign to field 'fanout'$"):
        t.fanout = 3
