"""Reading and checking a stock file: the tubes on hand and the supplies on the bench."""

from __future__ import annotations

from dataclasses import dataclass

from planner.catalogue import Catalogue, CatalogueDataError, builtin_catalogue, tube_type_from_mapping
from planner.units import amps_from_milliamps

from .fields import (check_keys, check_not_swapped, expect_list, expect_mapping, get_bool, get_int, get_number,
                     get_text, line_of)
from .yamlfile import Mapping, YamlFile, read_yaml

DIODE_CHOICES = ("solid-state", "vacuum-only", "none")
OBJECTIVE_MODES = ("weighted", "lexicographic")
#: Default objective weights: an envelope (a socket to drill and wire) costs 1; a heater
#: watt costs 0.05 (20 W of heater weigh as much as one more envelope); an envelope of
#: a scarce type costs 5 more, so a scarce tube is used only to save several others.
DEFAULT_OBJECTIVE = {"envelopes": 1.0, "heater_watts": 0.05, "scarce": 5.0}
PRICE_KEYS = ("resistor", "socket", "diode", "capacitor")


@dataclass(frozen=True)
class Supply:
    """A DC rail: nominal volts and the most current it may deliver (the file's ``max_ma``, in amperes)."""

    volts: float
    max_amps: float


@dataclass(frozen=True)
class Winding:
    """A heater winding of the transformer.

    ``elevated_volts``: the DC voltage to ground the winding is referred to
    (for example through its centre tap or a divider from B+), so that a
    cathode follower's cathode stays within its heater-cathode rating; 0 for
    a grounded winding.
    """

    id: str
    volts: float
    max_amps: float
    elevated_volts: float = 0.0


@dataclass(frozen=True)
class TubeStock:
    """How many of one tube type are on hand and how to treat them.

    ``condition`` is the fraction of nominal emission the builder's tubes still
    have (None: the planner's default derating). ``unit_price`` is optional.
    """

    tube: str
    count: int
    reserve: int = 0
    scarce: bool = False
    condition: float | None = None
    unit_price: float | None = None

    @property
    def usable(self) -> int:
        return self.count - self.reserve


@dataclass(frozen=True)
class Objective:
    """Weights of the planner's objective and how to combine them."""

    envelopes: float = DEFAULT_OBJECTIVE["envelopes"]
    heater_watts: float = DEFAULT_OBJECTIVE["heater_watts"]
    scarce: float = DEFAULT_OBJECTIVE["scarce"]
    mode: str = "weighted"


@dataclass(frozen=True)
class Stock:
    """Everything the stock file says, with the catalogue extended by its custom types."""

    path: str
    plate: Supply
    bias: Supply
    windings: tuple[Winding, ...]
    tubes: tuple[TubeStock, ...]
    diodes: str
    objective: Objective
    catalogue: Catalogue
    max_branches_per_stage: int | None = None
    prices: tuple[tuple[str, float], ...] = ()

    def tube(self, name: str) -> TubeStock | None:
        return next((entry for entry in self.tubes if entry.tube == name), None)


def load_stock(path) -> Stock:
    """Read and check the stock file at ``path``; raise InputError on any mistake."""
    return stock_from_yaml(read_yaml(path))


def stock_from_yaml(file: YamlFile) -> Stock:
    top = expect_mapping(file, file.data, 1, "the stock file")
    check_not_swapped(file, top, "stock")
    check_keys(file, top, ("supplies", "tubes", "diodes", "objective", "custom_types", "limits", "prices"),
               "the stock file", required=("supplies", "tubes"))
    supplies = expect_mapping(file, top["supplies"], line_of(top, "supplies"), "supplies")
    check_keys(file, supplies, ("plate", "bias", "heater"), "supplies", required=("plate", "bias", "heater"))
    plate = _read_supply(file, supplies, "plate", negative=False)
    bias = _read_supply(file, supplies, "bias", negative=True)
    windings = _read_windings(file, supplies, plate, bias)

    catalogue = builtin_catalogue()
    if "custom_types" in top:
        catalogue = catalogue.with_custom(_read_custom_types(file, top, catalogue))
    tubes = _read_tubes(file, top, catalogue)
    diodes = get_text(file, top, "diodes", "the stock file", default="none", choices=DIODE_CHOICES)
    objective = _read_objective(file, top)
    limit = None
    if "limits" in top:
        limits = expect_mapping(file, top["limits"], line_of(top, "limits"), "limits")
        check_keys(file, limits, ("max_branches_per_stage",), "limits")
        limit = get_int(file, limits, "max_branches_per_stage", "limits", default=None, minimum=1)
    prices = ()
    if "prices" in top:
        table = expect_mapping(file, top["prices"], line_of(top, "prices"), "prices")
        check_keys(file, table, PRICE_KEYS, "prices")
        prices = tuple((key, get_number(file, table, key, "prices", minimum=0)) for key in PRICE_KEYS
                       if key in table)
    return Stock(file.path, plate, bias, windings, tubes, diodes, objective, catalogue, limit, prices)


def _read_supply(file: YamlFile, supplies: Mapping, key: str, *, negative: bool) -> Supply:
    entry = expect_mapping(file, supplies[key], line_of(supplies, key), f"supplies.{key}")
    what = f"supplies.{key}"
    check_keys(file, entry, ("volts", "max_ma"), what, required=("volts", "max_ma"))
    volts = get_number(file, entry, "volts", what, negative=negative, positive=not negative,
                       minimum=-2000 if negative else None, maximum=None if negative else 2000)
    max_ma = get_number(file, entry, "max_ma", what, positive=True)
    return Supply(volts, amps_from_milliamps(max_ma))


