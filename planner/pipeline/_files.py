"""``tubeplan plan`` end to end: read the files, plan, write the outputs (and the candidates for ``tubeplan logic``)."""

from __future__ import annotations

import dataclasses
import sys
import time
from dataclasses import dataclass
from pathlib import Path

from planner.mapping import MappingOptions
from planner.report import PLAN_FILES, check_target, plan_summary, write_plan
from planner.spec import load_design, load_stock

from ._design import plan_design
from ._shortage import Shortage


@dataclass(frozen=True)
class PlanResult:
    """What a planning run produced: ``planned`` is False when the stock is short."""

    planned: bool
    summary: str
    files: tuple[Path, ...] = ()


def _progress(message: str) -> None:
    print(f"tubeplan: {message}", file=sys.stderr, flush=True)


def _progress_since(start: float):
    """A progress callback printing each line with the seconds elapsed since ``start``."""
    def progress(message: str) -> None:
        print(f"tubeplan: [{time.monotonic() - start:5.1f} s] {message}", file=sys.stderr, flush=True)
    return progress


def plan_files(design_path: Path, stock_path: Path, out_dir: Path,
               options: MappingOptions | None = None, *, quiet: bool = False) -> PlanResult:
    """Plan ``design_path`` with ``stock_path`` and write the plan into ``out_dir``.

    Bad input raises planner.spec.InputError; a short stock gives ``planned=False``
    with the shortage as the summary, and writes nothing.
    """
    progress = None if quiet else _progress_since(time.monotonic())
    design = load_design(design_path)
    stock = load_stock(stock_path)
    inputs = (Path(design_path), Path(stock_path))
    check_target(Path(out_dir), PLAN_FILES, inputs)  # refuse a bad --out before the planning work, not after
    options = options or MappingOptions()
    if progress and options.progress is None:
        options = dataclasses.replace(options, progress=progress)
    try:
        plan = plan_design(design, stock, options)
    except Shortage as shortage:
        return PlanResult(False, str(shortage))
    if progress:
        progress(f"writing the plan into {out_dir}")
    files = write_plan(plan, Path(out_dir), stock=stock, design_path=Path(design_path),
                       stock_path=Path(stock_path), notify=progress or _progress)
    return PlanResult(True, plan_summary(plan), tuple(files))


def network_document(design_path: Path, stock_path: Path | None = None) -> dict:
    """The candidate stage networks for ``tubeplan logic --networks``: which is chosen, and each one's needs.

    With a stock: the planner's own candidates (``Solution.networks``), each with its stages,
    sections and envelopes, the chosen one the best plan (raises :class:`Shortage` when none
    fits).  Without: the project's two-level network and the multi-level one, both under
    the default stage options (dual-control branches, no diodes), the chosen one the fewer
    sections (then stages).  ``{"chosen": label, "networks": [{"network", "stages", "sections",
    "envelopes", "note"}]}``.
    """
    from planner.stages import SynthesisOptions, multilevel, synthesise

    design = load_design(design_path)
    if stock_path is not None:
        plan = plan_design(design, load_stock(stock_path), MappingOptions(progress=_progress))
        rows = [{"network": n.label, "stages": n.stages, "sections": n.sections, "envelopes": n.envelopes,
                 "note": n.note} for n in plan.solution.networks]
        return {"chosen": plan.solution.network, "networks": rows}
    view = design.combinational()
    options = SynthesisOptions()
    rows = []
    for label, network in (("two-level", synthesise(view, options).network),
                           ("multi-level", multilevel(view, options).network)):
        rows.append({"network": label, "stages": len(network.stages), "sections": network.cost().sections,
                     "envelopes": None, "note": ""})
    chosen = min(rows, key=lambda r: (r["sections"], r["stages"]))["network"]
    return {"chosen": chosen, "networks": rows}
