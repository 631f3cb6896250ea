"""report.html: one self-contained page (inline CSS and SVG; nothing is fetched from a network)."""

from __future__ import annotations

from html import escape

import planner

from .budgets import HEADROOM, SURGE_FACTORS, supply_warnings
from .cautions import CAUTIONS
from .content import ReportContent
from .designators import counted
from .proof_section import simulation_html
from .tables import (Table, bom_table, heater_table, networks_table, outputs_table, rail_table, resistor_table,
                     stage_table, stock_table, wiring_table)
from .timing_text import clock_lines, register_table, stage_timing_table, timing_lines

CSS = """
:root { --ink: #1d232b; --muted: #5a6470; --line: #d5dae0; --band: #f3f5f7; --accent: #2f5d8a;
        --warn: #a8321e; --warn-bg: #fdf1ee; }
* { box-sizing: border-box; }
body { margin: 0; color: var(--ink); background: #fff;
       font: 15px/1.45 "DejaVu Sans", "Segoe UI", Helvetica, Arial, sans-serif; }
header { background: #22384f; color: #fff; padding: 18px 32px 14px; }
header h1 { margin: 0 0 4px; font-size: 24px; font-weight: 600; }
header p { margin: 0; color: #c9d6e3; font-size: 13px; }
nav { background: var(--band); border-bottom: 1px solid var(--line); padding: 8px 32px; font-size: 13px; }
nav a { color: var(--accent); margin-right: 14px; text-decoration: none; }
main { max-width: 1200px; padding: 8px 32px 40px; }
h2 { font-size: 19px; margin: 30px 0 10px; padding-bottom: 4px; border-bottom: 2px solid var(--line); }
h3 { font-size: 15px; margin: 20px 0 6px; }
p.note { color: var(--muted); font-size: 13px; margin: 6px 0; }
table { border-collapse: collapse; margin: 8px 0 14px; font-size: 13px; }
th, td { border: 1px solid var(--line); padding: 4px 8px; text-align: left; vertical-align: top; }
th { background: var(--band); font-weight: 600; }
td.num { text-align: right; white-space: nowrap; font-variant-numeric: tabular-nums; }
tbody tr:nth-child(even) td { background: #fafbfc; }
.caution { border: 2px solid var(--warn); border-left-width: 8px; background: var(--warn-bg);
           padding: 10px 16px; margin: 18px 0; }
.caution h2 { color: var(--warn); border: none; margin: 4px 0 6px; }
.caution dt { font-weight: 700; color: var(--warn); margin-top: 6px; }
.caution dd { margin: 0 0 2px; }
.warning { border-left: 6px solid var(--warn); background: var(--warn-bg); padding: 4px 10px; }
.figures { display: flex; flex-wrap: wrap; gap: 10px; margin: 10px 0 6px; }
.figure { border: 1px solid var(--line); background: var(--band); padding: 8px 14px; min-width: 150px; }
.figure b { display: block; font-size: 20px; }
.figure span { color: var(--muted); font-size: 12px; }
.drawing { border: 1px solid var(--line); padding: 8px; margin: 6px 0 16px; overflow-x: auto; }
svg.schematic { display: block; max-width: 100%; height: auto; }
svg.plot { display: block; max-width: 100%; height: auto; }
@media print {
  .drawing { overflow: visible; break-inside: avoid; }
  svg.schematic, svg.plot { max-width: 100%; height: auto; }
  nav { display: none; }
}
code { font-family: "DejaVu Sans Mono", Consolas, monospace; font-size: 13px; }
details { margin: 4px 0 14px; }
summary { cursor: pointer; color: var(--accent); font-size: 13px; }
footer { color: var(--muted); font-size: 12px; border-top: 1px solid var(--line); margin-top: 30px;
         padding-top: 8px; }
"""

_BAR_WIDTH, _LABEL_WIDTH, _ROW = 460, 170, 30


