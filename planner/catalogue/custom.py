"""Reading a tube type from a plain mapping (the ``custom_types`` format).

The format is documented in docs/catalogue.md; the built-in catalogue is
written in the same format and goes through the same checks.
"""

from __future__ import annotations

import re
from collections.abc import Mapping

from planner.units import amps_from_milliamps, farads_from_picofarads

from .types import (
    BASES,
    EQUATIONS,
    MEANS,
    SECTION_KINDS,
    CatalogueDataError,
    FrozenMap,
    ModelParams,
    Section,
    TubeType,
)

ROLES = {
    "triode": ({"plate", "grid", "cathode"}, set()),
    "pentode": ({"plate", "grid", "screen", "cathode"}, {"grid3"}),
    "dual-control": ({"plate", "grid", "grid3", "screen", "cathode"}, set()),
    "diode": ({"plate", "cathode"}, set()),
}
"""Section kind -> (required pin roles, optional pin roles)."""

DEFAULT_MEANS = {"triode": ("single",), "pentode": ("single",),
                 "dual-control": ("single", "dual"), "diode": ()}

MODEL_KEYS = {
    "koren-triode": ("mu", "ex", "kg1", "kp", "kvb"),
    "koren-pentode": ("mu", "ex", "kg1", "kp", "kvb", "kg2"),
    "child-langmuir": ("mu", "perveance"),
    "diode": ("perveance",),
}
OPTIONAL_MODEL_KEYS = ("grid_perveance", "g3_zero_volts", "g3_ex", "tail_volts", "vct")
EQUATIONS_FOR_KIND = {"triode": ("koren-triode", "child-langmuir"),
                      "pentode": ("koren-pentode",), "dual-control": ("koren-pentode",),
                      "diode": ("diode",)}

TOP_KEYS = ("description", "kind", "base", "sections", "shared_cathode", "heater",
            "ratings", "capacitance_pf", "model", "sources", "notes")
HEATER_KEYS = ("volts", "amps", "pins", "centre_tap", "series_volts", "series_amps")
RATING_KEYS = ("max_plate_volts", "max_plate_watts", "max_plate_ma", "max_screen_volts",
               "max_screen_watts", "max_grid_ma", "max_heater_cathode_volts")
RATING_FIELDS = {**{key: key for key in RATING_KEYS}, "max_plate_ma": "max_plate_amps", "max_grid_ma": "max_grid_amps"}
"""Key under ``ratings`` -> TubeType field (the file's mA are held in amperes)."""
CAP_KEYS = {"input": "c_in_farads", "output": "c_out_farads", "grid_plate": "c_gp_farads"}
"""Key under ``capacitance_pf`` (picofarads) -> TubeType field (farads)."""

SOURCE_PATHS = {
    "base": "base", "sections": "sections",
    "shared_cathode": "shared_cathode", "heater_volts": "heater.volts",
    "heater_amps": "heater.amps", "heater_pins": "heater.pins",
    "heater_centre_tap_pin": "heater.centre_tap", "heater_series": "heater.series_volts",
    **{field: f"ratings.{key}" for key, field in RATING_FIELDS.items()},
    **{v: f"capacitance_pf.{k}" for k, v in CAP_KEYS.items()},
    "model": "model",
}
"""TubeType field -> the format's dotted path, used to look up its source."""

NAME_RE = re.compile(r"^[A-Za-z0-9][A-Za-z0-9_.\-/]*$")


def _mapping(data, path: str) -> Mapping:
    if not isinstance(data, Mapping):
        raise CatalogueDataError(path, f"expected a mapping of keys to values, got {_kind(data)}")
    return data


def _kind(value) -> str:
    return "nothing" if value is None else type(value).__name__


def _no_extra(data: Mapping, allowed, path: str) -> None:
    for key in sorted(map(str, data)):
        if key not in allowed:
            where = f"{path}.{key}" if path else key
            raise CatalogueDataError(where, f"unknown key; expected one of: {', '.join(allowed)}")


def _number(data: Mapping, key: str, path: str, *, required: bool = True,
            positive: bool = True, allow_zero: bool = False) -> float | None:
    where = f"{path}.{key}" if path else key
    if key not in data or data[key] is None:
        if required:
            raise CatalogueDataError(where, "missing; expected a number")
        return None
    value = data[key]
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise CatalogueDataError(where, f"expected a number, got {value!r}")
    value = float(value)
    if positive and not (value > 0 or (allow_zero and value == 0)):
        bound = "zero or more" if allow_zero else "greater than zero"
        raise CatalogueDataError(where, f"expected a number {bound}, got {value:g}")
    return value


