"""Bill of materials: tubes, sockets, resistors, diodes, capacitors and supply ratings.

Quantities are counts over the plan's envelopes and parts list; nothing is
recomputed. Reference designators use IEEE 315 class letters (V tube, R
resistor, D diode, C capacitor); a tube socket takes its tube's designator
behind X (XV1 holds V1), the socket letter of IEEE 200 (from memory).
"""

from __future__ import annotations

import csv
import io
from collections import defaultdict
from collections.abc import Mapping
from dataclasses import dataclass

from planner.mapping import Plan

from .budgets import HEADROOM, SURGE_FACTORS, plan_budgets
from .cautions import CAUTIONS
from .designators import counted, natural_key, ranges

GROUPS = ("tube", "socket", "resistor", "diode", "capacitor", "supply")


FROM_MEMORY = "data from memory: wider design allowance"


def tube_label(s) -> str:
    """The type's name, with a mark when its data are from memory (no source read)."""
    return f"{s.tube} ({FROM_MEMORY})" if s.from_memory else s.tube


@dataclass(frozen=True)
class BomLine:
    """One line of the bill of materials.

    ``unit_price`` is None where the stock file gives no price; supply lines
    are ratings to buy or check, never priced. ``left_in_stock`` and
    ``reserve_kept`` are set on tube lines only.
    """

    item: int
    group: str
    quantity: int
    description: str
    designators: tuple[str, ...]
    unit_price: float | None = None
    left_in_stock: int | None = None
    reserve_kept: int | None = None

    @property
    def total(self) -> float | None:
        return None if self.unit_price is None else self.unit_price * self.quantity


def _percent(fraction: float | None) -> str:
    return "" if fraction is None else f"{fraction * 100:g} %"


def _watts(value: float | None) -> str:
    return "" if value is None else f"{value:g} W"


def bom_lines(plan: Plan, *, prices: Mapping[str, float] | None = None,
              tube_prices: Mapping[str, float] | None = None) -> tuple[BomLine, ...]:
    """The bill of materials of ``plan``, grouped and sorted.

    ``prices``: unit prices by part class ("resistor", "socket", "diode",
    "capacitor"), as in the stock file's ``prices``; ``tube_prices``: unit
    price by tube type (the stock's ``unit_price``). Resistors are grouped by
    value, wattage rating and tolerance; diodes and capacitors by value; tubes
    by type, sockets by base. Cost O(parts log parts).
    """
    prices = dict(prices or {})
    tube_prices = dict(tube_prices or {})
    rows: list[tuple] = []

    by_type: dict[str, list[str]] = defaultdict(list)
    by_base: dict[str, list[str]] = defaultdict(list)
    for envelope in plan.envelopes:
        by_type[envelope.tube].append(envelope.ref)
        by_base[envelope.base].append(envelope.ref)
    stock = {entry.tube: entry for entry in plan.stock}
    for tube in sorted(by_type, key=natural_key):
        refs = by_type[tube]
        entry = stock.get(tube)
        left = None if entry is None else entry.on_hand - len(refs)
        scarce = " (scarce)" if entry is not None and entry.scarce else ""
        if entry is not None and entry.from_memory:
            scarce += f" ({FROM_MEMORY})"
        rows.append(("tube", len(refs), f"{tube} tube{scarce}", refs, tube_prices.get(tube), left,
                     None if entry is None else entry.reserve))
    for base in sorted(by_base):
        refs = by_base[base]
        rows.append(("socket", len(refs), f"{base} tube socket", [f"X{r}" for r in refs], prices.get("socket"),
                     None, None))

    groups: dict[tuple, list[str]] = defaultdict(list)
    for part in plan.parts:
        if part.kind == "resistor":
            key = ("resistor", part.ohms or 0.0, part.watts_rating or 0.0, part.tolerance or 0.0, part.value)
            groups[key].append(part.ref)
        elif part.kind in ("diode", "capacitor"):
            groups[(part.kind, part.farads or 0.0, part.volts_rating or 0.0, 0.0, part.value)].append(part.ref)
    order = {group: i for i, group in enumerate(GROUPS)}
    for key in sorted(groups, key=lambda k: (order[k[0]], k[1], k[2], k[3], k[4])):
        kind, _, rating, tolerance, value = key
        refs = sorted(groups[key], key=natural_key)
        if kind == "resistor":
            text = " ".join(x for x in (f"{value} ohm resistor", _watts(rating or None),
                                        _percent(tolerance or None)) if x)
        elif kind == "capacitor":
            text = f"{value} capacitor" + (f", rated at least {rating:.0f} V" if rating else "")
        elif rating > plan.plate_volts - plan.bias_volts:  # register steering: B+ and the clock step
            text = f"{value}, rated at least {rating:.0f} V reverse"
        else:  # an AND diode may see up to the whole span between the rails in reverse
            text = f"{value}, rated at least {plan.plate_volts - plan.bias_volts:g} V reverse (the B+ to BIAS span)"
        rows.append((kind, len(refs), text, refs, prices.get(kind), None, None))

    budgets = plan_budgets(plan)
    headroom = f"{HEADROOM * 100:g} % headroom (common practice)"
    low, high = SURGE_FACTORS
    rows.append(("supply", 1, f"plate supply (B+) {plan.plate_volts:g} V DC, rated at least "
                              f"{budgets.plate.rating_ma:.0f} mA: worst-case load {budgets.plate.ma_worst:.1f} mA "
                              f"+ {headroom}", [], None, None, None))
    rows.append(("supply", 1, f"bias supply {plan.bias_volts:g} V DC, rated at least "
                              f"{budgets.bias.rating_ma:.1f} mA: load {budgets.bias.ma_worst:.1f} mA + {headroom}",
                 [], None, None, None))
    for w in budgets.windings:
        if not w.envelopes:
            rows.append(("supply", 0, f"heater winding {w.id} {w.volts:g} V: not used by this plan", [], None, None,
                         None))
            continue
        elevated = ""
        if w.elevated_volts:
            elevated = (f"; elevated: the winding is referred to {w.elevated_volts:+g} V DC (a tap or divider off "
                        f"the supplies, bypassed to ground), so its insulation to the other windings and the core "
                        f"must be rated for that voltage on top of the mains (common practice)")
        rows.append(("supply", 1, f"heater winding {w.id} {w.volts:g} V, rated at least {w.rating_amps:.2f} A "
                                  f"({w.volts * w.rating_amps:.1f} VA): load {w.amps:.2f} A + {headroom}; "
                                  f"cold-start surge {w.surge_amps_low:.1f} to {w.surge_amps_high:.1f} A "
                                  f"({low:g} to {high:g} times, common practice){elevated}",
                     list(w.envelopes), None, None, None))
    return tuple(BomLine(i, group, quantity, text, tuple(refs), price, left, reserve)
                 for i, (group, quantity, text, refs, price, left, reserve) in enumerate(rows, start=1))


