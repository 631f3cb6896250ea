"""Budgets of a plan, laid out for reports: heater per winding, plate, bias, heat, resistors.

Everything here is read from the Plan or is a sum or a product of figures in it;
the plan itself is never recomputed. Two rules of thumb are applied, both common
practice and stated in every report:

- Cold-start surge: a tungsten heater's cold resistance is roughly a fifth to a
  seventh of its hot resistance, so at switch-on a winding can deliver up to 5
  to 7 times its running current until the heaters warm (a few seconds; the
  winding's own resistance limits it in practice).
- Transformer headroom: rate each winding and supply about 25 % above the load
  it carries.
"""

from __future__ import annotations

from dataclasses import dataclass

from planner.mapping import Plan
from planner.units import as_written, milliamps

#: Cold-to-hot resistance ratios of tungsten heaters (common practice): 1/5 to 1/7.
SURGE_FACTORS = (5.0, 7.0)
#: Rating headroom over the planned load for transformers and supplies (common practice).
HEADROOM = 0.25
#: A supply loaded above this share of its rating is reported as a warning (common practice).
LOAD_WARNING = 0.9


@dataclass(frozen=True)
class WindingBudget:
    """One heater winding: its load in amps and watts, its rating and cold-start surge."""

    id: str
    volts: float
    amps: float
    max_amps: float
    watts: float
    surge_amps_low: float
    surge_amps_high: float
    rating_amps: float
    envelopes: tuple[str, ...]
    elevated_volts: float = 0.0

    @property
    def volts_text(self) -> str:
        """The winding's volts, with its DC reference when elevated ("6.3 V at +60 V DC")."""
        return f"{self.volts:g} V" + (f" at {self.elevated_volts:+g} V DC" if self.elevated_volts else "")


@dataclass(frozen=True)
class RailBudget:
    """A DC rail as the reports print it: its volts, the planned current (worst case and typical) and what it may
    give, in mA (the plan's amperes, converted here where the reports are made), and the worst-case watts."""

    name: str
    volts: float
    ma_worst: float
    ma_typical: float
    max_ma: float
    watts_worst: float
    rating_ma: float


@dataclass(frozen=True)
class ResistorLoad:
    """One resistor: its value, planned dissipation and rating."""

    ref: str
    value: str
    role: str
    stage: str | None
    watts: float
    rating_watts: float | None


@dataclass(frozen=True)
class Budgets:
    """All budgets of a plan (currents in A or mA as named, power in W)."""

    windings: tuple[WindingBudget, ...]
    heater_watts: float
    plate: RailBudget
    bias: RailBudget
    heat_watts: float
    resistor_watts: float
    resistors: tuple[ResistorLoad, ...]


def supply_warnings(budgets: Budgets) -> tuple[str, ...]:
    """Supplies loaded above LOAD_WARNING of their rating, or whose load plus HEADROOM exceeds it, in words.

    The plan keeps every load within its supply's rating; these are the ones
    with less margin than the BOM asks for, which run hot or sag in practice.

    >>> w = WindingBudget("H1", 6.3, 7.8, 8.0, 49.1, 39.0, 54.6, 9.75, ("V1",))
    >>> rail = RailBudget("B+", 170, 10, 8, 200, 1.7, 12.5)
    >>> supply_warnings(Budgets((w,), 49.1, rail, rail, 52.5, 0.1, ()))[0][:58]
    'heater winding H1 is loaded to 98 % of its 8 A rating (7.8'
    """
    rows = [(f"heater winding {w.id}", w.amps, w.max_amps, w.rating_amps, "A", "{:.2f}")
            for w in budgets.windings if w.envelopes]
    rows += [(f"{name} supply", rail.ma_worst, rail.max_ma, rail.rating_ma, "mA", "{:.1f}")
             for name, rail in (("plate (B+)", budgets.plate), ("bias", budgets.bias))]
    warnings = []
    for name, load, limit, rating, unit, number in rows:
        if limit <= 0 or rating <= limit:
            continue
        share = load / limit
        loaded = f"is loaded to {share * 100:.0f} % of its {limit:g} {unit} rating ({number.format(load)} {unit})"
        if share <= LOAD_WARNING:
            loaded = f"carries {number.format(load)} {unit} of its {limit:g} {unit} rating"
        warnings.append(f"{name} {loaded}; the BOM asks for {number.format(rating)} {unit} "
                        f"({HEADROOM * 100:g} % headroom): use a larger one or spread the load")
    return tuple(warnings)


def plan_budgets(plan: Plan) -> Budgets:
    """The budgets of ``plan`` for reporting. Cost O(parts + envelopes).

    Heat to get rid of is every watt the supplies deliver: heater watts, plate
    volts times the worst-case plate current, and bias volts (magnitude) times
    the bias current; it all ends up as heat in the chassis.
    """
    b = plan.budget
    low, high = SURGE_FACTORS
    windings = tuple(
        WindingBudget(w.id, w.volts, w.amps, w.max_amps, w.volts * w.amps, w.amps * low, w.amps * high,
                      w.amps * (1 + HEADROOM),
                      tuple(e.ref for e in plan.envelopes if e.winding == w.id), w.elevated_volts)
        for w in b.windings)
    plate_ma, bias_ma = milliamps(b.plate_amps_worst), milliamps(b.bias_amps)
    plate = RailBudget("B+", plan.plate_volts, plate_ma, milliamps(b.plate_amps_typical),
                       as_written(milliamps(b.plate_max_amps)), plan.plate_volts * b.plate_amps_worst,
                       plate_ma * (1 + HEADROOM))
    bias = RailBudget("BIAS", plan.bias_volts, bias_ma, bias_ma, as_written(milliamps(b.bias_max_amps)),
                      abs(plan.bias_volts) * b.bias_amps, bias_ma * (1 + HEADROOM))
    resistors = tuple(ResistorLoad(p.ref, p.value, p.role, p.stage, p.dissipation_watts or 0.0, p.watts_rating)
                      for p in plan.parts if p.kind == "resistor")
    return Budgets(windings, b.heater_watts, plate, bias, b.heater_watts + plate.watts_worst + bias.watts_worst,
                   sum(r.watts for r in resistors), resistors)
