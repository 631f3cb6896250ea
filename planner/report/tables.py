"""The report's tables as plain text cells, shared by the HTML and Markdown reports."""

from __future__ import annotations

from dataclasses import dataclass

from planner.mapping import Plan
from planner.units import milliamps

from .bom import BomLine, tube_label
from .budgets import Budgets
from .designators import natural_key, ranges
from .wiring import Connection


@dataclass(frozen=True)
class Table:
    """Headers, rows of text cells, and which columns are numbers (right-aligned)."""

    headers: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    numeric: tuple[int, ...] = ()


def _ma(value: float) -> str:
    return f"{value:.1f} mA"


def outputs_table(plan: Plan) -> Table:
    forms = dict(plan.forms)
    return Table(("output", "net", "built from"),
                 tuple((name, net, forms.get(name, "")) for name, net in plan.outputs))


def networks_table(plan: Plan) -> Table:
    """Every candidate stage network the planner tried: stages, sections, envelopes, chosen or why not."""
    chosen = plan.solution.network
    rows = []
    for n in plan.solution.networks:
        envelopes = "" if n.envelopes is None else f"{n.envelopes:g}"
        verdict = "chosen" if n.label == chosen else n.note
        rows.append((n.label, "" if n.stages is None else str(n.stages),
                     "" if n.sections is None else str(n.sections), envelopes, verdict))
    return Table(("network", "stages", "sections", "envelopes", ""), tuple(rows), numeric=(1, 2, 3))


def stock_table(plan: Plan) -> Table:
    return Table(("tube", "on hand", "used", "left in stock", "reserve kept", "scarce"),
                 tuple((tube_label(s), str(s.on_hand), str(s.used), str(s.on_hand - s.used), str(s.reserve),
                        "yes" if s.scarce else "") for s in plan.stock), numeric=(1, 2, 3, 4))


def heater_table(budgets: Budgets) -> Table:
    return Table(("winding", "volts", "load", "available", "power", "cold-start surge", "rate at least",
                  "heaters"),
                 tuple((w.id, w.volts_text, f"{w.amps:.2f} A", f"{w.max_amps:g} A", f"{w.watts:.1f} W",
                        f"{w.surge_amps_low:.1f} to {w.surge_amps_high:.1f} A", f"{w.rating_amps:.2f} A",
                        ranges(w.envelopes)) for w in budgets.windings), numeric=(1, 2, 3, 4, 6))


def rail_table(budgets: Budgets) -> Table:
    p, b = budgets.plate, budgets.bias
    return Table(("supply", "volts", "worst case", "typical", "available", "power (worst)", "rate at least"),
                 (("plate (B+)", f"{p.volts:g} V", _ma(p.ma_worst), _ma(p.ma_typical), f"{p.max_ma:g} mA",
                   f"{p.watts_worst:.2f} W", f"{p.rating_ma:.0f} mA"),
                  ("bias", f"{b.volts:g} V", _ma(b.ma_worst), _ma(b.ma_typical), f"{b.max_ma:g} mA",
                   f"{b.watts_worst:.2f} W", f"{b.rating_ma:.1f} mA")), numeric=(1, 2, 3, 4, 5, 6))


def resistor_table(budgets: Budgets, *, most_loaded: int | None = None) -> Table:
    """Each resistor's dissipation; with ``most_loaded``, only that many, highest share of rating first."""
    resistors = list(budgets.resistors)
    if most_loaded is not None:
        share = lambda r: r.watts / r.rating_watts if r.rating_watts else 0.0
        resistors = sorted(resistors, key=lambda r: (-share(r), natural_key(r.ref)))[:most_loaded]
    rows = []
    for r in resistors:
        share = f"{100 * r.watts / r.rating_watts:.0f} %" if r.rating_watts else ""
        rows.append((r.ref, r.value, r.role, r.stage or "", f"{r.watts * 1000:.1f} mW",
                     "" if r.rating_watts is None else f"{r.rating_watts:g} W", share))
    return Table(("ref", "value", "role", "stage", "dissipation", "rating", "of rating"), tuple(rows),
                 numeric=(4, 5, 6))


def _branch_text(branch) -> str:
    joined = " & ".join(branch.inputs)
    diodes = f" via {ranges(branch.diodes)}" if branch.diodes else ""
    return f"{joined} on {branch.envelope}.{branch.section} ({branch.tube}, {branch.means}){diodes}"


def stage_table(plan: Plan) -> Table:
    rows = []
    for s in plan.stages:
        if s.kind == "follower":
            what = f"copies {s.input} on {s.envelope}.{s.section} ({s.tube})"
            load = "" if s.load_ohms is None else f"{s.load_ohms / 1000:g}k to cathode"
        else:
            what = "; ".join(_branch_text(b) for b in s.branches) or "(no branches)"
            load = "" if s.plate_load_ohms is None else f"{s.plate_load_ohms / 1000:g}k"
        rows.append((s.id, s.view, s.output, what, load, f"{s.fanout} of {s.fanout_limit}",
                     f"{milliamps(s.supply_amps_worst):.2f} / {milliamps(s.supply_amps_typical):.2f} mA"))
    return Table(("stage", "view", "output", "branches (conduct when all inputs high)", "load",
                  "fan-out (of limit)", "B+ worst / typical"), tuple(rows))


def bom_table(lines: tuple[BomLine, ...]) -> Table:
    rows = []
    for line in lines:
        price = "" if line.unit_price is None else f"{line.unit_price:.2f}"
        total = "" if line.total is None else f"{line.total:.2f}"
        stock = "" if line.left_in_stock is None else f"{line.left_in_stock} left, {line.reserve_kept} reserve"
        rows.append((str(line.item), line.group, str(line.quantity), line.description, ranges(line.designators),
                     stock, price, total))
    return Table(("#", "group", "qty", "part", "designators", "stock", "unit price", "total"), tuple(rows),
                 numeric=(0, 2, 6, 7))


def wiring_table(rows: tuple[Connection, ...]) -> Table:
    return Table(("net", "terminal", "function", "part", "stage"),
                 tuple((r.net, r.terminal, r.function, r.part, r.stage or "") for r in rows))
