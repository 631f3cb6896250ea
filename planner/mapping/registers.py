"""Registers in the mapping: the logic they need, their classes in the model, and their parts.

A register is a bistable on a whole dual-triode envelope
(:mod:`planner.electrical.bistable`). Its steering takes the next state and
its complement as level inputs, so the logic planned is the design's
combinational view (``Design.combinational``: register outputs as inputs with
complements, next states as outputs ``NAME_next``) with one more output per
register, ``~NAME_next`` = NOT next. Both are proven with the rest of the
network before any plan is made.

Nets: q is the plate of section 2 (``NAME``), ~q the plate of section 1
(``~NAME``); the grids ``NAME.g1`` / ``NAME.g2``, the steering nodes
``NAME.x1`` / ``NAME.x2``; the clock ``CLK`` and the reset line ``RESET``
(with ``.1`` appended where the design already uses those names; a dot is
never part of a design name).
"""

from __future__ import annotations

from dataclasses import dataclass

from planner.electrical import RESET_PULLUP_OHMS, resistor_rating_watts
from planner.formula import FALSE, negate
from planner.spec import Design, OutputSpec

from .model import RegisterClass, RegisterWay
from .parts import NetlistBuilder
from .plan import BIAS_RAIL, GROUND, PLATE_RAIL, SectionUse

#: Prefix of the complement next-state outputs in the planned view.
COMPLEMENT = "~"


@dataclass(frozen=True)
class RegisterSetting:
    """What building the registers needs: the bistable of each usable type (name -> ``Bistable``),
    the clock and reset nets, and the clock's nominal swing."""

    bistables: dict
    clock: str
    reset: str
    swing_volts: float


def register_view(design: Design) -> Design:
    """The logic to plan: the combinational view plus ``~NAME_next`` for every register.

    A design without registers is returned as is.

    >>> from planner.spec import InputSpec, RegisterSpec, parse_expression
    >>> d = Design("t", "-", (InputSpec("t"),), registers=(RegisterSpec("q", parse_expression("q ^ t")),))
    >>> [o.name for o in register_view(d).outputs]
    ['q_next', '~q_next']
    """
    if not design.registers:
        return design
    view = design.combinational()
    extra = tuple(OutputSpec(COMPLEMENT + reg.next_output, negate(reg.next), FALSE,
                             f"complement of the next state of register {reg.name}") for reg in design.registers)
    return Design(view.name, view.path, view.inputs, view.signals, view.outputs + extra, view.lines)


def clock_nets(design: Design) -> tuple[str, str]:
    """The clock and reset net names: ``CLK`` and ``RESET``, or with ``.1`` where a design name is taken."""
    taken = set(design.input_names) | set(design.signal_names) | {o.name for o in design.outputs} | {
        r.name for r in design.registers}
    return tuple(name if name not in taken else f"{name}.1" for name in ("CLK", "RESET"))


def register_loads(design: Design, network) -> dict[str, int]:
    """Loads each register's bistable drives: the more loaded of its two output nets."""
    loads = network.load_counts()
    return {reg.name: max(loads.get(reg.name, 0), loads.get(COMPLEMENT + reg.name, 0)) for reg in design.registers}


def register_classes(design: Design, network, bistables: dict, kinds) -> tuple[tuple[RegisterClass, ...], list[str]]:
    """The model's register classes and the registers no stocked bistable can drive.

    A way is a stocked type with a bistable (``bistables``: tube name ->
    ``Bistable``) whose fan-out covers the register's loads; registers with
    the same ways are one class, in design order. Cost O(registers x types).
    """
    loads = register_loads(design, network)
    stocked = {k.tube for k in kinds}
    by_ways: dict[tuple, list[str]] = {}
    stuck = []
    for reg in design.registers:
        ways = tuple(RegisterWay(name, b.supply_amps_worst, b.supply_amps_typical, b.bias_amps_worst, b.fanout_limit)
                     for name, b in sorted(bistables.items()) if name in stocked and b.fanout_limit >= loads[reg.name])
        if not ways:
            most = max((b.fanout_limit for b in bistables.values()), default=0)
            stuck.append(f"register {reg.name} ({loads[reg.name]} loads; the stocked bistables drive at most "
                         f"{most})")
            continue
        by_ways.setdefault(ways, []).append(reg.name)
    return tuple(RegisterClass(tuple(names), ways) for ways, names in by_ways.items()), stuck


