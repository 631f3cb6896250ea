"""``tubeplan tubes``: the catalogue listing, plain and JSON, with a stock file's custom types."""

import json

from planner.catalogue import builtin_catalogue
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