def _read_windings(file: YamlFile, supplies: Mapping, plate: Supply, bias: Supply) -> tuple[Winding, ...]:
    items = expect_list(file, supplies["heater"], line_of(supplies, "heater"), "supplies.heater")
    if not items:
        raise file.error(line_of(supplies, "heater"), "supplies.heater is empty; expected at least one winding")
    windings, seen = [], {}
    for item, line in zip(items, items.lines):
        entry = expect_mapping(file, item, line, "a heater winding")
        check_keys(file, entry, ("id", "volts", "max_amps", "elevated_volts"), "a heater winding",
                   required=("id", "volts", "max_amps"))
        ident = get_text(file, entry, "id", "a heater winding")
        if ident in seen:
            raise file.error(line_of(entry, "id"), f"heater winding {ident!r} is listed twice "
                                                   f"(first on line {seen[ident]})")
        seen[ident] = line_of(entry, "id")
        what = f"heater winding {ident!r}"
        # An elevation lies between the rails that can hold it (it is usually taken from B+).
        elevated = get_number(file, entry, "elevated_volts", what, default=0.0)
        if not bias.volts <= elevated <= plate.volts:
            raise file.error(line_of(entry, "elevated_volts"),
                             f"{what}.elevated_volts is {elevated:g} V; expected a DC reference between the bias "
                             f"rail ({bias.volts:g} V) and B+ ({plate.volts:g} V)")
        windings.append(Winding(ident, get_number(file, entry, "volts", what, positive=True, maximum=200),
                                get_number(file, entry, "max_amps", what, positive=True), elevated))
    return tuple(windings)


def _read_custom_types(file: YamlFile, top: Mapping, catalogue: Catalogue) -> tuple:
    table = expect_mapping(file, top["custom_types"], line_of(top, "custom_types"), "custom_types")
    types = []
    for name, data in table.items():
        line = line_of(table, name)
        if name in catalogue.names():
            raise file.error(line, f"custom type {name!r} is already in the built-in catalogue; "
                                   "give your variant its own name")
        expect_mapping(file, data, line, f"custom type {name!r}")
        try:
            types.append(tube_type_from_mapping(name, data))
        except CatalogueDataError as problem:
            raise file.error(_line_of_path(data, problem.field),
                             f"custom type {name!r}, field {problem.field!r}: {problem.message}") from None
    return tuple(types)


def _line_of_path(data: Mapping, dotted: str) -> int:
    """The line of the deepest existing key along ``dotted`` (e.g. "heater.volts")."""
    line = data.line
    node = data
    for part in dotted.split(".") if dotted else ():
        if isinstance(node, Mapping) and part in node:
            line = line_of(node, part)
            node = node[part]
        elif isinstance(node, list) and part.isdigit() and int(part) < len(node):
            line = node.lines[int(part)]
            node = node[int(part)]
        else:
            break
    return line


def _read_tubes(file: YamlFile, top: Mapping, catalogue: Catalogue) -> tuple[TubeStock, ...]:
    table = expect_mapping(file, top["tubes"], line_of(top, "tubes"), "tubes")
    if not table:
        raise file.error(line_of(top, "tubes"), "tubes is empty; expected at least one tube type")
    entries, seen = [], {}
    for name, data in table.items():
        line = line_of(table, name)
        if name not in catalogue:
            near = catalogue.closest(name, 3)
            hint = f"; closest known types: {', '.join(near)}" if near else ""
            raise file.error(line, f"unknown tube type {name!r}{hint}. Define it under custom_types "
                                   "if it is not in the catalogue")
        what = f"tubes.{name}"
        canonical = catalogue.get(name).name
        if canonical in seen:
            raise file.error(line, f"tube type {canonical} is listed twice (first on line {seen[canonical]})")
        seen[canonical] = line
        if isinstance(data, int) and not isinstance(data, bool):
            data = Mapping.at(line, {"count": data})
        entry = expect_mapping(file, data, line, what)
        check_keys(file, entry, ("count", "reserve", "scarce", "condition", "unit_price"), what,
                   required=("count",))
        count = get_int(file, entry, "count", what, minimum=0)
        reserve = get_int(file, entry, "reserve", what, default=0, minimum=0)
        if reserve > count:
            raise file.error(line_of(entry, "reserve"),
                             f"{what}.reserve is {reserve} but only {count} are on hand; "
                             "expected a reserve no larger than the count")
        scarce = get_bool(file, entry, "scarce", what, default=False)
        condition = get_number(file, entry, "condition", what, default=None, minimum=0.1, maximum=1.0)
        price = get_number(file, entry, "unit_price", what, default=None, minimum=0)
        entries.append(TubeStock(canonical, count, reserve, scarce, condition, price))
    return tuple(sorted(entries, key=lambda entry: entry.tube))


def _read_objective(file: YamlFile, top: Mapping) -> Objective:
    if "objective" not in top:
        return Objective()
    entry = expect_mapping(file, top["objective"], line_of(top, "objective"), "objective")
    check_keys(file, entry, ("envelopes", "heater_watts", "scarce", "mode"), "objective")
    weights = {key: get_number(file, entry, key, "objective", default=default, minimum=0)
               for key, default in DEFAULT_OBJECTIVE.items()}
    mode = get_text(file, entry, "mode", "objective", default="weighted", choices=OBJECTIVE_MODES)
    if mode == "weighted" and not any(weights.values()):
        raise file.error(entry.line, "objective weights are all 0; expected at least one positive weight")
    return Objective(mode=mode, **weights)


__all__ = ["Objective", "Stock", "Supply", "TubeStock", "Winding", "load_stock"]
