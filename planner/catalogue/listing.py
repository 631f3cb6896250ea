"""Human and machine listings of a catalogue (``tubeplan tubes``)."""

from __future__ import annotations

from collections import Counter

from .custom import SOURCE_PATHS
from .types import Catalogue, TubeType

CAUTION = ("Caution: tube plate supplies are high voltage and can kill; heaters carry amperes and "
           "glass runs hot. Values marked 'from memory' were not read from a datasheet: check them "
           "against the manufacturer's data before you rely on them.")

_MULTIPLE = {1: "", 2: "dual ", 3: "triple ", 4: "quad "}


def kind_text(tube: TubeType) -> str:
    """Short kind of the type, e.g. "dual triode", "dual-control", "dual diode"."""
    kind = tube.sections[0].kind
    return f"{_MULTIPLE.get(len(tube.sections), f'{len(tube.sections)} x ')}{kind}"


def sections_text(tube: TubeType) -> str:
    """What the sections can do, e.g. "2 x single" or "1 x single/dual" or "2 x diode"."""
    means = "/".join(tube.sections[0].means) or "diode"
    return f"{len(tube.sections)} x {means}"


def heater_text(tube: TubeType) -> str:
    """Heater ratings, e.g. "6.3 V 0.3 A / 12.6 V 0.15 A"."""
    text = f"{tube.heater_volts:g} V {tube.heater_amps:g} A"
    if tube.heater_series is not None:
        text += f" / {tube.heater_series[0]:g} V {tube.heater_series[1]:g} A"
    return text


def main_source(tube: TubeType) -> str:
    """The most used datasheet of the type's data (model aside), with the count from memory."""
    data = [v for k, v in tube.sources.items() if k != "model"]
    memory = data.count("from memory")
    read = Counter(v for v in data if v != "from memory")
    if not read:
        return f"from memory ({memory} of {len(data)} values)"
    head = sorted(read.items(), key=lambda kv: (-kv[1], kv[0]))[0][0]
    return f"{head}; {memory} of {len(data)} values from memory" if memory else head


def format_catalogue(catalogue: Catalogue) -> str:
    """A plain-text table of every type (sorted by name), then the caution."""
    rows = [(t.name, kind_text(t), sections_text(t), heater_text(t), t.base, main_source(t))
            for t in (catalogue.get(n) for n in catalogue.names())]
    from tabulate import tabulate  # here: reading a stock file (any command) needs no table layout

    table = tabulate(rows, headers=("type", "kind", "sections", "heater", "base", "source"),
                     tablefmt="simple")
    return f"{table}\n\n{CAUTION}\n"


def tube_document(tube: TubeType) -> dict:
    """Every value of a type as plain JSON-ready data, with its sources keyed by field path."""
    return {
        "name": tube.name,
        "description": tube.description,
        "kind": kind_text(tube),
        "base": tube.base,
        "shared_cathode": tube.shared_cathode,
        "sections": [{"index": s.index, "kind": s.kind, "means": list(s.means), "pins": dict(s.pins)}
                     for s in tube.sections],
        "heater": {"volts": tube.heater_volts, "amps": tube.heater_amps, "pins": list(tube.heater_pins),
                   "centre_tap": tube.heater_centre_tap_pin,
                   "series_volts": tube.heater_series[0] if tube.heater_series else None,
                   "series_amps": tube.heater_series[1] if tube.heater_series else None},
        "ratings": {k: getattr(tube, k) for k in ("max_plate_volts", "max_plate_watts", "max_plate_ma",
                                                  "max_screen_volts", "max_screen_watts", "max_grid_ma",
                                                  "max_heater_cathode_volts")},
        "capacitance_pf": {"input": tube.c_in_pf, "output": tube.c_out_pf, "grid_plate": tube.c_gp_pf},
        "model": {k: v for k, v in vars(tube.model).items() if v is not None},
        "sources": {SOURCE_PATHS[k]: v for k, v in tube.sources.items()},
    }


def catalogue_document(catalogue: Catalogue) -> dict:
    """The whole catalogue as JSON-ready data: {"schema": 1, "types": [...], "caution": ...}."""
    return {"schema": 1, "types": [tube_document(catalogue.get(n)) for n in catalogue.names()],
            "caution": CAUTION}
