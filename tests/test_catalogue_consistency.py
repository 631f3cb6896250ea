"""Consistency of the built-in catalogue and the shape of the current models."""

import dataclasses
import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from planner.catalogue import (
    CUTOFF_AMPS,
    builtin_catalogue,
    cutoff_grid_volts,
    g3_gate,
    grid_current_amps,
    plate_current_amps,
    screen_current_amps,
)
from planner.catalogue.custom import SOURCE_PATHS
from planner.catalogue.types import BASES, TubeType

CAT = builtin_catalogue()
TYPES = [CAT.get(n) for n in CAT.names()]
AMPLIFIERS = [t for t in TYPES if t.model.equation != "diode"]
DATA_FIELDS = [f.name for f in dataclasses.fields(TubeType)
               if f.name not in ("name", "description", "sources", "notes")]


def test_the_required_types_are_present_and_the_broadcast_converter_is_not():
    required = {"12AU7", "12AT7", "12AX7", "5965", "6SN7", "6AU6", "6AS6", "6AK5", "6CS6", "5915", "6AL5"}
    assert required <= set(CAT.names())
    # No built-in type is described as a converter (the broadcast pentagrid converter stays out).
    assert not [t.name for t in CAT.types.values() if "converter" in t.description.lower()]


@pytest.mark.parametrize("tube", TYPES, ids=lambda t: t.name)
def test_every_value_has_a_source(tube):
    for name in DATA_FIELDS:
        if getattr(tube, name) is not None:
            assert tube.sources.get(name, "").strip(), f"{tube.name}.{name} has no source"
    assert set(tube.sources) <= set(SOURCE_PATHS)


@pytest.mark.parametrize("tube", TYPES, ids=lambda t: t.name)
def test_pins_unique_and_within_the_base(tube):
    count = BASES[tube.base]
    pins = list(tube.heater_pins) + ([tube.heater_centre_tap_pin] if tube.heater_centre_tap_pin else [])
    for s in tube.sections:
        pins += [p for role, p in s.pins.items() if not (tube.shared_cathode and role == "cathode")]
    if tube.shared_cathode:
        cathodes = {s.pins["cathode"] for s in tube.sections}
        assert len(cathodes) == 1
        pins += list(cathodes)
    assert len(pins) == len(set(pins)), f"{tube.name}: a pin is used twice"
    assert all(1 <= p <= count for p in pins), f"{tube.name}: pin outside 1..{count}"


@pytest.mark.parametrize("tube", TYPES, ids=lambda t: t.name)
def test_heater_series_option_consistent(tube):
    if tube.heater_series is None:
        return
    volts, amps = tube.heater_series
    assert tube.heater_centre_tap_pin is not None
    assert volts == pytest.approx(2 * tube.heater_volts)  # common practice: halves in series
    assert amps == pytest.approx(tube.heater_amps / 2)
    assert volts * amps == pytest.approx(tube.heater_watts)


def test_means_per_the_issue():
    for name in ("6AS6", "5915", "6CS6"):
        assert all(s.means == ("single", "dual") and "grid3" in s.pins for s in CAT.get(name).sections)
    for name in ("6AU6", "6AK5", "12AU7", "12AT7", "12AX7", "5965", "6SN7", "6J6"):
        assert all(s.means == ("single",) for s in CAT.get(name).sections)
    assert all(s.means == () and s.kind == "diode" for s in CAT.get("6AL5").sections)


@pytest.mark.parametrize("tube", TYPES, ids=lambda t: t.name)
def test_ratings_and_screens(tube):
    has_screen = any("screen" in s.pins for s in tube.sections)
    assert (tube.max_screen_watts is not None) == has_screen
    assert tube.max_plate_volts > 0
    if tube.model.equation == "diode":
        assert tube.max_plate_amps > 0
    else:
        assert tube.max_plate_watts > 0