def budget_chart(content: ReportContent) -> str:
    """An inline SVG bar chart: each supply's planned load as a share of what it may deliver."""
    b = content.budgets
    rows = [(f"heater {w.id} ({w.volts_text})", w.amps, w.max_amps, f"{w.amps:.2f} of {w.max_amps:g} A")
            for w in b.windings]
    rows.append(("B+ worst case", b.plate.ma_worst, b.plate.max_ma,
                 f"{b.plate.ma_worst:.1f} of {b.plate.max_ma:g} mA"))
    rows.append(("B+ typical", b.plate.ma_typical, b.plate.max_ma,
                 f"{b.plate.ma_typical:.1f} of {b.plate.max_ma:g} mA"))
    rows.append(("bias", b.bias.ma_worst, b.bias.max_ma, f"{b.bias.ma_worst:.1f} of {b.bias.max_ma:g} mA"))
    width, height = _LABEL_WIDTH + _BAR_WIDTH + 190, _ROW * len(rows) + 30
    parts = [f'<svg class="chart" xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height}" '
             f'viewBox="0 0 {width} {height}" role="img" aria-label="supply loads">',
             '<style>text{font:12px "DejaVu Sans",Arial,sans-serif;fill:#1d232b}</style>']
    for i, (label, load, limit, text) in enumerate(rows):
        y = 8 + i * _ROW
        share = load / limit if limit else 0.0
        fill = "#2f7d4f" if share <= 0.6 else "#c98a12" if share <= 0.85 else "#a8321e"
        bar = max(1.0, min(share, 1.0) * _BAR_WIDTH)
        parts += [f'<text x="{_LABEL_WIDTH - 8}" y="{y + 15}" text-anchor="end">{escape(label)}</text>',
                  f'<rect x="{_LABEL_WIDTH}" y="{y}" width="{_BAR_WIDTH}" height="20" fill="#eef1f4" '
                  'stroke="#d5dae0"/>',
                  f'<rect x="{_LABEL_WIDTH}" y="{y}" width="{bar:.1f}" height="20" fill="{fill}"/>',
                  f'<text x="{_LABEL_WIDTH + _BAR_WIDTH + 8}" y="{y + 15}">{share * 100:.0f} %  ({escape(text)})'
                  '</text>']
    axis_y = 8 + len(rows) * _ROW
    for fraction in (0.0, 0.25, 0.5, 0.75, 1.0):
        x = _LABEL_WIDTH + fraction * _BAR_WIDTH
        parts += [f'<line x1="{x:.1f}" y1="4" x2="{x:.1f}" y2="{axis_y}" stroke="#9aa4ae" stroke-width="0.6" '
                  'stroke-dasharray="3,3"/>',
                  f'<text x="{x:.1f}" y="{axis_y + 14}" text-anchor="middle">{fraction * 100:.0f} %</text>']
    parts.append("</svg>")
    return "\n".join(parts)


def _table(table: Table) -> str:
    head = "".join(f"<th>{escape(h)}</th>" for h in table.headers)
    body = []
    for row in table.rows:
        cells = "".join(f'<td class="num">{escape(c)}</td>' if i in table.numeric else f"<td>{escape(c)}</td>"
                        for i, c in enumerate(row))
        body.append(f"<tr>{cells}</tr>")
    return f"<table><thead><tr>{head}</tr></thead><tbody>{''.join(body)}</tbody></table>"


#: Resistors shown before the full list is folded away.
MOST_LOADED = 12


def _resistors(b) -> list[str]:
    """The most loaded resistors, then all of them in a folded section when there are more."""
    if len(b.resistors) <= MOST_LOADED:
        return [_table(resistor_table(b))]
    return [f'<p class="note">The {MOST_LOADED} resistors nearest their rating; every resistor is in the '
            'folded list below.</p>', _table(resistor_table(b, most_loaded=MOST_LOADED)),
            f"<details><summary>All {len(b.resistors)} resistors</summary>{_table(resistor_table(b))}</details>"]


def _cautions() -> str:
    items = "".join(f"<dt>{escape(h)}</dt><dd>{escape(t)}</dd>" for h, t in CAUTIONS)
    return f'<section class="caution" id="safety"><h2>Safety first</h2><dl>{items}</dl></section>'


def _figure(value: str, caption: str) -> str:
    return f'<div class="figure"><b>{escape(value)}</b><span>{escape(caption)}</span></div>'


SECTIONS = (("summary", "Summary"), ("stock", "Stock"), ("budgets", "Budgets"), ("stages", "Stages"),
            ("timing", "Registers and timing"), ("drawings", "Stage drawings"), ("simulation", "Simulation"),
            ("bom", "Bill of materials"),
            ("wiring", "Wiring list"), ("safety", "Safety"))


def _timing_section(plan) -> list[str]:
    """Registers (with what the clock must do) and the timing estimate."""
    out = ['<h2 id="timing">Registers and timing</h2>']
    if plan.registers:
        out += ["<h3>Registers</h3>", _table(register_table(plan))]
        out += [f"<p>{escape(text)}</p>" for text in clock_lines(plan)]
    else:
        out.append('<p class="note">The design has no registers.</p>')
    if plan.timing is not None:
        out += ["<h3>Timing</h3>"] + [f"<p>{escape(text)}</p>" for text in timing_lines(plan)]
        out.append(_table(stage_timing_table(plan)))
    return out


