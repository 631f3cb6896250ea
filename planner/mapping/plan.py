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
    supply_amps_worst: float = 0.0
    supply_amps_typical: float = 0.0
    bias_amps_worst: float = 0.0
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
    wording is avoided: "silicon signal diode"). ``volts_rating``: the
    voltage a diode (reverse) or capacitor must stand, where the plan sets one.
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
    volts_rating: float | None = None


@dataclass(frozen=True)
class WindingLoad:
    """A heater winding and what the plan puts on it; ``elevated_volts``: its DC reference (0: grounded)."""

    id: str
    volts: float
    max_amps: float
    amps: float
    elevated_volts: float = 0.0


@dataclass(frozen=True)
class Budget:
    """Supply budgets of the plan (currents in A, heater in A and W)."""

    heater_watts: float
    windings: tuple[WindingLoad, ...]
    plate_amps_worst: float
    plate_amps_typical: float
    bias_amps: float
    plate_max_amps: float
    bias_max_amps: float


@dataclass(frozen=True)
class StockUse:
    """One tube type of the stock: how many there are, kept back and used.

    ``from_memory``: the type's model rests on figures from memory (no
    source read); its design carries the rules' wider allowance.
    """

    tube: str
    on_hand: int
    reserve: int
    used: int
    scarce: bool
    from_memory: bool = False


@dataclass(frozen=True)
class NetworkTried:
    """One candidate stage network and how it fared: ``stages`` and ``sections`` after
    fan-out repair (None when it could not be built), ``envelopes`` of its optimal plan
    (None when it has none), ``note`` why not (empty when planned)."""

    label: str
    stages: int | None
    sections: int | None
    envelopes: float | None
    note: str = ""


