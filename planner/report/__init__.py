"""Back end: summaries, budgets, bill of materials, wiring, SPICE deck and reports.

Public API:

- ``write_plan(plan, out_dir, *, stock=None, stock_path=None, design_path=None, catalogue=None, notify=None)
  -> list[Path]`` writes plan.json, bom.csv, bom.md, wiring.csv, plan.cir, report.html and report.md
  (``PLAN_FILES``) atomically; a re-plan replaces only the files tubeplan wrote and keeps the rest
- ``plan_summary(plan) -> str``: the tables printed after planning
- ``plan_document(plan, input_files=()) -> dict`` / ``plan_json(plan, input_files=()) -> str``: plan.json
  (schema 2); ``input_file(role, path)``: an ``input_files`` entry (name and SHA-256)
- ``plan_budgets(plan) -> Budgets``; ``bom_lines(plan, prices=, tube_prices=) -> tuple[BomLine, ...]``;
  ``wiring_rows(plan, catalogue) -> tuple[Connection, ...]``
- ``spice_deck(plan, catalogue) -> SpiceDeck``; ``simulate(deck, vectors) -> tuple[dict, ...]`` (ngspice)
- ``check_target(out_dir, files=(), protect=()) -> bool``: refuse (InputError) an output path that is not
  an earlier plan, cannot be written, or would replace a user's or an input file, before any work; True
  when an earlier plan is there
- ``CAUTIONS``: the safety cautions every human-facing output carries; ``MARKER``: the plan directory marker
- ``design_summary(design)``, ``stock_summary(stock)``: what ``tubeplan check`` prints
"""

from .bom import BomLine, bom_csv, bom_lines, bom_markdown
from .budgets import HEADROOM, SURGE_FACTORS, Budgets, plan_budgets
from .cautions import CAUTIONS
from .check import design_summary, stock_summary
from .document import SCHEMA, input_file, plan_document, plan_json
from .spice import SpiceDeck, ngspice_path, sanitise, simulate, spice_deck
from .summary import plan_summary
from .wiring import Connection, wiring_csv, wiring_rows
from .write import MARKER, PLAN_FILES, check_target, write_plan

__all__ = ["CAUTIONS", "HEADROOM", "MARKER", "PLAN_FILES", "SCHEMA", "SURGE_FACTORS", "BomLine", "Budgets", "Connection",
           "SpiceDeck", "bom_csv", "bom_lines", "bom_markdown", "check_target", "design_summary", "input_file", "ngspice_path", "plan_budgets",
           "plan_document", "plan_json", "plan_summary", "sanitise", "simulate", "spice_deck", "stock_summary",
           "wiring_csv", "wiring_rows", "write_plan"]