def _pin(value, where: str, pin_count: int) -> int:
    if isinstance(value, bool) or not isinstance(value, int):
        raise CatalogueDataError(where, f"expected a pin number (whole number), got {value!r}")
    if not 1 <= value <= pin_count:
        raise CatalogueDataError(where, f"pin {value} does not exist; expected 1 to {pin_count}")
    return value


def _text(data: Mapping, key: str, path: str, *, required: bool = True) -> str | None:
    where = f"{path}.{key}" if path else key
    value = data.get(key)
    if value is None:
        if required:
            raise CatalogueDataError(where, "missing; expected text")
        return None
    if not isinstance(value, str) or not value.strip():
        raise CatalogueDataError(where, f"expected non-empty text, got {value!r}")
    return value.strip()


def _sections(data: Mapping, pin_count: int) -> tuple[Section, ...]:
    raw = data.get("sections")
    if not isinstance(raw, (list, tuple)) or not raw:
        raise CatalogueDataError("sections", "expected a non-empty list of sections")
    default_kind = data.get("kind")
    out = []
    for i, entry in enumerate(raw, start=1):
        path = f"sections.{i - 1}"
        entry = _mapping(entry, path)
        _no_extra(entry, ("kind", "means", "pins"), path)
        kind = entry.get("kind", default_kind)
        if kind not in SECTION_KINDS:
            raise CatalogueDataError(f"{path}.kind" if "kind" in entry else "kind",
                                     f"expected one of {', '.join(SECTION_KINDS)}, got {kind!r}")
        means = entry.get("means", DEFAULT_MEANS[kind])
        if isinstance(means, str) or not isinstance(means, (list, tuple)):
            raise CatalogueDataError(f"{path}.means", f"expected a list such as [single], got {means!r}")
        allowed = ("single", "dual") if kind == "dual-control" else DEFAULT_MEANS[kind]
        for m in means:
            if m not in MEANS or m not in allowed:
                raise CatalogueDataError(f"{path}.means",
                                         f"a {kind} section can do {list(allowed)}, got {m!r}")
        means = tuple(m for m in MEANS if m in means)
        pins = _mapping(entry.get("pins"), f"{path}.pins")
        required, optional = ROLES[kind]
        _no_extra(pins, tuple(sorted(required | optional)), f"{path}.pins")
        for role in sorted(required):
            if role not in pins:
                raise CatalogueDataError(f"{path}.pins.{role}", f"missing; a {kind} needs pins for "
                                         f"{', '.join(sorted(required))}")
        pins = {role: _pin(p, f"{path}.pins.{role}", pin_count) for role, p in pins.items()}
        out.append(Section(index=i, kind=kind, means=means, pins=FrozenMap(pins)))
    kinds = {s.kind for s in out}
    if len(kinds) > 1:
        raise CatalogueDataError("sections", "all sections of a type must be of one kind "
                                 f"(one model per type), got {', '.join(sorted(kinds))}")
    return tuple(out)


def _heater(data: Mapping, pin_count: int):
    heater = _mapping(data.get("heater"), "heater")
    _no_extra(heater, HEATER_KEYS, "heater")
    volts = _number(heater, "volts", "heater")
    amps = _number(heater, "amps", "heater")
    pins = heater.get("pins")
    if not isinstance(pins, (list, tuple)) or len(pins) != 2:
        raise CatalogueDataError("heater.pins", f"expected a list of the two heater pins, got {pins!r}")
    pins = tuple(_pin(p, f"heater.pins.{i}", pin_count) for i, p in enumerate(pins))
    if pins[0] == pins[1]:
        raise CatalogueDataError("heater.pins", "expected two different pins")
    tap = heater.get("centre_tap")
    tap = None if tap is None else _pin(tap, "heater.centre_tap", pin_count)
    s_volts = _number(heater, "series_volts", "heater", required=False)
    s_amps = _number(heater, "series_amps", "heater", required=False)
    if (s_volts is None) != (s_amps is None):
        raise CatalogueDataError("heater", "give both series_volts and series_amps, or neither")
    series = None
    if s_volts is not None:
        if tap is None:
            raise CatalogueDataError("heater.centre_tap", "missing; a series option needs the centre-tap pin")
        # The two halves of a centre-tapped heater: in series twice the volts, half the amps.
        if abs(s_volts - 2 * volts) > 0.01 * volts:
            raise CatalogueDataError("heater.series_volts",
                                     f"expected twice heater.volts ({2 * volts:g}), got {s_volts:g}")
        if abs(s_amps - amps / 2) > 0.01 * amps:
            raise CatalogueDataError("heater.series_amps",
                                     f"expected half of heater.amps ({amps / 2:g}), got {s_amps:g}")
        series = (s_volts, s_amps)
    return volts, amps, pins, tap, series


