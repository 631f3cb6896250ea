"""The parts netlist of a placed network: every tube pin, resistor, diode and capacitor.

Circuits (the electrical layer's templates, planner.electrical):

* inverting stage: plate load from B+ to the output net; each section's plate
  on the output net, cathode to GND; a screen fed from B+ through the
  template's series resistor (and shunt to GND where it has one);
* every grid input: the receiver's divider, upper resistor from the driving
  net to the grid node, lower from the grid node to BIAS (a speed-up capacitor
  across the upper one when the rules ask for it);
* a diode-AND branch: a gate node pulled up to B+ through the receiver's
  pull-up, a diode from the gate node (anode) to each input net (cathode), and
  the receiver's divider from the gate node to the grid;
* follower: plate at B+, grid on the input net (through the template's grid
  stopper when it has one), cathode on the output net, cathode load from the
  output net to BIAS.

Tie-offs (common practice): a one-input branch on a dual-control section has
g3 at its cathode; a pentode's suppressor goes to its cathode; every electrode
of an unused section goes to that section's cathode, and the cathode to GND
unless it is shared with a used section (then it stays on that net), so an
unused section draws no current and no grid floats.  Unused diodes: both ends
to GND.  Heaters: a plain heater across the winding (``H1`` to ``H1_RET``);
a centre-tapped heater in parallel has both ends on ``H1_RET`` and the tap on
``H1``; in series, its ends across the winding and the tap left open.

Dissipation figures are worst-case upper bounds from the templates' worst
figures (plate supply high, resistors at their tolerance ends): a divider's
upper resistor (and a gate pull-up) with the whole high plate supply across it; a lower resistor
carrying the receiver's worst bias current; a plate load the lesser of its
stage's worst supply current and the whole high supply; a follower's cathode
load its worst bias current; a screen series resistor the whole high supply,
a shunt the bleeder's open-circuit voltage.  Designators: R, C, D and V class letters
(IEEE 315), numbered in stage order.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from planner.electrical import resistor_rating_watts

from .plan import BIAS_RAIL, GROUND, PLATE_RAIL, Part


def ohms_text(ohms: float) -> str:
    """Resistor value in the usual shorthand.

    >>> [ohms_text(v) for v in (470, 4700, 47000, 1e6, 2.2e6, 1500)]
    ['470', '4.7k', '47k', '1M', '2.2M', '1.5k']
    """
    for scale, suffix in ((1e6, "M"), (1e3, "k"), (1.0, "")):
        if ohms >= scale:
            return f"{ohms / scale:.3g}{suffix}"
    return f"{ohms:.3g}"


def farads_text(farads: float) -> str:
    """Capacitor value: ``22p``, ``4.7n``."""
    for scale, suffix in ((1e-6, "u"), (1e-9, "n"), (1e-12, "p")):
        if farads >= scale:
            return f"{farads / scale:.3g}{suffix}"
    return f"{farads:.3g}"


@dataclass
class _Counter:
    """Running designator numbers by class letter."""

    next: dict = field(default_factory=lambda: {"R": 0, "C": 0, "D": 0})

    def __call__(self, letter: str) -> str:
        self.next[letter] += 1
        return f"{letter}{self.next[letter]}"


class NetlistBuilder:
    """Collects parts stage by stage; tube pins are gathered per socket and emitted last."""

    def __init__(self, family, stock, tolerance: float):
        self.family, self.stock, self.tol = family, stock, tolerance
        self.vb = stock.plate.volts * (1 + family.rules.supply_tolerance)
        self.vc = -stock.bias.volts * (1 + family.rules.supply_tolerance)
        self.ref = _Counter()
        self.parts: list[Part] = []
        self.pins: dict[str, dict[int, str]] = {}

    def resistor(self, a: str, b: str, ohms: float, rating: float | None, watts: float, role: str,
                 stage: str | None) -> str:
        ref = self.ref("R")
        self.parts.append(Part(ref, "resistor", ohms_text(ohms), (("1", a), ("2", b)), role, stage, ohms=ohms,
                               watts_rating=rating, dissipation_watts=watts, tolerance=self.tol))
        return ref

    def capacitor(self, a: str, b: str, farads: float, role: str, stage: str,
                  volts_rating: float | None = None) -> str:
        ref = self.ref("C")
        self.parts.append(Part(ref, "capacitor", farads_text(farads), (("1", a), ("2", b)), role, stage,
                               farads=farads, volts_rating=volts_rating))
        return ref

    def diode(self, anode: str, cathode: str, role: str, stage: str, volts_rating: float | None = None) -> str:
        ref = self.ref("D")
        self.parts.append(Part(ref, "diode", "silicon signal diode", (("A", anode), ("K", cathode)), role, stage,
                               volts_rating=volts_rating))
        return ref

    def pin(self, socket: str, pin: int, net: str) -> None:
        held = self.pins.setdefault(socket, {})
        assert held.get(pin, net) == net, f"internal error: {socket} pin {pin} on both {held[pin]} and {net}"
        held[pin] = net

    # -- bounds -----------------------------------------------------------------

    def hi(self, ohms: float) -> float:
        return ohms * (1 + self.tol)

    def lo(self, ohms: float) -> float:
        return ohms * (1 - self.tol)

    def plate_load(self, stage, driver) -> None:
        r = driver.plate_load_ohms
        watts = min(driver.supply_amps_worst ** 2 * self.hi(r), self.vb ** 2 / self.lo(r))
        self.resistor(PLATE_RAIL, stage.output, driver.plate_load_ohms, driver.plate_load_watts, watts,
                      "plate load", stage.id)

    def grid_stopper(self, stage, source: str, grid: str, follower) -> None:
        """A follower's grid stopper; its rating from its worst grid current (twice the dissipation)."""
        r = follower.grid_stopper_ohms
        watts = follower.grid_amps_worst ** 2 * self.hi(r)
        self.resistor(source, grid, r, resistor_rating_watts(watts), watts, "grid stopper", stage.id)

    def screen(self, stage, driver, node: str) -> str:
        """Screen feed of one section; the net its screen pin goes on."""
        if driver.screen_series_ohms is None:
            return PLATE_RAIL
        self.resistor(PLATE_RAIL, node, driver.screen_series_ohms, driver.screen_series_watts,
                      self.vb ** 2 / self.lo(driver.screen_series_ohms), "screen series", stage.id)
        if driver.screen_shunt_ohms is not None:
            shunt, series = driver.screen_shunt_ohms, driver.screen_series_ohms
            open_volts = self.vb * self.hi(shunt) / (self.lo(series) + self.hi(shunt))
            self.resistor(node, GROUND, shunt, driver.screen_shunt_watts, open_volts ** 2 / self.lo(shunt),
                          "screen shunt", stage.id)
        return node

    def divider(self, stage, source: str, node: str, rec) -> None:
        """Upper and lower resistors (and speed-up capacitor) of a grid receiver."""
        self.resistor(source, node, rec.upper_ohms, rec.upper_watts, self.vb ** 2 / self.lo(rec.upper_ohms),
                      "divider upper", stage.id)
        self.resistor(node, BIAS_RAIL, rec.lower_ohms, rec.lower_watts,
                      rec.bias_amps_worst ** 2 * self.lo(rec.lower_ohms), "divider lower", stage.id)
        if rec.speedup_farads:
            self.capacitor(source, node, rec.speedup_farads, "speed-up", stage.id)

    def diode_gate(self, stage, inputs, gate: str, grid: str, rec, vacuum: list | None) -> tuple[str, ...]:
        """A diode-AND gate: pull-up from B+ to the gate node, a diode from the gate to each input
        (anode at the gate), and the receiver's divider from the gate to the grid; the diodes' designators."""
        self.resistor(PLATE_RAIL, gate, rec.pullup_ohms, rec.pullup_watts, self.vb ** 2 / self.lo(rec.pullup_ohms),
                      "gate pull-up", stage.id)
        refs = []
        for k, source in enumerate(inputs):
            if vacuum is None:
                refs.append(self.diode(gate, source, "AND diode", stage.id))
                continue
            ref, section = vacuum[k]
            self.pin(ref, section.pins["plate"], gate)
            self.pin(ref, section.pins["cathode"], source)
            refs.append(f"{ref}.{section.index}")
        self.divider(stage, gate, grid, rec)
        return tuple(refs)


def grid_node(stage_output: str, branch: int, grid: str) -> str:
    """Net of a grid behind its divider, e.g. ``n3.b1.g1``."""
    return f"{stage_output}.b{branch + 1}.{grid}"


def gate_node(stage_output: str, branch: int) -> str:
    """Net of a diode-AND gate node (the diodes' anodes), e.g. ``n3.b1.x``."""
    return f"{stage_output}.b{branch + 1}.x"


__all__ = ["NetlistBuilder", "farads_text", "gate_node", "grid_node", "ohms_text"]
