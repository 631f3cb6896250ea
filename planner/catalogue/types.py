"""Frozen value types of the tube catalogue.

Everything here is data: a tube type, its sections, its model parameters and
the source of every value. Units are in the field names (``heater_volts``,
``max_plate_watts``, ``c_in_farads``), in SI units (the catalogue format's mA and pF are
converted where a type is read, :mod:`planner.units`).
"""

from __future__ import annotations

import difflib
from collections.abc import Iterable, Iterator, Mapping
from dataclasses import dataclass, field

from planner.errors import BadInput

SECTION_KINDS = ("triode", "pentode", "dual-control", "diode")
MEANS = ("single", "dual")
BASES = {"7-pin miniature": 7, "9-pin noval": 9, "octal": 8}
EQUATIONS = ("koren-triode", "koren-pentode", "child-langmuir", "diode")


class CatalogueDataError(BadInput, ValueError):
    """Bad tube data: ``field`` is a dotted path inside the type ("heater.volts")."""

    def __init__(self, field: str, message: str):
        super().__init__(f"{field}: {message}")
        self.field = field
        self.message = message


class FrozenMap(Mapping):
    """A hashable, immutable mapping with keys kept in sorted order.

    Sorting makes iteration independent of insertion order and of hash seeds.

    >>> m = FrozenMap({"b": 2, "a": 1})
    >>> list(m), m["b"], hash(m) == hash(FrozenMap({"a": 1, "b": 2}))
    (['a', 'b'], 2, True)
    """

    __slots__ = ("_items", "_index")

    def __init__(self, data: Mapping | Iterable[tuple] = ()):
        pairs = data.items() if isinstance(data, Mapping) else data
        items = tuple(sorted(pairs, key=lambda kv: repr(kv[0])))
        object.__setattr__(self, "_items", items)
        object.__setattr__(self, "_index", {k: v for k, v in items})

    def __getitem__(self, key):
        return self._index[key]

    def __iter__(self) -> Iterator:
        return (k for k, _ in self._items)

    def __len__(self) -> int:
        return len(self._items)

    def __hash__(self) -> int:
        return hash(self._items)

    def __eq__(self, other) -> bool:
        if isinstance(other, FrozenMap):
            return self._items == other._items
        return isinstance(other, Mapping) and dict(self._items) == dict(other)

    def __repr__(self) -> str:
        return f"FrozenMap({dict(self._items)!r})"

    def __setattr__(self, name, value):
        raise AttributeError("FrozenMap is immutable")

    def __reduce__(self):
        # Rebuilt through the constructor (slots refuse setattr), so pickled families load.
        return FrozenMap, (self._items,)


@dataclass(frozen=True)
class Section:
    """One section of an envelope.

    ``kind``: "triode", "pentode", "dual-control" or "diode".
    ``means``: what the section can do as a logic branch: "single" (one
    control grid) and/or "dual" (conducts only when both control grids, g1
    and g3 / suppressor, are high); () for diodes.
    ``pins``: role -> pin number; roles "plate", "grid" (g1), "grid3" (second
    control grid or suppressor), "screen", "cathode"; diodes "plate", "cathode".
    """

    index: int
    kind: str
    means: tuple[str, ...]
    pins: Mapping[str, int]


@dataclass(frozen=True)
class ModelParams:
    """Parameters of a tube current model (see ``planner.catalogue.models``).

    ``equation``: "koren-triode" or "koren-pentode" (N. Koren, "Improved VT
    models for SPICE simulations", Glass Audio 1996: mu, ex, kg1, kp, kvb,
    kg2), "child-langmuir" (three-halves law: mu, perveance in A/V^1.5), or
    "diode" (three-halves law of a diode: perveance).
    ``grid_perveance``: three-halves-law perveance (A/V^1.5) of the
    grid-cathode diode for a positive grid, None when not modelled.
    ``g3_zero_volts`` and ``g3_ex``: the gating factor of the second control
    grid of a dual-control section (zero point in volts, exponent); None for
    other sections.
    ``vct``: Koren's grid offset (contact potential, volts) added to the grid
    voltage of a Koren triode; None for none.
    ``tail_volts``: knee of the cut-off tail of a Koren triode (our
    addition): the current is multiplied by ``E1^2 / (E1^2 + tail_volts^2)``,
    which leaves it unchanged well above cut-off and steepens the
    exponential tail of Koren's soft rounding below it; None for none.
    """

    equation: str
    mu: float | None = None
    ex: float | None = None
    kg1: float | None = None
    kp: float | None = None
    kvb: float | None = None
    kg2: float | None = None
    perveance: float | None = None
    grid_perveance: float | None = None
    g3_zero_volts: float | None = None
    g3_ex: float | None = None
    tail_volts: float | None = None
    vct: float | None = None