def report_html(content: ReportContent) -> str:
    """The whole report page. Deterministic: the same content gives the same text."""
    plan, b = content.plan, content.budgets
    logic = [s for s in plan.stages if s.kind == "inverting"]
    sol = plan.solution
    files = [f"design file <code>{escape(content.design_path)}</code>" if content.design_path else "",
             f"stock file <code>{escape(content.stock_path)}</code>" if content.stock_path else ""]
    files_text = "; ".join(f for f in files if f)
    low, high = SURGE_FACTORS
    out = ["<!DOCTYPE html>", '<html lang="en">', "<head>", '<meta charset="utf-8">',
           '<meta name="viewport" content="width=device-width, initial-scale=1">',
           f"<title>Tube logic plan: {escape(plan.design)}</title>", f"<style>{CSS}</style>", "</head>", "<body>",
           f"<header><h1>Tube logic plan: {escape(plan.design)}</h1>"
           f"<p>Written by tubeplan {escape(planner.__version__)}"
           f"{' from the ' + files_text if files_text else ''}.</p></header>",
           "<nav>" + "".join(f'<a href="#{key}">{escape(name)}</a>' for key, name in SECTIONS) + "</nav>",
           "<main>", _cautions(),
           '<h2 id="summary">Summary</h2>', '<div class="figures">',
           *(_figure(*counted(number, noun).split(" ", 1))
             for number, noun in ((len(plan.envelopes), "envelope"), (len(logic), "logic stage"),
                                  (len(plan.stages) - len(logic), "follower"))),
           _figure(f"{b.heater_watts:.1f} W", "heater power"),
           _figure(f"{b.plate.ma_worst:.1f} mA", "B+ worst case"),
           _figure(f"{b.heat_watts:.1f} W", "heat to get rid of"),
           "</div>",
           f'<p>Supplies: B+ {plan.plate_volts:g} V, bias {plan.bias_volts:g} V. Logic levels: a high output '
           f'is at least {plan.high_volts:g} V and a low one at most {plan.low_volts:g} V, worst case; the '
           f'switching midpoint is {(plan.high_volts + plan.low_volts) / 2:g} V.</p>',
           f'<p>Tube choice: {escape(sol.solver)} reports <b>{escape(sol.status)}</b>, objective {sol.objective:.4g} '
           f'against an LP relaxation bound of {sol.lp_bound:.4g} (gap {sol.gap * 100:.2f} %).</p>',
           *(f'<p class="warning"><b>Warning:</b> {escape(warning)}</p>' for warning in supply_warnings(b)),
           _table(outputs_table(plan)),
           f'<p>Stage networks tried; the plan is built on <b>{escape(sol.network)}</b>:</p>',
           _table(networks_table(plan)),
           '<p class="note">Every inverting stage pulls its plate node low when any one of its branches '
           'conducts, and a branch conducts only when all of its inputs are high.</p>',
           '<h2 id="stock">Stock</h2>', _table(stock_table(plan)),
           '<h2 id="budgets">Budgets</h2>', '<h3>Supply loads</h3>', budget_chart(content),
           '<h3>Heater windings</h3>', _table(heater_table(b)),
           f'<p class="note">Cold-start surge: a tungsten heater\'s cold resistance is roughly a fifth to a '
           f'seventh of its hot resistance (common practice), so a winding may deliver {low:g} to {high:g} '
           f'times its running current for the first seconds. Ratings include {HEADROOM * 100:g} % headroom '
           f'over the planned load (common practice).</p>',
           '<h3>Plate and bias supplies</h3>', _table(rail_table(b)),
           f'<p class="note">Worst case: every stage in its highest-current state. Typical: each stage low half '
           f'the time. Heat to get rid of: {b.heat_watts:.1f} W in all (heaters {b.heater_watts:.1f} W, plate '
           f'supply {b.plate.watts_worst:.1f} W, bias supply {b.bias.watts_worst:.2f} W); resistors dissipate '
           f'{b.resistor_watts:.2f} W of it.</p>',
           '<h3>Resistor dissipation</h3>', *_resistors(b),
           '<h2 id="stages">Stages</h2>', _table(stage_table(plan)),
           *_timing_section(plan),
           '<h2 id="drawings">Stage drawings</h2>',
           '<p class="note">One drawing per stage template (stages built alike share one), with the resistor '
           'values of the first stage that uses it. B+ is the plate supply, BIAS the negative rail.</p>']
    for template in content.templates:
        out += [f"<h3>{escape(template.title)} <small>({escape(', '.join(template.stages))})</small></h3>",
                f'<div class="drawing">{template.svg}</div>']
    out += [simulation_html(), '<h2 id="bom">Bill of materials</h2>', _table(bom_table(content.bom)),
            '<h2 id="wiring">Wiring list</h2>',
            '<p class="note">One row per connection; tube pins are numbered as on the catalogue\'s basing '
            '(seen from below the socket).</p>', _table(wiring_table(content.wiring)),
            _cautions().replace('id="safety"', 'id="safety-again"'),
            f"<footer>tubeplan {escape(planner.__version__)}: plan for {escape(plan.design)}. The figures are "
            "planning estimates from the tube models and the stated tolerances, not a safety approval.</footer>",
            "</main>", "</body>", "</html>", ""]
    return "\n".join(out)
