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
- ``spice_deck(plan, catalogue) -> SpiceDeck``; ``run_deck(deck, vectors) -> tuple[dict, ...]`` (the deck in
  ngspice, an operating point a vector); ``reset_press(...)``: deck lines pressing the reset contact at the start
- ``run_ngspice(text, executable=None, *, files=(), on_line=None, timeout_s=) -> (stdout, files)``: the one
  ngspice runner (``ngspice -b`` in a fresh directory); ``find_ngspice(executable=None) -> str``;
  ``NgspiceMissing``, ``NgspiceFailed``
- ``check_target(out_dir, files=(), protect=()) -> bool``: refuse (InputError) an output path that is not
  an earlier plan, cannot be written, or would replace a user's or an input file, before any work; True
  when an earlier plan is there
- ``claim_files(out_dir, names)``: list files a later command adds (prove.json) in the plan marker, so a
  re-plan replaces them; refuses a user's file of that name
- ``PROVE_FILE`` (prove.json), ``simulation_html(proof: ProofSection | None)``, ``simulation_markdown(body)``,
  ``replace_section(report, section, html=)``: the reports' simulation section that ``tubeplan prove`` fills;
  ``ProofSection``: what the HTML section shows of a proof, as plain text (escaped by the template engine)
- ``CAUTIONS``: the safety cautions every human-facing output carries; ``MARKER``: the plan directory marker
- ``design_summary(design)``, ``stock_summary(stock)``: what ``tubeplan check`` prints
"""

from .bom import BomLine, bom_csv, bom_lines, bom_markdown
from .budgets import HEADROOM, SURGE_FACTORS, Budgets, plan_budgets
from .cautions import CAUTIONS
from .check import design_summary, stock_summary
from .document import SCHEMA, input_file, plan_document, plan_json
from .ngspice import NgspiceFailed, NgspiceMissing, find_ngspice, run_ngspice
from .proof_section import PROVE_FILE, ProofSection, replace_section, simulation_html, simulation_markdown
from .spice import CORNER_ROLES, SpiceDeck, reset_press, run_deck, sanitise, spice_deck
from .summary import plan_summary
from .wiring import Connection, wiring_csv, wiring_rows
from .write import MARKER, PLAN_FILES, check_target, claim_files, write_plan

__all__ = ["CAUTIONS", "CORNER_ROLES", "HEADROOM", "MARKER", "PLAN_FILES", "PROVE_FILE", "SCHEMA", "SURGE_FACTORS",
           "BomLine", "Budgets", "Connection", "NgspiceFailed", "NgspiceMissing", "ProofSection", "SpiceDeck",
           "bom_csv", "bom_lines", "bom_markdown", "check_target", "claim_files", "design_summary", "find_ngspice",
           "input_file", "plan_budgets", "plan_document", "plan_json", "plan_summary", "replace_section",
           "reset_press", "run_deck", "run_ngspice", "sanitise", "simulation_html", "simulation_markdown",
           "spice_deck", "stock_summary", "wiring_csv", "wiring_rows", "write_plan"]
