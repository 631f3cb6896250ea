"""The wiring list: one row per connection, by net, with each pin's function.

Rows come from the plan's parts list (tube pins by number, as the catalogue's
basing gives them); the catalogue is read only to name what a tube pin is.
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass

from planner.catalogue import Catalogue
from planner.mapping import Plan

from .designators import natural_key

_TWO_TERMINAL = {"resistor": {"1": "end 1", "2": "end 2"}, "capacitor": {"1": "end 1", "2": "end 2"},
                 "diode": {"A": "anode", "K": "cathode"}}


@dataclass(frozen=True)
class Connection:
    """One wire end: ``net`` at ``ref``.``pin`` (e.g. V1.6), what the pin is, and the part."""

    net: str
    ref: str
    pin: str
    function: str
    part: str
    stage: str | None

    @property
    def terminal(self) -> str:
        return f"{self.ref}.{self.pin}"


def tube_pin_functions(tube) -> dict[str, str]:
    """Pin number (text) -> function ("s1 plate", "heater", ...) from the catalogue's basing."""
    names = {}
    for section in tube.sections:
        for role, pin in section.pins.items():
            names.setdefault(str(pin), []).append(f"s{section.index} {role}")
    for pin in tube.heater_pins:
        names.setdefault(str(pin), []).append("heater")
    if tube.heater_centre_tap_pin is not None:
        names.setdefault(str(tube.heater_centre_tap_pin), []).append("heater centre tap")
    return {pin: " / ".join(roles) for pin, roles in names.items()}


def wiring_rows(plan: Plan, catalogue: Catalogue) -> tuple[Connection, ...]:
    """Every connection of the plan, sorted by net, then designator and pin (natural order).

    Each (part, pin) of the parts list appears exactly once. Cost O(pins log pins).
    """
    rows = []
    users = {(e.ref, s.index): s.stage for e in plan.envelopes for s in e.sections}
    # Heater nets of an elevated winding (H2 and H2_RET) sit at its DC reference.
    raised = {net: w.elevated_volts for w in plan.budget.windings if w.elevated_volts
              for net in (w.id, f"{w.id}_RET")}
    for part in plan.parts:
        stages: dict[str, str | None] = {}
        if part.kind == "tube":
            tube = catalogue.get(part.tube or part.value)
            functions = tube_pin_functions(tube)
            label = f"{tube.name} tube"
            for section in tube.sections:  # a tube pin belongs to the stage its section serves
                for pin in section.pins.values():
                    stages.setdefault(str(pin), users.get((part.ref, section.index)))
        else:
            functions = _TWO_TERMINAL.get(part.kind, {})
            # "silicon signal diode" names its kind already; "150k" does not
            label = part.value if part.value.endswith(part.kind) else f"{part.value} {part.kind}"
        for pin, net in part.pins:
            function = functions.get(pin, "")
            if net in raised and part.kind == "tube":
                function += f" (winding at {raised[net]:+g} V DC)"
            rows.append(Connection(net, part.ref, pin, function, label, stages.get(pin, part.stage)))
    return tuple(sorted(rows, key=lambda c: (natural_key(c.net), natural_key(c.ref), natural_key(c.pin))))


def wiring_csv(rows) -> str:
    """wiring.csv: header ``net,terminal,function,part,stage``, one row per connection."""
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(("net", "terminal", "function", "part", "stage"))
    for row in rows:
        writer.writerow((row.net, row.terminal, row.function, row.part, row.stage or ""))
    return out.getvalue()
