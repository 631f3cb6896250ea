"""Registers, clock and timing of a plan as text and tables (summary, Markdown and HTML reports)."""

from __future__ import annotations

from planner.mapping import Plan
from planner.units import picofarads

from .tables import Table


def seconds_text(seconds: float) -> str:
    """A duration in a readable unit.

    >>> seconds_text(3.2e-6), seconds_text(6.16e-4), seconds_text(0.0123), seconds_text(2.0)
    ('3.2 us', '616 us', '12.3 ms', '2 s')
    """
    for scale, unit in ((1.0, "s"), (1e-3, "ms"), (1e-6, "us"), (1e-9, "ns")):
        if abs(seconds) >= scale or unit == "ns":
            return f"{seconds / scale:.3g} {unit}"
    return f"{seconds:.3g} s"


def hz_text(hz: float) -> str:
    """A frequency in Hz, kHz or MHz.

    >>> hz_text(606.3), hz_text(12500.0)
    ('606 Hz', '12.5 kHz')
    """
    for scale, unit in ((1e6, "MHz"), (1e3, "kHz")):
        if hz >= scale:
            return f"{hz / scale:.3g} {unit}"
    return f"{hz:.3g} Hz"


def register_table(plan: Plan) -> Table:
    """One row per register: its envelope, nets, reset state, next state and timing."""
    rows = tuple((r.name, f"{r.envelope} ({r.tube})", f"{r.output} / {r.complement}", str(r.reset),
                  f"{r.next} / {r.next_complement}", r.form, f"{r.fanout} of {r.fanout_limit}",
                  seconds_text(r.clock_to_q_seconds), seconds_text(r.setup_seconds))
                 for r in plan.registers)
    return Table(("register", "envelope", "q / ~q nets", "reset", "next / ~next nets", "next state",
                  "fan-out (of limit)", "clock to q", "setup"), rows, numeric=(3, 7, 8))


def stage_timing_table(plan: Plan) -> Table:
    """Each stage's delays, input midpoint to output midpoint, per output edge: worst-case bound and nominal."""
    rows = tuple((s.id, s.output, seconds_text(s.rise_seconds_worst), seconds_text(s.fall_seconds_worst),
                  seconds_text(s.rise_seconds), seconds_text(s.fall_seconds))
                 for s in plan.timing.stages)
    return Table(("stage", "output", "rising, worst case", "falling, worst case", "rising, nominal",
                  "falling, nominal"), rows, numeric=(2, 3, 4, 5))


def clock_lines(plan: Plan) -> list[str]:
    """What the clock and the reset line must do, in sentences."""
    c = plan.clock
    if c is None:
        return []
    return [f"Clock net {c.net}: a falling step of {c.swing_volts:g} V (the steering works from "
            f"{c.swing_min_volts:.0f} V to {c.swing_max_volts:.0f} V; keep within +-{c.tolerance * 100:g} %), "
            f"falling within {seconds_text(c.fall_seconds_max)}, into {picofarads(c.load_farads):.0f} pF; its DC level "
            "does not matter. The registers take their next state on the falling edge.",
            f"Reset: {c.reset_net} rests at B+ through {c.reset_pullup_ohms / 1e6:g} MOhm; a momentary contact "
            f"from {c.reset_net} to BIAS sets every register to its reset state (the contact carries the B+ to "
            "BIAS voltage: use an insulated switch rated for it)."]


def timing_lines(plan: Plan) -> list[str]:
    """The critical path and, with registers, the highest safe clock, in sentences."""
    t = plan.timing
    if t is None:
        return []
    path = " -> ".join(t.path_worst)
    both = f"{seconds_text(t.path_seconds_worst)} worst case ({seconds_text(t.path_seconds)} nominal)"
    lines = []
    if plan.registers:
        if t.path_worst:
            lines.append(f"Critical path: {t.start_worst} to {t.end_worst} through {path}: {both} from the clock "
                         f"edge (clock to q up to {seconds_text(t.clock_to_q_seconds_worst)} worst case, setup "
                         "included).")
        else:
            lines.append("Every next state is constant: only the registers' own steering limits the clock.")
        lines.append(f"Highest safe clock: {hz_text(t.max_clock_hz)} (shortest period "
                     f"{seconds_text(t.min_period_seconds_worst)} worst case, {seconds_text(t.min_period_seconds)} "
                     f"nominal; clock high at least {seconds_text(t.high_seconds_min)} and low at least "
                     f"{seconds_text(t.low_seconds_min)} nominal).")
        if t.output_seconds:
            lines.append(f"Outputs settle {seconds_text(t.output_seconds_worst)} worst case "
                         f"({seconds_text(t.output_seconds)} nominal) after the clock edge.")
    elif t.path_worst:
        lines.append(f"Slowest path: {t.start_worst} to {t.end_worst} through {path}: {both} from the input's "
                     "change to the output's.")
    lines.append(f"Worst case: {t.corner_worst}. Nominal: {t.corner}. Each delay runs from an input's midpoint "
                 "crossing to the output's.")
    return lines


__all__ = ["clock_lines", "hz_text", "register_table", "seconds_text", "stage_timing_table", "timing_lines"]
