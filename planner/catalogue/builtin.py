"""The built-in tube catalogue, written in the custom-type format.

Each entry goes through ``tube_type_from_mapping`` like a user's own type.
Sources name the datasheet or handbook a value was read from; "from memory"
marks values recalled rather than read. Model parameters were fitted
(benchmarks/fit_koren.py) to the typical operating points of the datasheet
named in ``sources.model``.
"""

from __future__ import annotations

from functools import cache

from .custom import tube_type_from_mapping
from .types import Catalogue, FrozenMap

_NOVAL_DUAL_TRIODE_PINS = [
    {"pins": {"plate": 6, "grid": 7, "cathode": 8}},
    {"pins": {"plate": 1, "grid": 2, "cathode": 3}},
]
_NOVAL_CT_HEATER = {"pins": [4, 5], "centre_tap": 9}

BUILTIN_DATA = {
    "12AU7": {
        "description": "medium-mu dual triode",
        "kind": "triode",
        "base": "9-pin noval",
        "sections": _NOVAL_DUAL_TRIODE_PINS,
        "heater": {**_NOVAL_CT_HEATER, "volts": 6.3, "amps": 0.3, "series_volts": 12.6, "series_amps": 0.15},
        "ratings": {"max_plate_volts": 300, "max_plate_watts": 2.75, "max_heater_cathode_volts": 200},
        "capacitance_pf": {"input": 1.6, "output": 0.5, "grid_plate": 1.5},
        "model": {"equation": "koren-triode", "mu": 21.5, "ex": 1.3, "kg1": 1180, "kp": 84, "kvb": 300,
                  "grid_perveance": 0.0005},
        "sources": {"default": "from memory"},
    },
}


@cache
def builtin_catalogue() -> Catalogue:
    """The built-in catalogue (every entry checked by ``tube_type_from_mapping``)."""
    return Catalogue(FrozenMap({name: tube_type_from_mapping(name, data)
                                for name, data in sorted(BUILTIN_DATA.items())}))
