"""Custom tube types (the stock file's custom_types) and their checks.

The example type below is invented test data (a fixture), not a real tube.
"""

import copy
import re

import pytest

from planner.catalogue import (
    CatalogueDataError,
    builtin_catalogue,
    plate_current_amps,
    spice_subcircuit,
    tube_document,
    tube_type_from_mapping,
)
from planner.catalogue.builtin import BUILTIN_DATA

# Invented fixture: a single triode on a 7-pin base.
EXAMPLE = {
    "description": "invented single triode for tests",
    "kind": "triode",
    "base": "7-pin miniature",
    "sections": [{"pins": {"plate": 1, "grid": 6, "cathode": 7}}],
    "heater": {"volts": 6.3, "amps": 0.15, "pins": [3, 4]},
    "ratings": {"max_plate_volts": 250, "max_plate_watts": 1.0},
    "capacitance_pf": {"input": 2.0},
    "model": {"equation": "child-langmuir", "mu": 20, "perveance": 0.001},
    "sources": {"default": "invented for this test"},
}


def with_change(path, value, data=EXAMPLE):
    data = copy.deepcopy(data)
    node = data
    keys = path.split(".")
    for k in keys[:-1]:
        node = node[int(k)] if isinstance(node, list) else node[k]
    last = keys[-1]
    if value is KeyError:
        del node[last]
    elif isinstance(node, list):
        node[int(last)] = value
    else:
        node[last] = value
    return data


def test_example_reads_and_models():
    tube = tube_type_from_mapping("X1", EXAMPLE)
    assert tube.sections[0].means == ("single",)
    assert tube.sources["heater_volts"] == "invented for this test"
    # Child-Langmuir three-halves law: 1 mA/V^1.5 * (0 + 100/20)^1.5 = 11.18 mA.
    assert plate_current_amps(tube, plate_volts=100, grid_volts=0) == pytest.approx(0.001 * 5 ** 1.5)
    assert plate_current_amps(tube, plate_volts=100, grid_volts=-6) == 0.0


def test_capacitances_are_read_in_picofarads_held_in_farads_and_listed_as_written():
    # Invented values with the awkward binary expansions of the 12AX7's 0.46 pF and 1.7 pF.
    data = with_change("capacitance_pf", {"input": 0.46, "output": 1.7, "grid_plate": 0.0035})
    tube = tube_type_from_mapping("X1", data)
    assert (tube.c_in_farads, tube.c_out_farads, tube.c_gp_farads) == pytest.approx((0.46e-12, 1.7e-12, 3.5e-15),
                                                                                   rel=1e-15)
    listed = tube_document(tube, ())["capacitance_pf"]
    assert listed == {"input": 0.46, "output": 1.7, "grid_plate": 0.0035}  # exactly the file's numbers
    assert "Cin g k 0.46p" in spice_subcircuit(tube, "triode") and "Cgp g p 0.0035p" in spice_subcircuit(tube, "triode")


def test_current_ratings_are_read_in_milliamperes_held_in_amperes_and_listed_as_written():
    data = with_change("ratings", {"max_plate_volts": 250, "max_plate_watts": 1.0, "max_grid_ma": 0.35})
    tube = tube_type_from_mapping("X1", data)
    assert tube.max_grid_amps == pytest.approx(0.35e-3, rel=1e-15) and tube.max_plate_amps is None
    ratings = tube_document(tube, ())["ratings"]
    assert ratings["max_grid_ma"] == 0.35 and ratings["max_plate_ma"] is None  # the file's number, its unit
    assert tube.sources["max_grid_amps"] == "invented for this test"


@pytest.mark.parametrize("name", sorted(BUILTIN_DATA))
def test_builtin_data_goes_through_the_same_reader(name):
    assert tube_type_from_mapping(name, BUILTIN_DATA[name]) == builtin_catalogue().get(name)