def register_parts(net: NetlistBuilder, uses: dict, reg, bistable, tube, ref: str, stage: str, nets: dict,
                   clock: str, reset: str) -> None:
    """Every part of one register's bistable, and its two sections' pins.

    ``nets``: "next" and "next_complement" (the level inputs). Per side k
    (1: ~q, 2: q): the plate load, the divider from the other plate to this
    grid (with its commutating capacitor), the steering capacitor from the
    clock, the steering resistor from the side's level input (D for side 1,
    ~D for side 2) and the steering diode (anode at the grid); the reset
    diode on the grid the reset state cuts off (G2 for reset 1, G1 for 0).
    """
    b = bistable
    plate = {1: COMPLEMENT + reg.name, 2: reg.name}
    grid = {k: f"{reg.name}.g{k}" for k in (1, 2)}
    node = {k: f"{reg.name}.x{k}" for k in (1, 2)}
    level = {1: nets["next"], 2: nets["next_complement"]}
    vb, vc = net.vb, net.vc
    for k in (1, 2):
        other = 3 - k
        rl = b.plate_load_ohms
        net.resistor(PLATE_RAIL, plate[k], rl, b.plate_load_watts,
                     min(b.supply_amps_worst ** 2 * net.hi(rl), vb ** 2 / net.lo(rl)), "plate load", stage)
        net.resistor(plate[other], grid[k], b.upper_ohms, b.upper_watts, vb ** 2 / net.lo(b.upper_ohms),
                     "divider upper", stage)
        net.resistor(grid[k], BIAS_RAIL, b.lower_ohms, b.lower_watts,
                     (b.bias_amps_worst / 2) ** 2 * net.lo(b.lower_ohms), "divider lower", stage)
        net.capacitor(plate[other], grid[k], b.commutating_farads, "commutating", stage,
                      volts_rating=vb + vc)
        net.capacitor(clock, node[k], b.steering_farads, "steering", stage, volts_rating=b.capacitor_volts)
        net.resistor(level[k], node[k], b.steering_ohms, b.steering_watts,
                     (vb + b.clock_swing_max_volts) ** 2 / net.lo(b.steering_ohms), "steering", stage)
        net.diode(grid[k], node[k], "steering diode", stage, volts_rating=b.diode_reverse_volts)
    net.diode(grid[2 if reg.reset else 1], reset, "reset diode", stage, volts_rating=vb + vc)
    for position, k in ((0, 1), (1, 2)):
        section = tube.amplifying_sections[position]
        pins = {"plate": plate[k], "grid": grid[k], "cathode": GROUND}
        pairs = tuple(sorted((role, pins[role]) for role in section.pins))
        for role, value in pairs:
            net.pin(ref, section.pins[role], value)
        uses[ref].append(SectionUse(section.index, "bistable", stage, pairs))


def reset_pullup(net: NetlistBuilder, reset: str) -> None:
    """The reset line's one pull-up to B+ (a reset contact puts the whole B+ to BIAS span across it)."""
    span = net.vb + net.vc
    watts = span ** 2 / net.lo(RESET_PULLUP_OHMS)
    net.resistor(PLATE_RAIL, reset, RESET_PULLUP_OHMS, resistor_rating_watts(watts), watts, "reset pull-up", None)


__all__ = ["COMPLEMENT", "RegisterSetting", "clock_nets", "register_classes", "register_loads", "register_parts",
           "register_view", "reset_pullup"]
