"""Summaries printed by ``tubeplan check``: what the files say, before any planning."""

from __future__ import annotations

from collections import Counter

from tabulate import tabulate

from planner.logic import MAX_TABLE_INPUTS, output_support, output_table
from planner.spec import Design, Stock
from planner.units import milliamps


def design_summary(design: Design) -> str:
    """Inputs, signals, registers, and each output with its inputs and care-set size."""
    lines = [f"design {design.name!r} ({design.path})"]
    if design.registers:
        lines.append(f"registers ({len(design.registers)}): " + ", ".join(
            f"{reg.name} (reset {reg.reset})" for reg in design.registers))
    registers = {reg.name for reg in design.registers}
    design = design.combinational()
    shown_inputs = [f"{spec.name} (and ~{spec.name})" if spec.complement else spec.name
                    for spec in design.inputs if spec.name not in registers]
    lines.append(f"inputs ({len(shown_inputs)}): {', '.join(shown_inputs)}")
    if design.signals:
        lines.append(f"signals ({len(design.signals)}): {', '.join(design.signal_names)}")
    rows = []
    for output in design.outputs:
        names = output_support(design, output)
        if len(names) > MAX_TABLE_INPUTS:
            rows.append([output.name, f"{len(names)} inputs", "too many to count", ""])
            continue
        table = output_table(design, output, names)
        care = bin(table.care).count("1")
        rows.append([output.name, ", ".join(names) or "(constant)", f"{care} of {1 << len(names)}",
                     bin(table.on).count("1")])
    lines.append(tabulate(rows, headers=["output", "depends on", "care set", "true on"]))
    return "\n".join(lines)


def stock_summary(stock: Stock) -> str:
    """Usable envelopes per type, sections by kind, supplies and heater amps available."""
    rows, kinds = [], Counter()
    for entry in stock.tubes:
        tube = stock.catalogue.get(entry.tube)
        usable = entry.count - entry.reserve
        section_kinds = Counter(section.kind for section in tube.sections)
        for kind, number in section_kinds.items():
            kinds[kind] += number * usable
        rows.append([entry.tube, tube.base, entry.count, entry.reserve, usable,
                     ", ".join(f"{n} {k}" for k, n in sorted(section_kinds.items())),
                     "yes" if entry.scarce else ""])
    lines = [f"stock ({stock.path})",
             tabulate(rows, headers=["tube", "base", "on hand", "reserve", "usable", "sections", "scarce"]),
             "usable sections by kind: " + ", ".join(f"{n} {k}" for k, n in sorted(kinds.items())),
             f"plate supply {stock.plate.volts:g} V, {milliamps(stock.plate.max_amps):g} mA max; "
             f"bias supply {stock.bias.volts:g} V, {milliamps(stock.bias.max_amps):g} mA max",
             "heater windings: " + ", ".join(f"{w.id} {w.volts:g} V {w.max_amps:g} A"
                                             + (f" at {w.elevated_volts:+g} V DC" if w.elevated_volts else "")
                                             for w in stock.windings)
             + f" ({sum(w.max_amps for w in stock.windings):g} A in all)",
             f"diodes: {stock.diodes}"]
    return "\n".join(lines)
