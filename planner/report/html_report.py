"""report.html: one self-contained page (inline CSS and SVG; nothing is fetched from a network).

The page is the jinja2 template ``templates/report.html.j2`` (with ``parts.html.j2``,
``budget_chart.svg.j2`` and ``report.css``) rendered by ``engine.render`` with autoescape on: every
value the user wrote (design, input and output names, winding names, file names) is escaped by the
engine, never by hand. Only drawings made by a program that writes well-formed SVG, and the
simulation section (rendered the same way), go in unescaped, marked ``Markup``.
"""

from __future__ import annotations

from dataclasses import dataclass

from markupsafe import Markup

import planner

from .budgets import HEADROOM, SURGE_FACTORS, Budgets, supply_warnings
from .cautions import CAUTIONS
from .content import ReportContent
from .designators import counted
from .drawings import Template
from .engine import render
from .proof_section import simulation_html
from .tables import (bom_table, heater_table, networks_table, outputs_table, rail_table, resistor_table,
                     stage_table, stock_table, wiring_table)
from .timing_text import clock_lines, register_table, stage_timing_table, timing_lines

_BAR_WIDTH, _LABEL_WIDTH, _ROW = 460, 170, 30


@dataclass(frozen=True)
class Bar:
    """One supply's bar in the chart: its label, load as a share of the limit, colour and length."""

    y: int
    label: str
    share: float
    fill: str
    length: float
    text: str


@dataclass(frozen=True)
class Chart:
    """The supply-load chart laid out for ``budget_chart.svg.j2``: bars, then the axis ticks (x, fraction)."""

    width: int
    height: int
    bars: tuple[Bar, ...]
    ticks: tuple[tuple[float, float], ...]
    axis_y: int
    label_width: int = _LABEL_WIDTH
    bar_width: int = _BAR_WIDTH


def budget_chart(budgets: Budgets) -> Chart:
    """Lay out the bar chart of each supply's planned load as a share of what it may deliver.

    A bar is green up to 60 % of the limit, amber up to 85 %, red beyond; cost O(windings).
    """
    b = budgets
    rows = [(f"heater {w.id} ({w.volts_text})", w.amps, w.max_amps, f"{w.amps:.2f} of {w.max_amps:g} A")
            for w in b.windings]
    rows.append(("B+ worst case", b.plate.ma_worst, b.plate.max_ma,
                 f"{b.plate.ma_worst:.1f} of {b.plate.max_ma:g} mA"))
    rows.append(("B+ typical", b.plate.ma_typical, b.plate.max_ma,
                 f"{b.plate.ma_typical:.1f} of {b.plate.max_ma:g} mA"))
    rows.append(("bias", b.bias.ma_worst, b.bias.max_ma, f"{b.bias.ma_worst:.1f} of {b.bias.max_ma:g} mA"))
    bars = []
    for i, (label, load, limit, text) in enumerate(rows):
        share = load / limit if limit else 0.0
        fill = "#2f7d4f" if share <= 0.6 else "#c98a12" if share <= 0.85 else "#a8321e"
        bars.append(Bar(8 + i * _ROW, label, share, fill, max(1.0, min(share, 1.0) * _BAR_WIDTH), text))
    ticks = tuple((_LABEL_WIDTH + fraction * _BAR_WIDTH, fraction) for fraction in (0.0, 0.25, 0.5, 0.75, 1.0))
    return Chart(_LABEL_WIDTH + _BAR_WIDTH + 190, _ROW * len(rows) + 30, tuple(bars), ticks, 8 + len(rows) * _ROW)


#: Resistors shown before the full list is folded away.
MOST_LOADED = 12

SECTIONS = (("summary", "Summary"), ("stock", "Stock"), ("budgets", "Budgets"), ("stages", "Stages"),
            ("timing", "Registers and timing"), ("drawings", "Stage drawings"), ("simulation", "Simulation"),
            ("bom", "Bill of materials"),
            ("wiring", "Wiring list"), ("safety", "Safety"))


def _drawing(template: Template) -> Template:
    # Safe to insert unescaped: schemdraw serialises its SVG with xml.etree, which escapes every label
    # (the stage and net names among them); drawings.py only scales the root element's size.
    return Template(template.title, template.stages, Markup(template.svg))


def report_html(content: ReportContent) -> str:
    """The whole report page. Deterministic: the same content gives the same text.

    Cost: O(stages + parts + connections) to gather, plus one template render.
    """
    plan, b = content.plan, content.budgets
    logic = sum(1 for s in plan.stages if s.kind == "inverting")
    figures = [counted(number, noun).split(" ", 1)
               for number, noun in ((len(plan.envelopes), "envelope"), (logic, "logic stage"),
                                    (len(plan.stages) - logic, "follower"))]
    figures += [(f"{b.heater_watts:.1f} W", "heater power"), (f"{b.plate.ma_worst:.1f} mA", "B+ worst case"),
                (f"{b.heat_watts:.1f} W", "heat to get rid of")]
    folded = len(b.resistors) > MOST_LOADED
    tables = {"outputs": outputs_table(plan), "networks": networks_table(plan), "stock": stock_table(plan),
              "heaters": heater_table(b), "rails": rail_table(b), "resistors": resistor_table(b),
              "most_loaded": resistor_table(b, most_loaded=MOST_LOADED) if folded else None,
              "stages": stage_table(plan), "registers": register_table(plan) if plan.registers else None,
              "stage_timing": stage_timing_table(plan) if plan.timing is not None else None,
              "bom": bom_table(content.bom), "wiring": wiring_table(content.wiring)}
    return render(
        "report.html.j2",
        plan=plan, b=b, sol=plan.solution, version=planner.__version__, design_path=content.design_path,
        stock_path=content.stock_path, sections=SECTIONS, cautions=CAUTIONS, figures=figures,
        warnings=supply_warnings(b), tables=tables, chart=budget_chart(b), surge=SURGE_FACTORS, headroom=HEADROOM,
        most_loaded=MOST_LOADED, clock_lines=clock_lines(plan) if plan.registers else (),
        timing_lines=timing_lines(plan) if plan.timing is not None else (),
        drawings=[_drawing(t) for t in content.templates],
        # Safe to insert unescaped: the section is rendered by the same engine, with autoescape.
        simulation=Markup(simulation_html()))
