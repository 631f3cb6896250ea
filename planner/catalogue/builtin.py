"""The built-in tube catalogue, written in the custom-type format.

Each entry goes through ``tube_type_from_mapping`` like a user's own type.
``sources`` names the datasheet or handbook a value was read from; "from
memory" marks values recalled from the manufacturers' data but not read
while writing this file. Model parameters were fitted by
benchmarks/fit_koren.py: the 12AT7, 12AU7 and 12AX7 to the published plate
curves of the ECC81, ECC82 and ECC83 (all but two held-out curves each),
the others to the typical operating points named in ``sources.model``.
``notes`` say which value a type keeps where sources disagree (the
conservative one for design). The 7-pin pentagrid converter of broadcast receivers is
deliberately not in this catalogue.
"""

from __future__ import annotations

from functools import cache

from .custom import tube_type_from_mapping
from .types import Catalogue, FrozenMap

MEMORY = "from memory"

# 9-pin noval dual triode, basing 9A: unit 1 on pins 6-7-8, unit 2 on 1-2-3,
# heater halves on 4 and 5 with the centre tap on 9.
NOVAL_DUAL_TRIODE = [
    {"pins": {"plate": 6, "grid": 7, "cathode": 8}},
    {"pins": {"plate": 1, "grid": 2, "cathode": 3}},
]
NOVAL_HEATER_PINS = {"pins": [4, 5], "centre_tap": 9}

# 7-pin miniature heptode basing 7CH: g1 on 7, g3 on 1, g2 and g4 on 6,
# cathode and g5 on 2, plate 5, heater 3-4.
HEPTODE_7CH = [{"pins": {"plate": 5, "grid": 7, "grid3": 1, "screen": 6, "cathode": 2}}]

GRID_DIODE = 5e-4
"""Grid-cathode perveance (A/V^1.5) for a positive grid: about 0.5 mA at +1 V,
the order of Koren's typical 2 kilohm grid resistance (from memory)."""

BRIMAR_12AU7 = "Brimar 12AU7 application report VAD/513.4 (1950)"
SYLVANIA_12AX7 = "Sylvania 12AX7 data sheet, as tabulated in the Wikipedia 12AX7 article"
ECC81_PAGE = "vacuumtubes.io ECC81/12AT7 data summary"
EH_6SN7 = "Electro-Harmonix 6SN7EH data sheet"
RU_6SN7 = "RCA 6SN7 class A1 data as tabulated in the Russian Wikipedia 6SN7 article"
OP316_5965 = "op316.com 5965 data page (tube manual values)"
COMPILATION = ("Muhaarnox/AVT5229_TubeTester_GUI@7c13d3c8 external_sources/lamp_datasheets/{}.md "
               "(secondary compilation of Philips/RCA/Mullard sheets, low confidence)")
JJ_ECC83S = "JJ ECC83S data sheet pin table (quoted at docs.architolk.nl/ac5/12AX7)"
CURVES = ("the {} plate curves digitized from a manufacturer's datasheet in "
          "andmarti1424/loadline_plotter@6e7038f valves_data.csv")


def curve_fit_source(curves: str, held_out: str) -> str:
    """The source line of a model fitted by ``benchmarks/fit_koren.py --curves``."""
    return (f"fitted by benchmarks/fit_koren.py --curves (least squares on log current over points of "
            f"0.5 mA and more, the 0 V curve weighted twice, plus the 10 uA cut-off) to {CURVES.format(curves)}, "
            f"curves at {held_out} held out; started from Koren's published Tube.lib set; tail_volts is our "
            "addition")