def bom_total(lines) -> tuple[float, int]:
    """(sum of priced line totals, number of lines without a price, supply lines excluded)."""
    priced = [line.total for line in lines if line.group != "supply" and line.total is not None]
    unpriced = sum(1 for line in lines if line.group != "supply" and line.total is None)
    return sum(priced), unpriced


def _money(value: float | None) -> str:
    return "" if value is None else f"{value:.2f}"


CSV_HEADER = ("item", "group", "quantity", "description", "designators", "left_in_stock", "reserve_kept",
              "unit_price", "line_total")


def bom_csv(lines) -> str:
    """bom.csv: one row a line, then a total row and one caution row per caution."""
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(CSV_HEADER)
    for line in lines:
        writer.writerow((line.item, line.group, line.quantity, line.description, " ".join(line.designators),
                         "" if line.left_in_stock is None else line.left_in_stock,
                         "" if line.reserve_kept is None else line.reserve_kept,
                         _money(line.unit_price), _money(line.total)))
    total, unpriced = bom_total(lines)
    if total or not unpriced:
        note = f"total of priced lines; {counted(unpriced, 'line')} without a price" if unpriced else "total"
        writer.writerow(("", "total", "", note, "", "", "", "", _money(total)))
    for heading, text in CAUTIONS:
        writer.writerow(("", "caution", "", f"{heading}: {text}", "", "", "", "", ""))
    return out.getvalue()


def _md_cell(text: str) -> str:
    return text.replace("|", "\\|")


def bom_markdown(lines, *, title: str) -> str:
    """bom.md: the bill of materials as Markdown tables by group, the total and the cautions."""
    out = [f"# Bill of materials: {title}", "", "**Safety first.**", ""]
    out += [f"- **{heading}.** {text}" for heading, text in CAUTIONS] + [""]
    names = {"tube": "Tubes", "socket": "Sockets", "resistor": "Resistors", "diode": "Diodes",
             "capacitor": "Capacitors", "supply": "Supplies and transformer ratings"}
    for group in GROUPS:
        members = [line for line in lines if line.group == group]
        if not members:
            continue
        out += [f"## {names[group]}", ""]
        if group == "tube":
            out += ["| # | qty | part | designators | left in stock | reserve kept | unit price | total |",
                    "|---|---:|---|---|---:|---:|---:|---:|"]
            out += [f"| {m.item} | {m.quantity} | {_md_cell(m.description)} | {ranges(m.designators)} | "
                    f"{'' if m.left_in_stock is None else m.left_in_stock} | "
                    f"{'' if m.reserve_kept is None else m.reserve_kept} | {_money(m.unit_price)} | "
                    f"{_money(m.total)} |" for m in members]
        elif group == "supply":
            out += ["| # | rating | heaters on it |", "|---|---|---|"]
            out += [f"| {m.item} | {_md_cell(m.description)} | {ranges(m.designators)} |" for m in members]
        else:
            out += ["| # | qty | part | designators | unit price | total |", "|---|---:|---|---|---:|---:|"]
            out += [f"| {m.item} | {m.quantity} | {_md_cell(m.description)} | {ranges(m.designators)} | "
                    f"{_money(m.unit_price)} | {_money(m.total)} |" for m in members]
        out.append("")
    total, unpriced = bom_total(lines)
    if total:
        suffix = (f" ({counted(unpriced, 'line')} {'has' if unpriced == 1 else 'have'} no price in the stock file)"
                  if unpriced else "")
        out += [f"**Total of priced lines: {total:.2f}**{suffix}", ""]
    return "\n".join(out)
