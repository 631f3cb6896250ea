"""The plan summary printed on stdout by ``tubeplan plan``."""

from __future__ import annotations

from tabulate import tabulate

from planner.mapping import Plan

from .bom import tube_label
from .budgets import plan_budgets, supply_warnings
from .designators import counted, ranges
from .tables import networks_table
from .timing_text import clock_lines, register_table, timing_lines


def plan_summary(plan: Plan) -> str:
    """Envelopes by type, supply loads and the solver's account, as plain-text tables.

    Shows per tube type the envelopes used, left in stock and kept in
    reserve; per heater winding the amps and watts against its rating; the
    plate supply (worst case and typical) and the bias supply in mA; the
    registers and what the clock must do; the critical path and, with
    registers, the highest safe clock; the objective, the LP relaxation bound
    and the relative gap.
    """
    budgets = plan_budgets(plan)
    tube_rows = [[tube_label(s), s.used, s.on_hand - s.used, s.reserve, "yes" if s.scarce else ""]
                 for s in plan.stock]
    supply_rows = [[f"heater {w.id}", w.volts_text, f"{w.amps:.2f} A", f"{w.max_amps:g} A",
                    f"{w.watts:.1f} W", ranges(w.envelopes)] for w in budgets.windings]
    supply_rows.append(["plate B+ worst", f"{plan.plate_volts:g} V", f"{budgets.plate.ma_worst:.1f} mA",
                        f"{budgets.plate.max_ma:g} mA", f"{budgets.plate.watts_worst:.1f} W", ""])
    supply_rows.append(["plate B+ typical", f"{plan.plate_volts:g} V", f"{budgets.plate.ma_typical:.1f} mA",
                        f"{budgets.plate.max_ma:g} mA", "", ""])
    supply_rows.append(["bias", f"{plan.bias_volts:g} V", f"{budgets.bias.ma_worst:.1f} mA",
                        f"{budgets.bias.max_ma:g} mA", f"{budgets.bias.watts_worst:.1f} W", ""])
    s = plan.solution
    inverting = sum(1 for stage in plan.stages if stage.kind == "inverting")
    lines = [f"plan for {plan.design!r}: {counted(len(plan.envelopes), 'envelope')}, "
             f"{counted(inverting, 'logic stage')}, {counted(len(plan.stages) - inverting, 'follower')}",
             "",
             tabulate(tube_rows, headers=["tube", "used", "left in stock", "reserve kept", "scarce"]),
             "",
             tabulate(supply_rows, headers=["supply", "volts", "load", "available", "power", "heaters"]),
             "",
             f"heat to get rid of: {budgets.heat_watts:.1f} W (heaters {budgets.heater_watts:.1f} W)",
             f"logic levels: high {plan.high_volts:g} V, low {plan.low_volts:g} V"]
    lines += [f"WARNING: {warning}" for warning in supply_warnings(budgets)]
    if plan.registers:
        table = register_table(plan)
        lines += ["", tabulate([list(row) for row in table.rows], headers=list(table.headers))] + clock_lines(plan)
    if plan.timing is not None:
        lines += [""] + timing_lines(plan)
    solver = [[s.solver, s.status, f"{s.objective:.4g}", f"{s.lp_bound:.4g}", f"{s.gap * 100:.2f} %",
               f"{s.seconds:.1f} s"]]
    lines += ["", tabulate(solver, headers=["solver", "status", "objective", "LP bound", "gap", "time"])]
    networks = networks_table(plan)
    lines += ["", f"stage network chosen: {s.network}",
              tabulate([list(row) for row in networks.rows], headers=list(networks.headers))]
    return "\n".join(lines)
