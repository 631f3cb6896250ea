"""``tubeplan tubes``: the catalogue listing, plain and JSON, with a stock file's custom types."""

import json

import pytest

from planner.catalogue import builtin_catalogue, cutoff_grid_volts
from planner.cli import main

# Invented fixture: a stock file with one invented custom type.
STOCK = """\
supplies:
  plate: {volts: 200, max_ma: 100}
  bias: {volts: -90, max_ma: 20}
  heater:
    - {id: H1, volts: 6.3, max_amps: 3}
tubes:
  12AU7: {count: 2}
  MY-TRIODE: {count: 1}
diodes: solid-state
custom_types:
  MY-TRIODE:
    kind: triode
    base: 7-pin miniature
    sections:
      - pins: {plate: 1, grid: 6, cathode: 7}
    heater: {volts: 6.3, amps: 0.15, pins: [3, 4]}
    ratings: {max_plate_volts: 250, max_plate_watts: 1.0}
    model: {equation: child-langmuir, mu: 20, perveance: 0.001}
    sources: {default: invented for this test}
"""


def test_tubes_lists_every_type_with_a_caution(capsys):
    assert main(["tubes"]) == 0
    out = capsys.readouterr().out
    for name in builtin_catalogue().names():
        assert name in out
    assert "6.3 V 0.3 A / 12.6 V 0.15 A" in out
    assert "can kill" in out


def test_tubes_json_has_every_value_and_source(capsys):
    assert main(["tubes", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert [t["name"] for t in doc["types"]] == list(builtin_catalogue().names())
    au7 = next(t for t in doc["types"] if t["name"] == "12AU7")
    assert au7["heater"]["series_volts"] == 12.6 and au7["sections"][0]["pins"]["plate"] == 6
    assert au7["sources"]["heater.volts"].startswith("Brimar")


def test_tubes_with_stock_adds_custom_types(tmp_path, capsys):
    stock = tmp_path / "stock.yaml"
    stock.write_text(STOCK)
    assert main(["tubes", "--stock", str(stock)]) == 0
    assert "MY-TRIODE" in capsys.readouterr().out


def test_bad_custom_type_is_an_input_error(tmp_path, capsys):
    stock = tmp_path / "stock.yaml"
    stock.write_text(STOCK.replace("amps: 0.15", "amps: -0.15"))
    assert main(["tubes", "--stock", str(stock)]) == 2
    err = capsys.readouterr().err
    assert f"{stock}:" in err and "heater.amps" in err and "greater than zero" in err


def test_tubes_names_the_conservative_choices_and_the_types_from_memory(capsys):
    assert main(["tubes"]) == 0
    out = capsys.readouterr().out
    assert "Where sources disagree" in out
    assert "6SN7: plate dissipation: 3.5 W" in out and "5.0 W" in out
    assert "12AX7: output capacitance: 0.46 pF" in out and "0.33 pF" in out
    assert "6J6: plate/grid pairing" in out
    assert "Models from memory (no source read): 5915, 6AK5, 6AL5, 6AS6, 6AU6, 6CS6" in out


def test_tubes_json_gives_cutoff_at_the_stock_supply(tmp_path, capsys):
    stock = tmp_path / "stock.yaml"
    stock.write_text(STOCK)
    assert main(["tubes", "--json", "--stock", str(stock)]) == 0
    doc = {t["name"]: t for t in json.loads(capsys.readouterr().out)["types"]}
    au7 = doc["12AU7"]
    # The stock's plate supply, nominal and 5 % up; the catalogue's own cut-off (10 uA) there.
    assert [c["plate_volts"] for c in au7["cutoff"]] == [200.0, 210.0]
    for c in au7["cutoff"]:
        expected = cutoff_grid_volts(builtin_catalogue().get("12AU7"), plate_volts=c["plate_volts"])
        assert c["grid"] == pytest.approx(expected, abs=0.01) and c["grid3"] is None
    assert doc["6AS6"]["cutoff"][0]["grid3"] < 0 and doc["6AS6"]["model_from_memory"] is True
    assert doc["6AL5"]["cutoff"] == [] and doc["12AU7"]["model_from_memory"] is False
    assert any("0.46 pF" in n for n in doc["12AX7"]["notes"])
