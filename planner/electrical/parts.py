"""Frozen results of the electrical design: receivers, drivers, followers, families, templates.

All voltages are to ground; "worst" figures are over the whole tolerance box
(resistors, supplies, tube wear). SI units: currents in A, power in W, resistance in ohms.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field

from planner.catalogue import FrozenMap
from planner.errors import PlanningFailure
from planner.units import milliamps

from .rules import DesignRules, Rails


@dataclass(frozen=True)
class Shortfall:
    """A limit a design misses: which, by how much, in what unit, in words."""

    limit: str
    amount: float
    unit: str
    message: str


class NoTemplate(PlanningFailure):
    """No stage template passes; ``shortfall`` says which limit fails and by how much."""

    def __init__(self, reason: str, shortfall: Shortfall | None = None):
        super().__init__(reason)
        self.reason = reason
        self.shortfall = shortfall


@dataclass(frozen=True)
class Receiver:
    """The level-shifting divider in front of one grid (plate -> upper -> grid -> lower -> bias).

    ``grid_role``: "grid" (g1), "grid3" (second control grid) or "diode"
    (g1 behind a diode-AND gate: one diode per input from the gate node,
    which is pulled up to B+ through ``pullup_ohms`` and feeds the divider).
    Levels at the family's input levels: ``grid_high_volts`` (lowest grid
    voltage for a high input), ``grid_low_volts`` (highest for a low
    input); ``margin_high_volts``: how far above 0 V the divider would take
    the grid for the lowest high input if the grid did not clamp;
    ``margin_low_volts``: how far below cut-off the highest low input puts it.
    ``load_amps_high``: the most current it draws from a node at the family's
    lowest high level; ``inject_amps_low``: the most it pushes into a node at
    the highest low level (diode inputs; 0 otherwise); ``bias_amps_worst``:
    the most it returns to the bias supply; ``grid_amps_worst``: the most
    clamp current into its grid.
    ``speedup_farads``: capacitor across the upper resistor (compensated
    divider), when the rules ask for one.
    """

    tube: str
    grid_role: str
    upper_ohms: float
    lower_ohms: float
    upper_watts: float
    lower_watts: float
    grid_high_volts: float
    grid_low_volts: float
    cutoff_volts: float
    margin_high_volts: float
    margin_low_volts: float
    bias_amps_worst: float
    load_amps_high: float
    grid_amps_worst: float
    inject_amps_low: float = 0.0
    pullup_ohms: float | None = None
    pullup_watts: float | None = None
    speedup_farads: float | None = None


@dataclass(frozen=True)
class Driver:
    """An inverting stage of one section type: plate load and screen feed, with its limits.

    ``fanout_limit``: loads (of the family's heaviest receiver) it drives
    while meeting the family levels. ``high_volts``: worst high level at
    that fan-out; ``low_volts``: worst low level with one (lightest) load.
    ``supply_amps_worst``: most plate-supply current of a one-branch stage
    (plate load and the conducting section's screen feed, output low with
    ``fanout_limit`` heavy loads); each further branch adds up to
    ``branch_supply_amps_worst`` (its screen feed while cut off: the bleeder
    current, 0 for triodes); ``supply_amps_typical``: nominal values, new tube,
    one load, mean of the two output states (50 % duty).
    ``section_watts_worst`` / ``screen_watts_worst``: dissipation of the
    conducting section. Screen feed: ``screen_series_ohms`` from B+ and
    ``screen_shunt_ohms`` to ground (None where not used).
    """

    tube: str
    means: str
    plate_load_ohms: float
    plate_load_watts: float
    fanout_limit: int
    supply_amps_worst: float
    supply_amps_typical: float
    branch_supply_amps_worst: float
    section_watts_worst: float
    screen_watts_worst: float | None
    screen_series_ohms: float | None
    screen_series_watts: float | None
    screen_shunt_ohms: float | None
    screen_shunt_watts: float | None
    high_volts: float
    low_volts: float


@dataclass(frozen=True)
class Follower:
    """A cathode follower on a triode section: plate at B+, cathode to bias through ``cathode_load_ohms``.

    Its grid takes an inverting stage's output directly; its cathode is a
    new net with the family's high level and a low level up to
    ``Family.follower_low_max_volts``. It must not be fed from another
    follower. ``grid_stopper_ohms``: resistor in series with the grid (0:
    none) that limits grid current when the input node rises towards B+.
    ``cathode_volts_min`` / ``cathode_volts_max``: the cathode's DC range,
    worst case (grid at 0 V, worn; input node at B+, new);
    ``elevations``: the heater references (winding DC volts) among those the
    family was designed for that keep that range within the type's
    heater-cathode rating.
    """

    tube: str
    cathode_load_ohms: float
    cathode_load_watts: float
    fanout_limit: int
    supply_amps_worst: float
    supply_amps_typical: float
    bias_amps_worst: float
    section_watts_worst: float
    grid_amps_worst: float
    grid_stopper_ohms: float
    cathode_volts_max: float
    high_volts: float
    low_volts: float
    cathode_volts_min: float = 0.0
    elevations: tuple[float, ...] = (0.0,)


@dataclass(frozen=True)
class FollowerTemplate:
    """A cathode follower of a template's type driving ``fanout`` loads of the template's kind.

    Its input is the template's driver node (levels ``design_high_volts`` /
    ``drive_low_volts``); its loads take ``receivers`` (dividers designed
    for the follower's window: a high at or above ``design_high_volts``, a
    low at or below ``accept_low_volts``). ``high_volts`` / ``low_volts``:
    its worst-case cathode levels with ``fanout`` loads (high: worn tube,
    lowest supply, Rk low, bias most negative, heaviest loads; low: new
    tube, highest supply, Rk high, bias least negative, lightest load).
    ``elevation_volts``: the heater reference it was checked against.
    """

    follower: Follower
    receivers: tuple[Receiver, ...]
    fanout: int
    design_high_volts: float
    drive_low_volts: float
    accept_low_volts: float
    high_volts: float
    low_volts: float
    elevation_volts: float = 0.0


@dataclass(frozen=True)
class Family:
    """A logic family: levels every driver meets and every receiver accepts.

    Inverting drivers guarantee ``high_min_volts`` and ``low_max_volts`` at
    their plate node with up to ``fanout_limit`` loads; every receiver in
    ``receivers`` switches correctly for any level at or above
    ``high_min_volts`` and any at or below ``low_max_volts``. Followers
    guarantee ``high_min_volts`` and ``follower_low_max_volts`` (higher, by
    the grid-cathode voltage the follower needs); a load fed by a follower
    takes its divider from ``follower_receivers`` (same keys), designed for
    that window. So any driver may feed any receiver of its variant.
    ``elevations``: the heater references (DC volts of the stock's
    windings) the followers were checked against.
    ``rejected``: (tube, means) -> Shortfall for drivers, (tube, "follower")
    for followers, (tube, "<role> receiver") for receivers and (tube, "<role>
    receiver after a follower") for follower-fed receivers that could not
    be designed (e.g. ("12AU7", "grid receiver")).
    """

    rails: Rails
    rules: DesignRules
    high_min_volts: float
    low_max_volts: float
    follower_low_max_volts: float
    drivers: Mapping[tuple[str, str], Driver]
    receivers: Mapping[tuple[str, str], Receiver]
    followers: Mapping[str, Follower]
    rejected: Mapping[tuple[str, str], Shortfall]
    follower_receivers: Mapping[tuple[str, str], Receiver] = field(default_factory=FrozenMap)
    elevations: tuple[float, ...] = (0.0,)

    def receiver(self, tube: str, role: str, after_follower: bool = False) -> Receiver | None:
        """The divider before ``role`` of ``tube``: the follower-fed variant when ``after_follower``."""
        return (self.follower_receivers if after_follower else self.receivers).get((tube, role))


@dataclass(frozen=True)
class Template:
    """One type driving ``fanout`` loads of its own kind, with worst-case levels at that fan-out.

    ``high_volts`` / ``low_volts``: worst plate levels (high with ``fanout``
    loads, low with one); ``grid_*``: a load's grid at those levels;
    ``margin_high_volts``: how far above 0 V a load's divider would drive
    its grid without clamping; ``margin_low_volts``: how far below cut-off
    a low input puts it. ``fanout_limit``: most loads these values carry.
    ``design_high_volts`` / ``design_low_volts``: the plate levels the
    values are designed to (worst case, with up to ``fanout_limit`` loads).
    ``follower``: a cathode follower of the type fed by this stage and
    driving ``fanout`` loads, or the Shortfall saying which limit fails and
    by how much (None for a type that cannot follow).
    """

    tube: str
    means: str
    rails: Rails
    rules: DesignRules
    fanout: int
    driver: Driver
    receivers: tuple[Receiver, ...]
    high_volts: float
    low_volts: float
    grid_high_volts: float
    grid_low_volts: float
    cutoff_volts: float
    margin_high_volts: float
    margin_low_volts: float
    fanout_limit: int
    design_high_volts: float
    design_low_volts: float
    from_memory: bool = False
    follower: FollowerTemplate | Shortfall | None = None

    @property
    def plate_load_ohms(self) -> float:
        return self.driver.plate_load_ohms

    def to_json(self) -> dict:
        """A JSON-ready document (the ``tubeplan stage --json`` output)."""
        first = self.receivers[0]
        d = self.driver
        return {
            "tube": self.tube,
            "means": self.means,
            "rails": {"plate_volts": self.rails.plate_volts, "bias_volts": self.rails.bias_volts},
            "fanout": self.fanout,
            "fanout_limit": self.fanout_limit,
            "plate_load_ohms": d.plate_load_ohms,
            "plate_load_watts": d.plate_load_watts,
            "screen": None if d.screen_series_ohms is None else {
                "series_ohms": d.screen_series_ohms, "series_watts": d.screen_series_watts,
                "shunt_ohms": d.screen_shunt_ohms, "shunt_watts": d.screen_shunt_watts},
            "divider": {"upper_ohms": first.upper_ohms, "lower_ohms": first.lower_ohms,
                        "upper_watts": first.upper_watts, "lower_watts": first.lower_watts,
                        "pullup_ohms": first.pullup_ohms},
            "dividers": [{"grid_role": r.grid_role, "upper_ohms": r.upper_ohms, "lower_ohms": r.lower_ohms,
                          "pullup_ohms": r.pullup_ohms, "cutoff_volts": r.cutoff_volts} for r in self.receivers],
            "levels": {"high_volts": self.high_volts, "low_volts": self.low_volts,
                       "design_high_volts": self.design_high_volts, "design_low_volts": self.design_low_volts},
            "grid": {"high_volts": self.grid_high_volts, "low_volts": self.grid_low_volts,
                     "cutoff_volts": self.cutoff_volts,
                     "cutoff_plate_volts": self.rails.plate_volts * (1 + self.rules.supply_tolerance)},
            "from_memory": self.from_memory,
            "margins": {"high_volts": self.margin_high_volts, "low_volts": self.margin_low_volts},
            "supply_ma_worst": milliamps(d.supply_amps_worst),
            "supply_ma_typical": milliamps(d.supply_amps_typical),
            "section_watts_worst": d.section_watts_worst,
            "screen_watts_worst": d.screen_watts_worst,
            "follower": _follower_json(self.follower),
            "rules": {"series": self.rules.series, "resistor_tolerance": self.rules.resistor_tolerance,
                      "supply_tolerance": self.rules.supply_tolerance, "wear": self.rules.wear,
                      "margin_volts": self.rules.margin_volts,
                      "unsourced_allowance": self.rules.unsourced_allowance},
        }


def _follower_json(f: FollowerTemplate | Shortfall | None) -> dict | None:
    if f is None:
        return None
    if isinstance(f, Shortfall):
        return {"passes": False, "limit": f.limit, "excess": f.amount, "unit": f.unit, "reason": f.message}
    x = f.follower
    return {"passes": True, "fanout": f.fanout, "fanout_limit": x.fanout_limit,
            "cathode_load_ohms": x.cathode_load_ohms, "cathode_load_watts": x.cathode_load_watts,
            "grid_stopper_ohms": x.grid_stopper_ohms,
            "levels": {"high_volts": f.high_volts, "low_volts": f.low_volts,
                       "accept_low_volts": f.accept_low_volts},
            "cathode_volts": {"min": x.cathode_volts_min, "max": x.cathode_volts_max},
            "elevation_volts": f.elevation_volts,
            "dividers": [{"grid_role": r.grid_role, "upper_ohms": r.upper_ohms, "lower_ohms": r.lower_ohms,
                          "pullup_ohms": r.pullup_ohms} for r in f.receivers]}
