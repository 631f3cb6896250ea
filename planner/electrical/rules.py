"""The supplies and the design rules every stage template is checked against."""

from __future__ import annotations

from dataclasses import dataclass

from .eseries import e_series

DIODE_KINDS = ("solid-state", "vacuum", "none")

DIODE_DROP_VOLTS = {
    # Silicon small-signal diode (1N4148 class) between about 1 uA and 1 mA:
    # 0.3 V to 0.75 V forward (from memory, datasheet forward curves).
    "solid-state": (0.3, 0.75),
    # Vacuum diode (6AL5 class): contact potential lets it conduct with up
    # to about 1 V reverse, and the three-halves law gives well under 1 V at
    # the tens of microamperes here (from memory).
    "vacuum": (-1.0, 1.0),
}
"""Lowest and highest forward drop of a conducting AND-gate diode, by kind."""


@dataclass(frozen=True)
class Rails:
    """Nominal supplies: ``plate_volts`` (B+, positive) and ``bias_volts`` (negative)."""

    plate_volts: float
    bias_volts: float

    def __post_init__(self):
        if not self.plate_volts > 0:
            raise ValueError(f"plate supply must be positive, got {self.plate_volts} V")
        if not self.bias_volts < 0:
            raise ValueError(f"bias supply must be negative, got {self.bias_volts} V")


@dataclass(frozen=True)
class DesignRules:
    """What every template must satisfy, worst case.

    ``series``: E series of resistor values (IEC 60063). ``resistor_tolerance``
    and ``supply_tolerance``: fractional tolerances (each value lies anywhere
    in nominal * (1 +- tol)). ``wear``: fraction of nominal tube current a
    worn tube still gives, when the stock does not say (0.7: common practice).
    ``margin_volts``: how far below cut-off a low input must put a grid.
    ``speedup_caps``: also size a speed-up capacitor across each divider's
    upper resistor (compensated divider).
    ``diodes``: kind of AND-gate diode ("solid-state", "vacuum" or "none").
    ``max_grid_circuit_ohms``: most DC resistance from a grid to its return
    (datasheets cap it for fixed bias at 0.1-1 MOhm, from memory).
    ``max_grid_amps``: cap on positive-grid (clamp) current for types whose
    data give no rating (common practice: a fraction of a milliampere for
    small receiving tubes).
    ``max_branches``: most sections on one plate node; their cut-off leakage
    is counted against the high level.
    ``fanout_goal``: a driver's values are chosen for at least this fan-out
    (the most it can reach, if less); beyond it, the least supply current wins.
    ``max_plate_load_ohms``: largest plate load (common practice: a logic
    stage's plate load stays well under a megohm so that its node is not
    left to the loads' own pull-ups and its transitions stay fast).
    ``min_ohms`` / ``max_ohms``: range of resistor values used.
    ``unsourced_allowance``: the wider allowance for types whose model rests
    on figures from memory (``TubeType.model_from_memory``: no source was
    read for them): a worn tube gives (1 - a) times the wear's current, a
    strong tube (1 + a) times the model's, and the grid must go (1 + a)
    times as far for cut-off (0.15: our allowance for recalled figures,
    about the 15 % the datasheet checks allow; stated, not sourced).
    """

    series: str = "E24"
    resistor_tolerance: float = 0.05
    supply_tolerance: float = 0.05
    wear: float = 0.7
    margin_volts: float = 2.0
    speedup_caps: bool = False
    diodes: str = "solid-state"
    max_grid_circuit_ohms: float = 470e3
    max_grid_amps: float = 0.5e-3
    max_branches: int = 4
    fanout_goal: int = 10
    max_plate_load_ohms: float = 1e6
    min_ohms: float = 1e3
    max_ohms: float = 10e6
    unsourced_allowance: float = 0.15

    def __post_init__(self):
        e_series(self.series)
        for name in ("resistor_tolerance", "supply_tolerance"):
            v = getattr(self, name)
            if not 0 <= v < 0.5:
                raise ValueError(f"{name} must be in [0, 0.5), got {v}")
        if not 0 < self.wear <= 1:
            raise ValueError(f"wear must be in (0, 1], got {self.wear}")
        if self.margin_volts < 0:
            raise ValueError("margin_volts must not be negative")
        if self.diodes not in DIODE_KINDS:
            raise ValueError(f"diodes must be one of {', '.join(DIODE_KINDS)}, got {self.diodes!r}")
        if not self.max_grid_amps > 0 or not self.max_grid_circuit_ohms > 0:
            raise ValueError("max_grid_amps and max_grid_circuit_ohms must be positive")
        if self.max_branches < 1 or self.fanout_goal < 1:
            raise ValueError("max_branches and fanout_goal must be at least 1")
        if not 0 <= self.unsourced_allowance < 0.5:
            raise ValueError(f"unsourced_allowance must be in [0, 0.5), got {self.unsourced_allowance}")
        if not 0 < self.min_ohms < self.max_ohms:
            raise ValueError("need 0 < min_ohms < max_ohms")