@dataclass(frozen=True)
class Solution:
    """The solver's account: objective value, LP relaxation bound, gap, status.

    ``mode``: "weighted" or "lexicographic"; ``levels``: per solve of the
    objective sequence (criterion, value, LP-relaxation bound, solver gap);
    ``objective``/``lp_bound``/``gap`` are those of the last level.
    ``terms``: the plan's envelopes, heater watts, scarce envelopes and
    weighted objective; ``network``: which stage-layer network was chosen;
    ``networks``: every candidate network tried, in order (:class:`NetworkTried`).
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
    networks: tuple[NetworkTried, ...] = ()


@dataclass(frozen=True)
class PlacedRegister:
    """A register as built: a bistable on envelope ``envelope`` (both sections), its nets and values.

    Nets: ``output`` (q, the plate of section 2) and ``complement`` (~q,
    section 1); ``next`` and ``next_complement`` carry the next state and its
    complement (the steering's level inputs); ``form`` is the minimised next
    state. ``reset`` (0 or 1) is the state the reset line sets. Values: plate
    loads, cross-coupling dividers, commutating and steering capacitors,
    steering resistors (see docs/registers.md). Timing from the clock's
    falling edge: ``clock_to_q_seconds`` (the later output's midpoint
    crossing, with this plan's loads); ``setup_seconds`` the next state must be
    settled before the edge.
    """

    name: str
    output: str
    complement: str
    next: str
    next_complement: str
    reset: int
    tube: str
    envelope: str
    form: str
    plate_load_ohms: float
    upper_ohms: float
    lower_ohms: float
    commutating_farads: float
    steering_farads: float
    steering_ohms: float
    fanout: int
    fanout_limit: int
    supply_amps_worst: float
    supply_amps_typical: float
    bias_amps_worst: float
    clock_to_q_seconds: float = 0.0
    setup_seconds: float = 0.0


@dataclass(frozen=True)
class Clock:
    """What the plan's registers need from the clock and the reset line.

    The clock net ``net`` takes a falling step of ``swing_volts`` (the
    steering works for any step from ``swing_min_volts`` to
    ``swing_max_volts``; keep within +-``tolerance`` of the nominal), falling
    within ``fall_seconds_max``, into ``load_farads``. Its DC level does not
    matter (the steering capacitors block it). ``reset_net`` rests at B+
    through ``reset_pullup_ohms``; a momentary contact from it to BIAS sets
    every register to its reset state.
    """

    net: str
    reset_net: str
    swing_volts: float
    swing_min_volts: float
    swing_max_volts: float
    tolerance: float
    fall_seconds_max: float
    load_farads: float
    reset_pullup_ohms: float


@dataclass(frozen=True)
class StageTiming:
    """One stage's worst delays (its input's midpoint crossing to its output's) for each output edge.

    ``*_seconds``: the nominal estimate; ``*_seconds_worst``: the worst-case
    bound (the slow corner, docs/registers.md).
    """

    id: str
    output: str
    rise_seconds: float
    fall_seconds: float
    rise_seconds_worst: float = 0.0
    fall_seconds_worst: float = 0.0


@dataclass(frozen=True)
class Timing:
    """The plan's timing: the nominal estimate and the worst-case bound (docs/registers.md).

    ``path``: the nets of the critical path at nominal from ``start``
    ("register q0", "input a") to ``end`` ("register q1", "output y");
    ``path_seconds`` its delay to the end's midpoint crossing (from the
    clock's falling edge when it starts at a register, else from the input's
    change), the end's setup time included when it ends at a register. With
    registers: ``clock_to_q_seconds``, ``setup_seconds`` (worst over the
    registers), ``high_seconds_min`` / ``low_seconds_min`` the shortest clock
    phases, ``min_period_seconds`` (all nominal). ``output_seconds``: the
    latest design output's midpoint crossing. ``wiring_farads``: the wiring
    allowance per node; ``corner``: the nominal conditions.
    The bound: ``corner_worst`` (the slow corner), ``path_worst`` from
    ``start_worst`` to ``end_worst`` and ``path_seconds_worst``,
    ``output_seconds_worst``, ``clock_to_q_seconds_worst``,
    ``min_period_seconds_worst``: the slow corner's estimate times 1 +
    ``margin`` (the estimate's tolerance against ngspice); ``max_clock_hz`` =
    1 / ``min_period_seconds_worst``.
    """

    stages: tuple[StageTiming, ...]
    path: tuple[str, ...]
    path_seconds: float
    start: str
    end: str
    output_seconds: float
    wiring_farads: float
    margin: float
    corner: str
    clock_to_q_seconds: float | None = None
    setup_seconds: float | None = None
    high_seconds_min: float | None = None
    low_seconds_min: float | None = None
    min_period_seconds: float | None = None
    max_clock_hz: float | None = None
    corner_worst: str = ""
    path_worst: tuple[str, ...] = ()
    start_worst: str = ""
    end_worst: str = ""
    path_seconds_worst: float = 0.0
    output_seconds_worst: float = 0.0
    clock_to_q_seconds_worst: float | None = None
    min_period_seconds_worst: float | None = None


@dataclass(frozen=True)
class Plan:
    """Everything ``tubeplan plan`` decided; the report layer only formats it.

    Family levels at every plate node, worst case: ``high_volts`` or more for
    a high, ``low_volts`` or less for a low from an inverting stage,
    ``follower_low_volts`` or less from a follower. ``registers`` and
    ``clock``: the clocked registers (none for a combinational design);
    ``timing``: the delay estimate and, with registers, the highest safe clock.
    ``tube_wear``: (type, fraction of nominal current) the family was designed
    for, per amplifying type in the stock (its condition, else the rules'
    wear); ``supply_tolerance``: the fractional supply tolerance it was
    designed for (resistor tolerances are on the parts).
    ``input_fanout_limits``: input -> the loads its source drives, where the
    design declares it (the others are ideal sources).
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
    registers: tuple[PlacedRegister, ...] = ()
    clock: Clock | None = None
    timing: Timing | None = None
    tube_wear: tuple[tuple[str, float], ...] = ()
    supply_tolerance: float = 0.0
    input_fanout_limits: tuple[tuple[str, int], ...] = ()