def test_catalogue_lookup_is_case_insensitive_and_suggests():
    assert CAT.get("12au7").name == "12AU7"
    with pytest.raises(KeyError, match="12AU7"):
        CAT.get("12AU8")
    assert "12AU7" in CAT.closest("12AU8")
    assert list(CAT.names()) == sorted(CAT.names())


def _screen(tube):
    return 100.0 if tube.model.equation == "koren-pentode" else None


voltages = st.floats(min_value=-40.0, max_value=0.0, allow_nan=False)


@settings(max_examples=60, deadline=None)
@given(st.sampled_from(AMPLIFIERS), st.floats(min_value=20, max_value=300), voltages,
       st.floats(min_value=0.01, max_value=5.0))
def test_plate_current_monotone_in_grid_and_plate(tube, ep, eg, step):
    es = _screen(tube)

    def ip(ep_, eg_, eg3=0.0):
        return plate_current_amps(tube, plate_volts=ep_, grid_volts=eg_, grid3_volts=eg3, screen_volts=es)

    base = ip(ep, eg)
    assert base >= 0.0
    assert ip(ep, eg + step) >= base
    assert ip(ep + 10 * step, eg) >= base
    if tube.model.g3_zero_volts is not None:
        assert ip(ep, eg, eg3=-step) <= base


@settings(max_examples=40, deadline=None)
@given(st.sampled_from(AMPLIFIERS), st.floats(min_value=50, max_value=300), voltages)
def test_plate_current_smooth(tube, ep, eg):
    # Continuous first derivative: central differences at two step sizes agree (common practice).
    es = _screen(tube)

    def ip(v):
        return plate_current_amps(tube, plate_volts=ep, grid_volts=v, screen_volts=es)

    d1 = (ip(eg + 1e-3) - ip(eg - 1e-3)) / 2e-3
    d2 = (ip(eg + 2e-3) - ip(eg - 2e-3)) / 4e-3
    assert math.isclose(d1, d2, rel_tol=1e-2, abs_tol=1e-9)


@pytest.mark.parametrize("tube", AMPLIFIERS, ids=lambda t: t.name)
def test_cutoff_is_where_current_reaches_the_threshold(tube):
    es = _screen(tube)
    v = cutoff_grid_volts(tube, plate_volts=150, screen_volts=es)
    assert plate_current_amps(tube, plate_volts=150, grid_volts=v, screen_volts=es) == \
        pytest.approx(CUTOFF_AMPS, rel=0.05)
    assert plate_current_amps(tube, plate_volts=150, grid_volts=v - 1, screen_volts=es) < CUTOFF_AMPS


def test_gate_and_screen_current_conserve_the_cathode_stream():
    tube = CAT.get("6AS6")
    m = tube.model
    assert g3_gate(m, 1.5 * m.g3_zero_volts) < 1e-3 < g3_gate(m, 0.0) < g3_gate(m, 5.0) < 1.0
    total = [plate_current_amps(tube, plate_volts=120, grid_volts=-2, grid3_volts=v, screen_volts=120)
             + screen_current_amps(tube, plate_volts=120, grid_volts=-2, grid3_volts=v, screen_volts=120)
             for v in (-20.0, -5.0, 0.0, 3.0)]
    assert max(total) == pytest.approx(min(total))


def test_grid_current_only_for_positive_grid():
    tube = CAT.get("12AU7")
    assert grid_current_amps(tube, grid_volts=-1.0) == 0.0
    assert 0.0 < grid_current_amps(tube, grid_volts=0.5) < grid_current_amps(tube, grid_volts=1.0)


def test_pentode_without_screen_volts_is_an_error():
    with pytest.raises(ValueError, match="screen"):
        plate_current_amps(CAT.get("6AU6"), plate_volts=250, grid_volts=-1)
    with pytest.raises(ValueError, match="diode"):
        cutoff_grid_volts(CAT.get("6AL5"), plate_volts=10)
