"""report.md: the report for terminals and plain-text readers, with the same cautions."""

from __future__ import annotations

import planner

from .budgets import HEADROOM, SURGE_FACTORS, supply_warnings
from .cautions import CAUTIONS
from .designators import counted
from .content import ReportContent
from .proof_section import simulation_markdown
from .tables import (Table, bom_table, heater_table, networks_table, outputs_table, rail_table, resistor_table,
                     stage_table, stock_table, wiring_table)
from .timing_text import clock_lines, register_table, stage_timing_table, timing_lines

_BAR = 30


def _cell(text: str) -> str:
    return text.replace("|", "\\|").replace("\n", " ")


def markdown_table(table: Table) -> str:
    """A GitHub-style pipe table; numeric columns right-aligned."""
    rule = ["---:" if i in table.numeric else "---" for i in range(len(table.headers))]
    lines = ["| " + " | ".join(_cell(h) for h in table.headers) + " |", "| " + " | ".join(rule) + " |"]
    lines += ["| " + " | ".join(_cell(c) for c in row) + " |" for row in table.rows]
    return "\n".join(lines)


def _bar(load: float, limit: float) -> str:
    share = load / limit if limit else 0.0
    filled = round(min(share, 1.0) * _BAR)
    return f"`[{'#' * filled}{'.' * (_BAR - filled)}]` {share * 100:.0f} %"


def _cautions() -> list[str]:
    return ["## Safety first", ""] + [f"- **{heading}.** {text}" for heading, text in CAUTIONS] + [""]


def report_markdown(content: ReportContent) -> str:
    """The report as Markdown text (drawings are in report.html)."""
    plan, b = content.plan, content.budgets
    sol = plan.solution
    logic = sum(1 for s in plan.stages if s.kind == "inverting")
    low, high = SURGE_FACTORS
    out = [f"# Tube logic plan: {plan.design}", "",
           f"Written by tubeplan {planner.__version__}."
           + (f" Design file `{content.design_path}`." if content.design_path else "")
           + (f" Stock file `{content.stock_path}`." if content.stock_path else ""), ""]
    out += _cautions()
    out += ["## Summary", "",
            f"- {counted(len(plan.envelopes), 'envelope')}, {counted(logic, 'logic stage')}, "
            f"{counted(len(plan.stages) - logic, 'follower')}",
            f"- supplies: B+ {plan.plate_volts:g} V, bias {plan.bias_volts:g} V; logic high at least "
            f"{plan.high_volts:g} V, low at most {plan.low_volts:g} V (midpoint "
            f"{(plan.high_volts + plan.low_volts) / 2:g} V)",
            f"- heater power {b.heater_watts:.1f} W; B+ worst case {b.plate.ma_worst:.1f} mA; heat to get rid of "
            f"{b.heat_watts:.1f} W",
            f"- tube choice: {sol.solver} {sol.status}, objective {sol.objective:.4g}, LP bound "
            f"{sol.lp_bound:.4g}, gap {sol.gap * 100:.2f} %",
            *(f"- **Warning:** {warning}" for warning in supply_warnings(b)), "",
            markdown_table(outputs_table(plan)), "",
            f"Stage networks tried (the plan is built on `{sol.network}`):", "",
            markdown_table(networks_table(plan)), "",
            "## Stock", "", markdown_table(stock_table(plan)), "",
            "## Budgets", "", "Supply loads:", ""]
    for w in b.windings:
        out.append(f"- heater {w.id} ({w.volts_text}): {_bar(w.amps, w.max_amps)} ({w.amps:.2f} of {w.max_amps:g} A)")
    out += [f"- B+ worst case: {_bar(b.plate.ma_worst, b.plate.max_ma)} ({b.plate.ma_worst:.1f} of "
            f"{b.plate.max_ma:g} mA)",
            f"- B+ typical: {_bar(b.plate.ma_typical, b.plate.max_ma)} ({b.plate.ma_typical:.1f} of "
            f"{b.plate.max_ma:g} mA)",
            f"- bias: {_bar(b.bias.ma_worst, b.bias.max_ma)} ({b.bias.ma_worst:.1f} of {b.bias.max_ma:g} mA)", "",
            markdown_table(heater_table(b)), "",
            f"Cold-start surge: a tungsten heater's cold resistance is roughly a fifth to a seventh of its hot "
            f"resistance (common practice), so a winding may deliver {low:g} to {high:g} times its running "
            f"current for the first seconds. Ratings include {HEADROOM * 100:g} % headroom over the planned "
            f"load (common practice).", "",
            markdown_table(rail_table(b)), "",
            f"Worst case: every stage in its highest-current state; typical: each stage low half the time. "
            f"Heat to get rid of: {b.heat_watts:.1f} W in all (heaters {b.heater_watts:.1f} W, plate supply "
            f"{b.plate.watts_worst:.1f} W, bias supply {b.bias.watts_worst:.2f} W); resistors dissipate "
            f"{b.resistor_watts:.2f} W of it.", "",
            "### Resistor dissipation", "", markdown_table(resistor_table(b)), "",
            "## Stages", "", markdown_table(stage_table(plan)), "",
            "Drawings of the stage templates are in report.html.", ""]
    if plan.registers:
        out += ["## Registers and clock", "", markdown_table(register_table(plan)), ""]
        out += [line for text in clock_lines(plan) for line in (text, "")]
    if plan.timing is not None:
        out += ["## Timing", ""] + [line for text in timing_lines(plan) for line in (text, "")]
        out += [markdown_table(stage_timing_table(plan)), ""]
    out += [simulation_markdown(), ""]
    out += [
            "## Bill of materials", "", markdown_table(bom_table(content.bom)), "",
            "## Wiring list", "", markdown_table(wiring_table(content.wiring)), ""]
    out += _cautions()
    return "\n".join(out)
