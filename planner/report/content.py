"""Everything a report shows, gathered once from the plan (and the catalogue for pin names)."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

from planner.catalogue import Catalogue
from planner.mapping import Plan

from .bom import BomLine, bom_lines
from .budgets import Budgets, plan_budgets
from .drawings import Template, stage_templates
from .wiring import Connection, wiring_rows


@dataclass(frozen=True)
class ReportContent:
    """The plan with its budgets, BOM, wiring list and stage drawings; the input files by name."""

    plan: Plan
    budgets: Budgets
    bom: tuple[BomLine, ...]
    wiring: tuple[Connection, ...]
    templates: tuple[Template, ...]
    design_path: str | None = None
    stock_path: str | None = None


def report_content(plan: Plan, catalogue: Catalogue, *, prices: Mapping[str, float] | None = None,
                   tube_prices: Mapping[str, float] | None = None, design_path: str | None = None,
                   stock_path: str | None = None) -> ReportContent:
    """Gather the report's content. Cost: O(parts log parts) plus one drawing per stage template."""
    return ReportContent(plan, plan_budgets(plan), bom_lines(plan, prices=prices, tube_prices=tube_prices),
                         wiring_rows(plan, catalogue), stage_templates(plan),
                         design_path, stock_path)