def _check_pins(sections, heater_pins, tap, shared_cathode: bool) -> None:
    used: dict[int, str] = {}

    def claim(pin: int, where: str) -> None:
        if pin in used:
            raise CatalogueDataError(where, f"pin {pin} is already used by {used[pin]}")
        used[pin] = where

    for i, p in enumerate(heater_pins):
        claim(p, f"heater.pins.{i}")
    if tap is not None:
        claim(tap, "heater.centre_tap")
    cathodes = {s.pins["cathode"] for s in sections}
    if shared_cathode:
        if len(cathodes) != 1:
            raise CatalogueDataError("shared_cathode", "true, but the sections name different cathode "
                                     f"pins {sorted(cathodes)}; expected one common cathode pin")
        claim(cathodes.pop(), "shared_cathode")
    for s in sections:
        for role, p in s.pins.items():
            if shared_cathode and role == "cathode":
                continue
            claim(p, f"sections.{s.index - 1}.pins.{role}")


def _ratings(data: Mapping, sections):
    ratings = _mapping(data.get("ratings"), "ratings")
    _no_extra(ratings, RATING_KEYS, "ratings")
    has_screen = any("screen" in s.pins for s in sections)
    diodes = all(s.kind == "diode" for s in sections)
    max_plate_ma = _number(ratings, "max_plate_ma", "ratings", required=diodes)
    max_grid_ma = _number(ratings, "max_grid_ma", "ratings", required=False)
    values = {
        "max_plate_volts": _number(ratings, "max_plate_volts", "ratings"),
        "max_plate_watts": _number(ratings, "max_plate_watts", "ratings", required=not diodes),
        "max_plate_amps": None if max_plate_ma is None else amps_from_milliamps(max_plate_ma),
        "max_screen_volts": _number(ratings, "max_screen_volts", "ratings", required=False),
        "max_screen_watts": _number(ratings, "max_screen_watts", "ratings", required=has_screen),
        "max_grid_amps": None if max_grid_ma is None else amps_from_milliamps(max_grid_ma),
        "max_heater_cathode_volts": _number(ratings, "max_heater_cathode_volts", "ratings",
                                            required=False),
    }
    if not has_screen:
        for key in ("max_screen_volts", "max_screen_watts"):
            if values[key] is not None:
                raise CatalogueDataError(f"ratings.{key}", "this type has no screen grid; leave it out")
    return values


def _capacitances(data: Mapping):
    caps = data.get("capacitance_pf")
    if caps is None:
        return {v: None for v in CAP_KEYS.values()}
    caps = _mapping(caps, "capacitance_pf")
    _no_extra(caps, tuple(CAP_KEYS), "capacitance_pf")
    picofarads = {v: _number(caps, k, "capacitance_pf", required=False, allow_zero=True) for k, v in CAP_KEYS.items()}
    return {v: None if pf is None else farads_from_picofarads(pf) for v, pf in picofarads.items()}


def _model(data: Mapping, kind: str) -> ModelParams:
    model = _mapping(data.get("model"), "model")
    equation = model.get("equation")
    if equation not in EQUATIONS:
        raise CatalogueDataError("model.equation",
                                 f"expected one of {', '.join(EQUATIONS)}, got {equation!r}")
    if equation not in EQUATIONS_FOR_KIND[kind]:
        raise CatalogueDataError("model.equation", f"a {kind} section takes "
                                 f"{' or '.join(EQUATIONS_FOR_KIND[kind])}, got {equation!r}")
    keys = MODEL_KEYS[equation]
    _no_extra(model, ("equation", *keys, *OPTIONAL_MODEL_KEYS), "model")
    values = {k: _number(model, k, "model") for k in keys}
    values["grid_perveance"] = _number(model, "grid_perveance", "model", required=False)
    dual = kind == "dual-control"
    values["g3_zero_volts"] = _number(model, "g3_zero_volts", "model", required=dual, positive=False)
    values["g3_ex"] = _number(model, "g3_ex", "model", required=dual)
    if dual and values["g3_zero_volts"] >= 0:
        raise CatalogueDataError("model.g3_zero_volts", "expected a negative voltage (the g3 voltage "
                                 f"where the gating factor reaches zero), got {values['g3_zero_volts']:g}")
    if not dual:
        for key in ("g3_zero_volts", "g3_ex"):
            if values[key] is not None:
                raise CatalogueDataError(f"model.{key}", "only dual-control sections take a g3 gate")
    values["tail_volts"] = _number(model, "tail_volts", "model", required=False)
    values["vct"] = _number(model, "vct", "model", required=False, positive=False)
    for key in ("tail_volts", "vct"):
        if values[key] is not None and equation != "koren-triode":
            raise CatalogueDataError(f"model.{key}", "only the koren-triode equation takes it")
    return ModelParams(equation=equation, **values)