@dataclass(frozen=True)
class TubeType:
    """One tube type with its data and the source of every value.

    Heater: ``heater_volts`` / ``heater_amps`` is the usual (parallel, for a
    centre-tapped heater) connection across ``heater_pins``;
    ``heater_series`` is (volts, amps) for the other connection of a
    centre-tapped heater, whose tap is ``heater_centre_tap_pin``.
    Ratings are per section; a diode type gives ``max_plate_amps`` (average
    current per plate) and may leave ``max_plate_watts`` None. ``sources`` maps each field name of this class
    to the datasheet or handbook it was read from, or "from memory".
    ``notes``: where sources disagree, which value the type keeps for
    design and why (shown by ``tubeplan tubes``).
    """

    name: str
    description: str
    base: str
    sections: tuple[Section, ...]
    heater_volts: float
    heater_amps: float
    heater_pins: tuple[int, ...]
    heater_series: tuple[float, float] | None
    heater_centre_tap_pin: int | None
    shared_cathode: bool
    max_plate_volts: float
    max_plate_watts: float | None
    max_plate_amps: float | None
    max_screen_volts: float | None
    max_screen_watts: float | None
    max_grid_amps: float | None
    max_heater_cathode_volts: float | None
    c_in_farads: float | None
    c_out_farads: float | None
    c_gp_farads: float | None
    model: ModelParams
    sources: Mapping[str, str] = field(default_factory=FrozenMap)
    notes: tuple[str, ...] = ()

    @property
    def model_from_memory(self) -> bool:
        """True when the model's source says it rests on figures from memory (no source read).

        The design gives such types a wider allowance (``DesignRules.unsourced_allowance``).
        """
        return "from memory" in self.sources.get("model", "")

    @property
    def pin_count(self) -> int:
        """Number of pins of the base (7, 9 or 8)."""
        return BASES[self.base]

    @property
    def amplifying_sections(self) -> tuple[Section, ...]:
        """Sections that are not diodes."""
        return tuple(s for s in self.sections if s.kind != "diode")

    @property
    def diode_sections(self) -> tuple[Section, ...]:
        """Diode sections."""
        return tuple(s for s in self.sections if s.kind == "diode")

    @property
    def heater_watts(self) -> float:
        """Heater power in watts."""
        return self.heater_volts * self.heater_amps

    def sections_with(self, means: str) -> tuple[Section, ...]:
        """Sections that can act as a branch of the given means ("single"/"dual")."""
        return tuple(s for s in self.sections if means in s.means)


@dataclass(frozen=True)
class Catalogue:
    """A set of tube types by name. Look-ups ignore letter case."""

    types: Mapping[str, TubeType]

    def names(self) -> tuple[str, ...]:
        """All type names, sorted."""
        return tuple(sorted(self.types))

    def __contains__(self, name: str) -> bool:
        return self._key(name) is not None

    def _key(self, name: str) -> str | None:
        folded = name.strip().upper()
        for key in self.names():
            if key.upper() == folded:
                return key
        return None

    def get(self, name: str) -> TubeType:
        """The type called ``name``; KeyError naming the closest types if absent."""
        key = self._key(name)
        if key is None:
            near = self.closest(name)
            hint = f"; closest: {', '.join(near)}" if near else ""
            raise KeyError(f"unknown tube type {name!r}{hint}")
        return self.types[key]

    def closest(self, name: str, n: int = 3) -> tuple[str, ...]:
        """Up to ``n`` type names most like ``name`` (difflib ratio, ties by name)."""
        folded = {k.upper(): k for k in self.names()}
        hits = difflib.get_close_matches(name.strip().upper(), sorted(folded), n=n, cutoff=0.4)
        return tuple(folded[h] for h in hits)

    def with_custom(self, types: Iterable[TubeType]) -> Catalogue:
        """A new catalogue with ``types`` added; a custom type replaces a built-in of the same name."""
        merged = dict(self.types)
        for t in types:
            old = self._key(t.name)
            if old is not None:
                del merged[old]
            merged[t.name] = t
        return Catalogue(FrozenMap(merged))