BUILTIN_DATA = {
    "12AU7": {
        "description": "medium-mu dual triode (ECC82)",
        "kind": "triode",
        "base": "9-pin noval",
        "sections": NOVAL_DUAL_TRIODE,
        "heater": {**NOVAL_HEATER_PINS, "volts": 6.3, "amps": 0.3, "series_volts": 12.6, "series_amps": 0.15},
        "ratings": {"max_plate_volts": 300, "max_plate_watts": 2.75, "max_heater_cathode_volts": 250},
        "capacitance_pf": {"input": 1.6, "output": 0.5, "grid_plate": 1.5},
        "model": {"equation": "koren-triode",
                  "mu": 18.09, "ex": 1.72, "kg1": 5755, "kp": 91.36, "kvb": 50.37, "tail_volts": 0.8173, "vct": 1.969,
                  "grid_perveance": GRID_DIODE},
        "sources": {"default": BRIMAR_12AU7, "capacitance_pf": COMPILATION.format("12AU7"),
                    "model": curve_fit_source("ECC82", "-6 V and -14 V")},
    },
    "12AX7": {
        "description": "high-mu dual triode (ECC83)",
        "kind": "triode",
        "base": "9-pin noval",
        "sections": NOVAL_DUAL_TRIODE,
        "heater": {**NOVAL_HEATER_PINS, "volts": 6.3, "amps": 0.3, "series_volts": 12.6, "series_amps": 0.15},
        "ratings": {"max_plate_volts": 300, "max_plate_watts": 1.0, "max_heater_cathode_volts": 180},
        "capacitance_pf": {"input": 1.6, "output": 0.46, "grid_plate": 1.7},
        "model": {"equation": "koren-triode",
                  "mu": 100.8, "ex": 0.9443, "kg1": 815.4, "kp": 473.9, "kvb": 77.35, "tail_volts": 2.426, "vct": 1.115,
                  "grid_perveance": GRID_DIODE},
        "sources": {"default": SYLVANIA_12AX7, "sections": JJ_ECC83S, "heater.pins": JJ_ECC83S,
                    "heater.centre_tap": JJ_ECC83S, "ratings.max_heater_cathode_volts": MEMORY,
                    "capacitance_pf.input": COMPILATION.format("12AX7"),
                    "capacitance_pf.output": MEMORY, "capacitance_pf.grid_plate": MEMORY,
                    "model": curve_fit_source("ECC83", "-0.5 V and -1.5 V")},
        "notes": ["output capacitance: 0.46 pF (from memory, RCA) kept for design against 0.33 pF "
                  "(Philips ECC83 column of the compilation): the larger value gives the slower, "
                  "conservative timing; grid-plate 1.7 pF kept against 1.6 pF for the same reason"],
    },
    "12AT7": {
        "description": "high-mu dual triode for high current (ECC81)",
        "kind": "triode",
        "base": "9-pin noval",
        "sections": NOVAL_DUAL_TRIODE,
        "heater": {**NOVAL_HEATER_PINS, "volts": 6.3, "amps": 0.3, "series_volts": 12.6, "series_amps": 0.15},
        "ratings": {"max_plate_volts": 300, "max_plate_watts": 2.5, "max_heater_cathode_volts": 90},
        "capacitance_pf": {"input": 2.2, "output": 0.5, "grid_plate": 1.5},
        "model": {"equation": "koren-triode",
                  "mu": 88.4, "ex": 0.8755, "kg1": 157, "kp": 267.6, "kvb": 16550,
                  "tail_volts": 0.01932, "vct": -0.9651,
                  "grid_perveance": GRID_DIODE},
        "sources": {"default": ECC81_PAGE, "ratings.max_heater_cathode_volts": MEMORY,
                    "capacitance_pf.input": COMPILATION.format("12AT7"),
                    "capacitance_pf.grid_plate": COMPILATION.format("12AT7"),
                    "capacitance_pf.output": MEMORY,
                    "model": curve_fit_source("ECC81", "-1 V and -5 V")},
        "notes": ["output capacitance: 0.5 pF (from memory) kept for design against 0.45 pF (compilation): "
                  "the larger value gives the slower, conservative timing",
                  "plate resistance: the model follows the ECC81 curves, whose slope at 250 V -2 V gives "
                  "11.4 kilohm against 11 kilohm (data summaries) and 10.9 kilohm (compilation); the design "
                  "keeps the model's higher figure (the weaker pull-down, conservative)"],
    },
    "5965": {
        "description": "computer dual triode, medium-high mu, long life in cut-off",
        "kind": "triode",
        "base": "9-pin noval",
        "sections": NOVAL_DUAL_TRIODE,
        "heater": {**NOVAL_HEATER_PINS, "volts": 6.3, "amps": 0.45,
                   "series_volts": 12.6, "series_amps": 0.225},
        "ratings": {"max_plate_volts": 330, "max_plate_watts": 2.4, "max_heater_cathode_volts": 100},
        "capacitance_pf": {"input": 4.0, "output": 0.5, "grid_plate": 3.0},
        "model": {"equation": "koren-triode",
                  "mu": 47.9, "ex": 1.295, "kg1": 359.5, "kp": 208.4, "kvb": 297.3,
                  "grid_perveance": GRID_DIODE},
        "sources": {"default": OP316_5965,
                    "model": "fitted to the 5965 point 150 V 220 ohm 8.5 mA, gm 6.7 mA/V, mu 47, "
                             f"rp 6.3 kilohm ({OP316_5965})"},
    },
    "6SN7": {
        "description": "medium-mu dual triode, octal (6SN7GT ratings)",
        "kind": "triode",
        "base": "octal",
        "sections": [
            {"pins": {"grid": 4, "plate": 5, "cathode": 6}},
            {"pins": {"grid": 1, "plate": 2, "cathode": 3}},
        ],
        "heater": {"volts": 6.3, "amps": 0.6, "pins": [7, 8]},
        "ratings": {"max_plate_volts": 450, "max_plate_watts": 3.5, "max_heater_cathode_volts": 200},
        "capacitance_pf": {"input": 3.0, "output": 1.2, "grid_plate": 4.0},
        "model": {"equation": "koren-triode",
                  "mu": 21.06, "ex": 1.332, "kg1": 1432, "kp": 158.8, "kvb": 269.6,
                  "grid_perveance": GRID_DIODE},
        "sources": {"default": MEMORY, "sections": EH_6SN7, "heater": EH_6SN7,
                    "ratings.max_plate_volts": COMPILATION.format("6SN7"),
                    "model": f"fitted by benchmarks/fit_koren.py to the point 250 V -8 V 9 mA ({RU_6SN7}) and "
                             "every other Sylvania 6SN7 point of Koren's Tuparam file 6SN7Sylv.m (as converted "
                             "in Muhaarnox/AVT5229_TubeTester_GUI@7c13d3c8), the rest held out"},
        "notes": ["plate dissipation: 3.5 W (6SN7GT, from memory) kept for design against 5.0 W "
                  "(RCA 6SN7GTB column of a low-confidence compilation): the lower rating is the "
                  "conservative one"],
    },
    "6J6": {
        "description": "dual triode with a common cathode, 7-pin miniature",
        "kind": "triode",
        "base": "7-pin miniature",
        "shared_cathode": True,
        "sections": [
            {"pins": {"plate": 2, "grid": 5, "cathode": 7}},
            {"pins": {"plate": 1, "grid": 6, "cathode": 7}},
        ],
        "heater": {"volts": 6.3, "amps": 0.45, "pins": [3, 4]},
        "ratings": {"max_plate_volts": 300, "max_plate_watts": 1.5, "max_heater_cathode_volts": 100},
        "capacitance_pf": {"input": 2.2, "output": 0.4, "grid_plate": 1.6},
        "model": {"equation": "koren-triode",
                  "mu": 39.1, "ex": 1.147, "kg1": 444.3, "kp": 187.8, "kvb": 303.3,
                  "grid_perveance": GRID_DIODE},
        "sources": {"default": MEMORY, "heater": COMPILATION.format("ECC91"),
                    "ratings.max_plate_volts": COMPILATION.format("ECC91"),
                    "ratings.max_plate_watts": COMPILATION.format("ECC91"),
                    "model": "fitted to the 6J6 point 100 V, 50 ohm common cathode resistor, "
                             "8.5 mA per unit, gm 5.3 mA/V, mu 38 (RCA, recalled; the same figures in "
                             + COMPILATION.format("ECC91") + ", Mullard ECC91 column)"},
        "notes": ["plate/grid pairing: the catalogue pairs plate 2 with grid 5 and plate 1 with grid 6 "
                  "(basing 7BF, from memory); the ECC91 compilation pairs plate 1 with grid 2 and plate 5 "
                  "with grid 6. Unresolved: check the pairing on your tube's datasheet before wiring"],
    },
    "6AU6": {
        "description": "sharp cut-off pentode, suppressor on its own pin",
        "kind": "pentode",
        "base": "7-pin miniature",
        "sections": [{"pins": {"grid": 1, "grid3": 2, "plate": 5, "screen": 6, "cathode": 7}}],
        "heater": {"volts": 6.3, "amps": 0.3, "pins": [3, 4]},
        "ratings": {"max_plate_volts": 300, "max_plate_watts": 3.5, "max_screen_volts": 150,
                    "max_screen_watts": 0.75, "max_heater_cathode_volts": 200},
        "capacitance_pf": {"input": 5.5, "output": 5.0, "grid_plate": 0.0035},
        "model": {"equation": "koren-pentode",
                  "mu": 56.4, "ex": 1.137, "kg1": 609.8, "kp": 121, "kvb": 7.706,
                  "kg2": 492.7, "grid_perveance": GRID_DIODE},
        "sources": {"default": MEMORY,
                    "model": "fitted to the RCA 6AU6 typical operation points (100/100 V 150 ohm "
                             "5.0 mA; 250/125 V 100 ohm 7.6 mA; 250/150 V 68 ohm 10.6 mA), "
                             "points from memory"},
    },
    "6AK5": {
        "description": "sharp cut-off pentode, high transconductance (cathode also on pin 7)",
        "kind": "pentode",
        "base": "7-pin miniature",
        "sections": [{"pins": {"grid": 1, "cathode": 2, "plate": 5, "screen": 6}}],
        "heater": {"volts": 6.3, "amps": 0.175, "pins": [3, 4]},
        "ratings": {"max_plate_volts": 180, "max_plate_watts": 1.7, "max_screen_volts": 140,
                    "max_screen_watts": 0.5, "max_heater_cathode_volts": 90},
        "capacitance_pf": {"input": 4.0, "output": 2.8, "grid_plate": 0.02},
        "model": {"equation": "koren-pentode",
                  "mu": 35.7, "ex": 1.379, "kg1": 771.1, "kp": 112, "kvb": 8.909,
                  "kg2": 793.2, "grid_perveance": GRID_DIODE},
        "sources": {"default": MEMORY,
                    "model": "fitted to the RCA 6AK5 typical operation points (120/120 V 200 ohm "
                             "7.5 mA; 180/120 V 200 ohm 7.7 mA), points from memory"},
    },
    "6AS6": {
        "description": "sharp cut-off pentode for suppressor-grid gating (g1 and g3 both control)",
        "kind": "dual-control",
        "base": "7-pin miniature",
        "sections": [{"pins": {"grid": 1, "cathode": 2, "plate": 5, "screen": 6, "grid3": 7}}],
        "heater": {"volts": 6.3, "amps": 0.175, "pins": [3, 4]},
        "ratings": {"max_plate_volts": 180, "max_plate_watts": 1.0, "max_screen_volts": 140,
                    "max_screen_watts": 0.6, "max_heater_cathode_volts": 100},
        "capacitance_pf": {"input": 4.0, "output": 3.0, "grid_plate": 0.02},
        "model": {"equation": "koren-pentode",
                  "mu": 37.1, "ex": 1.335, "kg1": 846.6, "kp": 100.3, "kvb": 20.85,
                  "kg2": 744.1, "g3_zero_volts": -13.39, "g3_ex": 1.592, "grid_perveance": GRID_DIODE},
        "sources": {"default": MEMORY,
                    "model": "fitted to the RCA 6AS6 typical operation (120 V plate and screen, g1 "
                             "-2 V, g3 0 V: 5.2 mA, screen 3.5 mA) and g3 cut-off near -15 V, "
                             "points from memory"},
    },
    "6CS6": {
        "description": "heptode with two control grids (g1, g3) for gating and sync separation",
        "kind": "dual-control",
        "base": "7-pin miniature",
        "sections": HEPTODE_7CH,
        "heater": {"volts": 6.3, "amps": 0.3, "pins": [3, 4]},
        "ratings": {"max_plate_volts": 300, "max_plate_watts": 1.1, "max_screen_volts": 100,
                    "max_screen_watts": 1.1, "max_heater_cathode_volts": 200},
        "capacitance_pf": {"input": 5.5, "output": 7.5, "grid_plate": 0.05},
        "model": {"equation": "koren-pentode",
                  "mu": 12.93, "ex": 1.222, "kg1": 3157, "kp": 101.4, "kvb": 10.54,
                  "kg2": 504.4, "g3_zero_volts": -2.93, "g3_ex": 1.59, "grid_perveance": GRID_DIODE},
        "sources": {"default": MEMORY,
                    "model": "fitted to Sylvania/RCA 6CS6 typical operation (100 V plate, 30 V "
                             "screen, g1 -1 V, g3 0 V: 1.1 mA) and g1 and g3 cut-off near -3 V, "
                             "points from memory"},
    },
    "5915": {
        "description": "computer heptode with two control grids (g1, g3) for gating",
        "kind": "dual-control",
        "base": "7-pin miniature",
        "sections": HEPTODE_7CH,
        "heater": {"volts": 6.3, "amps": 0.3, "pins": [3, 4]},
        "ratings": {"max_plate_volts": 300, "max_plate_watts": 1.0, "max_screen_volts": 110,
                    "max_screen_watts": 1.0, "max_heater_cathode_volts": 100},
        "capacitance_pf": {"input": 5.5, "output": 7.5, "grid_plate": 0.3},
        "model": {"equation": "koren-pentode",
                  "mu": 38.31, "ex": 1.494, "kg1": 1262, "kp": 114, "kvb": 10.21,
                  "kg2": 566.6, "g3_zero_volts": -3.577, "g3_ex": 1.619, "grid_perveance": GRID_DIODE},
        "sources": {"default": MEMORY,
                    "model": "fitted to GE 5915 typical operation (150 V plate, 75 V screen, g1 and "
                             "g3 at 0 V: 5.6 mA) and g1 and g3 cut-off near -4 V, points from memory"},
    },
    "6AL5": {
        "description": "dual diode, separate cathodes (pin 6: internal shield)",
        "kind": "diode",
        "base": "7-pin miniature",
        "sections": [
            {"pins": {"plate": 7, "cathode": 1}},
            {"pins": {"plate": 2, "cathode": 5}},
        ],
        "heater": {"volts": 6.3, "amps": 0.3, "pins": [3, 4]},
        "ratings": {"max_plate_volts": 330, "max_plate_ma": 9, "max_heater_cathode_volts": 330},
        "model": {"equation": "diode", "perveance": 1.2e-3},
        "sources": {"default": MEMORY},
    },
}


@cache
def builtin_catalogue() -> Catalogue:
    """The built-in catalogue (every entry checked by ``tube_type_from_mapping``)."""
    return Catalogue(FrozenMap({name: tube_type_from_mapping(name, data)
                                for name, data in sorted(BUILTIN_DATA.items())}))