def _sources(data: Mapping, present: dict) -> FrozenMap:
    raw = data.get("sources")
    raw = _mapping(raw, "sources") if raw is not None else {}
    for key in sorted(map(str, raw)):
        if not isinstance(raw[key], str) or not raw[key].strip():
            raise CatalogueDataError(f"sources.{key}", f"expected the name of a datasheet or handbook, "
                                     f"or 'from memory', got {raw[key]!r}")
    known = {"default"} | set(TOP_KEYS) | {p for p in SOURCE_PATHS.values()} | {"heater.series_amps"}
    for key in sorted(map(str, raw)):
        if key not in known:
            raise CatalogueDataError(f"sources.{key}", "unknown key; expected 'default' or a field path "
                                     "such as heater, heater.volts, ratings.max_plate_watts, model")
    out = {}
    for attr, path in sorted(SOURCE_PATHS.items()):
        if present.get(attr) is None:
            continue
        candidates = [path]
        while "." in candidates[-1]:
            candidates.append(candidates[-1].rsplit(".", 1)[0])
        candidates.append("default")
        hit = next((raw[c] for c in candidates if c in raw), None)
        if hit is None:
            keys = [f"sources.{c}" for c in candidates]
            raise CatalogueDataError("sources", f"no source for {path}; give {', '.join(keys[:-1])} or {keys[-1]} "
                                     "(a datasheet or handbook name, or 'from memory')")
        out[attr] = hit.strip()
    return FrozenMap(out)


def tube_type_from_mapping(name: str, data: Mapping) -> TubeType:
    """Build and check a ``TubeType`` from the custom-type format (docs/catalogue.md).

    Raises ``CatalogueDataError(field, message)``: ``field`` is the dotted
    path inside the type ("heater.volts", "sections.1.pins.grid"; list
    positions count from 0, as in the stock reader) and the
    message says what was expected. Checks: known keys only, numbers
    positive, pins within the base and unique (a shared cathode excepted),
    heater series option consistent (twice the volts, half the amps), the
    model equation fits the section kind, every value has a source.
    Cost O(number of pins).
    """
    if not isinstance(name, str) or not NAME_RE.match(name):
        raise CatalogueDataError("name", "expected a type name of letters, digits, '-', '_', '.', '/', "
                                         f"got {name!r}")
    data = _mapping(data, "")
    _no_extra(data, TOP_KEYS, "")
    base = data.get("base")
    if base not in BASES:
        raise CatalogueDataError("base", f"expected one of {', '.join(BASES)}, got {base!r}")
    pin_count = BASES[base]
    if "kind" in data and data["kind"] not in SECTION_KINDS:
        raise CatalogueDataError("kind", f"expected one of {', '.join(SECTION_KINDS)}, got {data['kind']!r}")
    sections = _sections(data, pin_count)
    shared = data.get("shared_cathode", False)
    if not isinstance(shared, bool):
        raise CatalogueDataError("shared_cathode", f"expected true or false, got {shared!r}")
    if shared and len(sections) < 2:
        raise CatalogueDataError("shared_cathode", "true, but the type has only one section")
    volts, amps, heater_pins, tap, series = _heater(data, pin_count)
    _check_pins(sections, heater_pins, tap, shared)
    fields = dict(
        name=name,
        description=_text(data, "description", "", required=False) or name,
        base=base,
        sections=sections,
        heater_volts=volts,
        heater_amps=amps,
        heater_pins=heater_pins,
        heater_series=series,
        heater_centre_tap_pin=tap,
        shared_cathode=shared,
        **_ratings(data, sections),
        **_capacitances(data),
        model=_model(data, sections[0].kind),
    )
    fields["sources"] = _sources(data, fields)
    fields["notes"] = _notes(data)
    return TubeType(**fields)


def _notes(data: Mapping) -> tuple[str, ...]:
    notes = data.get("notes", [])
    if not isinstance(notes, list) or not all(isinstance(n, str) and n.strip() for n in notes):
        raise CatalogueDataError("notes", f"expected a list of texts, got {notes!r}")
    return tuple(notes)
