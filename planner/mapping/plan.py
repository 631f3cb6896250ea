"""The plan: what the mapping decided, as frozen values the report layer only formats.

A plan holds the stage network with every branch and follower placed on a tube
section, the envelopes with their heater windings, the full parts list as a
netlist (every tube pin, resistor, diode and capacitor with the nets it joins),
the budgets, the stock use and the solver's account of optimality. The report
layer writes plan.json, the BOM, the wiring list, the SPICE deck and the
reports from it without recomputing anything.

Net names: primary inputs by name, available complements "~name", stage outputs
"n1", "n2", ...; rails "B+" (plate supply), "BIAS" (negative supply), "GND";
heater nets "H1", "H1_RET" (winding id, and its return); internal nodes of a
stage "n3.g1" (a grid behind its divider) and the like.
"""

from __future__ import annotations

from dataclasses import dataclass

PLATE_RAIL, BIAS_RAIL, GROUND = "B+", "BIAS", "GND"


@dataclass(frozen=True)
class PlacedBranch:
    """One branch of an inverting stage, on one tube section.

    ``diodes``: designators of the diodes of a diode-AND branch (parts list),
    empty otherwise.
    """

    inputs: tuple[str, ...]
    means: str
    tube: str
    envelope: str
    section: int
    diodes: tuple[str, ...] = ()


@dataclass(frozen=True)
class PlacedStage:
    """A stage as built: its template and where each branch or follower sits.

    For ``kind == "follower"``: ``input`` is the copied net and ``tube``,
    ``envelope``, ``section`` place the follower; ``branches`` is empty.
    ``view`` is the textbook name ("NAND-2", "NOR-3", "AOI 2-1", "follower").
    ``template``: the electrical template the stage is built with ("single",
    "dual", "diode" or "follower"; see docs/mapping.md).
    """

    id: str
    kind: str
    output: str
    view: str
    branches: tuple[PlacedBranch, ...] = ()
    input: str | None = None
    tube: str | None = None
    envelope: str | None = None
    section: int | None = None
    plate_load_ohms: float | None = None
    load_ohms: float | None = None
    fanout: int = 0
    fanout_limit: int = 0
    supply_ma_worst: float = 0.0
    supply_ma_typical: float = 0.0
    bias_ma_worst: float = 0.0
    template: str = ""


@dataclass(frozen=True)
class SectionUse:
    """What one section of an envelope does: its means and the net on each pin role."""

    index: int
    means: str
    stage: str
    nets: tuple[tuple[str, str], ...]


@dataclass(frozen=True)
class Envelope:
    """One tube in a socket: ``ref`` V1, V2, ...; heater on ``winding``.

    ``heater_connection`` is "parallel" or "series" for a centre-tapped heater
    ("single" otherwise); ``heater_volts``/``heater_amps`` as connected.
    """

    ref: str
    tube: str
    base: str
    winding: str
    heater_connection: str
    heater_volts: float
    heater_amps: float
    sections: tuple[SectionUse, ...]


@dataclass(frozen=True)
class Part:
    """One part of the netlist.

    ``kind``: "tube", "resistor", "diode", "capacitor". ``pins`` pairs a pin
    label (a tube's pin number as text, "1"/"2" for two-terminal parts, or
    "A"/"K" for a diode's anode and cathode) with its net.
    ``value`` is the part's value as text ("47k", "6AL5", "1N4148"-class
    wording is avoided: "silicon signal diode").
    """

    ref: str
    kind: str
    value: str
    pins: tuple[tuple[str, str], ...]
    role: str
    stage: str | None = None
    ohms: float | None = None
    farads: float | None = None
    watts_rating: float | None = None
    dissipation_watts: float | None = None
    tolerance: float | None = None
    tube: str | None = None


@dataclass(frozen=True)
class WindingLoad:
    """A heater winding and what the plan puts on it."""

    id: str
    volts: float
    max_amps: float
    amps: float


@dataclass(frozen=True)
class Budget:
    """Supply budgets of the plan (currents in mA, heater in A and W)."""

    heater_watts: float
    windings: tuple[WindingLoad, ...]
    plate_ma_worst: float
    plate_ma_typical: float
    bias_ma: float
    plate_max_ma: float
    bias_max_ma: float


@dataclass(frozen=True)
class StockUse:
    """One tube type of the stock: how many there are, kept back and used."""

    tube: str
    on_hand: int
    reserve: int
    used: int
    scarce: bool


@dataclass(frozen=True)
class Solution:
    """The solver's account: objective value, LP relaxation bound, gap, status.

    ``mode``: "weighted" or "lexicographic"; ``levels``: per solve of the
    objective sequence (criterion, value, LP-relaxation bound, solver gap);
    ``objective``/``lp_bound``/``gap`` are those of the last level.
    ``terms``: the plan's envelopes, heater watts, scarce envelopes and
    weighted objective; ``network``: which stage-layer network was chosen.
    """

    solver: str
    status: str
    objective: float
    lp_bound: float
    gap: float
    seconds: float
    mode: str = "weighted"
    levels: tuple[tuple[str, float, float, float], ...] = ()
    terms: tuple[tuple[str, float], ...] = ()
    network: str = ""


@dataclass(frozen=True)
class Plan:
    """Everything ``tubeplan plan`` decided; the report layer only formats it.

    Family levels at every plate node, worst case: ``high_volts`` or more for
    a high, ``low_volts`` or less for a low from an inverting stage,
    ``follower_low_volts`` or less from a follower.
    """

    design: str
    inputs: tuple[tuple[str, bool], ...]
    outputs: tuple[tuple[str, str], ...]
    forms: tuple[tuple[str, str], ...]
    stages: tuple[PlacedStage, ...]
    envelopes: tuple[Envelope, ...]
    parts: tuple[Part, ...]
    budget: Budget
    stock: tuple[StockUse, ...]
    solution: Solution
    plate_volts: float
    bias_volts: float
    high_volts: float
    low_volts: float
    follower_low_volts: float | None = None