BAD = [
    ("heater.volts", -6.3, "heater.volts", "expected a number greater than zero, got -6.3"),
    ("heater.volts", "six", "heater.volts", "expected a number, got 'six'"),
    ("heater.amps", KeyError, "heater.amps", "missing; expected a number"),
    ("base", "loctal", "base", "expected one of 7-pin miniature, 9-pin noval, octal, got 'loctal'"),
    ("kind", "tetrode", "kind", "expected one of triode, pentode, dual-control, diode, got 'tetrode'"),
    ("sections.0.pins.grid", 9, "sections.0.pins.grid", "pin 9 does not exist; expected 1 to 7"),
    ("sections.0.pins.grid", 3, "sections.0.pins.grid", "pin 3 is already used by heater.pins.0"),
    ("sections.0.pins.cathode", KeyError, "sections.0.pins.cathode",
     "missing; a triode needs pins for cathode, grid, plate"),
    ("sections.0.means", ["dual"], "sections.0.means", "a triode section can do ['single'], got 'dual'"),
    ("sections.0.pins.screen", 2, "sections.0.pins.screen", "unknown key; expected one of: cathode, grid, plate"),
    ("heater.series_volts", 12.6, "heater", "give both series_volts and series_amps, or neither"),
    ("model.equation", "koren-pentode", "model.equation",
     "a triode section takes koren-triode or child-langmuir, got 'koren-pentode'"),
    ("model.mu", KeyError, "model.mu", "missing; expected a number"),
    ("model.g3_zero_volts", -5, "model.g3_zero_volts", "only dual-control sections take a g3 gate"),
    ("ratings.max_screen_watts", 1.0, "ratings.max_screen_watts", "this type has no screen grid; leave it out"),
    ("sources", KeyError, "sources", "no source for base; give sources.base or sources.default "
     "(a datasheet or handbook name, or 'from memory')"),
    ("sources.default", "", "sources.default",
     "expected the name of a datasheet or handbook, or 'from memory', got ''"),
    ("colour", "red", "colour", "unknown key; expected one of: description, kind, base, sections, shared_cathode, "
     "heater, ratings, capacitance_pf, model, sources, notes"),
    ("model.tail_volts", 0.5, "model.tail_volts", "only the koren-triode equation takes it"),
    ("model.vct", 1.0, "model.vct", "only the koren-triode equation takes it"),
    ("notes", "one text", "notes", "expected a list of texts, got 'one text'"),
]


@pytest.mark.parametrize("path, value, field, message", BAD)
def test_bad_custom_types_say_where_and_what(path, value, field, message):
    with pytest.raises(CatalogueDataError, match=f"^{re.escape(f'{field}: {message}')}$") as info:
        tube_type_from_mapping("X1", with_change(path, value))
    assert info.value.field == field
    assert info.value.message == message


def test_series_heater_must_be_twice_the_volts_and_half_the_amps():
    data = with_change("heater", {"volts": 6.3, "amps": 0.3, "pins": [3, 4], "centre_tap": 5,
                                  "series_volts": 12.0, "series_amps": 0.15})
    with pytest.raises(CatalogueDataError, match="twice"):
        tube_type_from_mapping("X1", data)
    data["heater"]["series_volts"] = 12.6
    assert tube_type_from_mapping("X1", data).heater_series == (12.6, 0.15)
    del data["heater"]["centre_tap"]
    with pytest.raises(CatalogueDataError,
                       match=r"^heater\.centre_tap: missing; a series option needs the centre-tap pin$") as info:
        tube_type_from_mapping("X1", data)
    assert info.value.field == "heater.centre_tap"


def test_dual_control_custom_type_needs_a_g3_gate():
    data = copy.deepcopy(BUILTIN_DATA["6AS6"])
    del data["model"]["g3_zero_volts"]
    with pytest.raises(CatalogueDataError, match=r"^model\.g3_zero_volts: missing; expected a number$") as info:
        tube_type_from_mapping("MY6AS6", data)
    assert info.value.field == "model.g3_zero_volts"


def test_shared_cathode_rules():
    data = copy.deepcopy(BUILTIN_DATA["6J6"])
    data["sections"][1]["pins"]["cathode"] = 2
    with pytest.raises(CatalogueDataError, match="different cathode"):
        tube_type_from_mapping("MY6J6", data)
    data = copy.deepcopy(BUILTIN_DATA["6J6"])
    data["shared_cathode"] = False
    with pytest.raises(CatalogueDataError, match="already used"):
        tube_type_from_mapping("MY6J6", data)


def test_with_custom_adds_and_sorts():
    cat = builtin_catalogue().with_custom([tube_type_from_mapping("AA1", EXAMPLE)])
    assert cat.names()[-1] == "AA1" and "12AU7" in cat and "aa1" in cat
    assert builtin_catalogue().names() != cat.names()
