"""Human and machine listings of a catalogue (``tubeplan tubes``)."""

from __future__ import annotations

from collections import Counter

from planner.units import as_written, milliamps, picofarads

from .custom import CAP_KEYS, RATING_FIELDS, RATING_KEYS, SOURCE_PATHS
from .models import CUTOFF_AMPS, cutoff_grid_volts
from .types import Catalogue, TubeType

LISTING_PLATE_VOLTS = (150.0, 250.0)
"""Plate voltages of the cut-off figures when no supply is given."""

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
    notes = [f"  {t.name}: {note}" for t in (catalogue.get(n) for n in catalogue.names()) for note in t.notes]
    memory = [n for n in catalogue.names() if catalogue.get(n).model_from_memory]
    text = table
    if notes:
        text += "\n\nWhere sources disagree (the design keeps the conservative value):\n" + "\n".join(notes)
    if memory:
        text += (f"\n\nModels from memory (no source read): {', '.join(memory)}; plans with them carry a "
                 "wider worst-case allowance (docs/electrical.md).")
    return f"{text}\n\n{CAUTION}\n"


def cutoff_figures(tube: TubeType, plate_volts: float) -> dict | None:
    """Grid voltages (to cathode) where the plate current falls to 10 uA, at ``plate_volts``.

    Screen (if any) at the plate voltage or its rating, whichever is lower;
    the other control grid at 0 V. None for a diode type. Cost: a bisection
    per grid (``cutoff_grid_volts``).
    """
    if not tube.amplifying_sections:
        return None
    screen = None
    if tube.model.equation == "koren-pentode":
        screen = min(plate_volts, tube.max_screen_volts or plate_volts)

    def cut(grid3: bool) -> float | None:
        try:
            return round(cutoff_grid_volts(tube, plate_volts=plate_volts, screen_volts=screen, grid3=grid3), 2)
        except ValueError:
            return None
    return {"plate_volts": plate_volts, "screen_volts": screen, "threshold_amps": CUTOFF_AMPS,
            "grid": cut(False), "grid3": cut(True) if tube.model.g3_zero_volts is not None else None}


def _rating(tube: TubeType, key: str) -> float | None:
    """The rating under its file key ``key``, in the file's unit (mA for currents), as written."""
    value = getattr(tube, RATING_FIELDS[key])
    return value if value is None or RATING_FIELDS[key] == key else as_written(milliamps(value))


def tube_document(tube: TubeType, plate_volts: tuple[float, ...] = LISTING_PLATE_VOLTS) -> dict:
    """Every value of a type as plain JSON-ready data, with its sources keyed by field path.

    ``cutoff``: ``cutoff_figures`` at each of ``plate_volts`` (a plan's
    rails, or 150 V and 250 V).
    """
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
        "ratings": {key: _rating(tube, key) for key in RATING_KEYS},
        "capacitance_pf": {key: None if getattr(tube, field) is None else as_written(picofarads(getattr(tube, field)))
                           for key, field in CAP_KEYS.items()},
        "model": {k: v for k, v in vars(tube.model).items() if v is not None},
        "sources": {SOURCE_PATHS[k]: v for k, v in tube.sources.items()},
        "notes": list(tube.notes),
        "model_from_memory": tube.model_from_memory,
        "cutoff": [c for v in plate_volts if (c := cutoff_figures(tube, v)) is not None],
    }


def catalogue_document(catalogue: Catalogue, plate_volts: tuple[float, ...] = LISTING_PLATE_VOLTS) -> dict:
    """The whole catalogue as JSON-ready data: {"schema": 1, "types": [...], "caution": ...}.

    Cut-off figures at ``plate_volts`` (``tube_document``).
    """
    return {"schema": 1, "types": [tube_document(catalogue.get(n), plate_volts) for n in catalogue.names()],
            "caution": CAUTION}
