"""plan.json: the plan document of docs/outputs.md (schema 2), built from a Plan only.

The required fields are the contract in DESIGN.md ("The plan document"); the
extra fields (the tool's version, the input files' names and SHA-256, levels,
views, resistor values, the parts netlist, the solver's account, the registers
with their clock, the timing estimate) are allowed by it. Every key is an
identifier (``heater_watts``, never ``heater watts``). The solver's wall-clock
time is left out so that the same plan always gives the same bytes.
"""

from __future__ import annotations

import hashlib
import json
from collections.abc import Sequence
from pathlib import Path

from planner import __version__
from planner.mapping import Plan
from planner.units import milliamps, picofarads

#: 2: keys are identifiers (solution terms and criteria), ``tool`` and ``input_files`` added.
SCHEMA = 2


def input_file(role: str, path: Path) -> dict:
    """One entry of ``input_files``: the role, the file's name and the SHA-256 of its bytes (FIPS 180-4).

    >>> import tempfile, os
    >>> with tempfile.TemporaryDirectory() as folder:
    ...     path = Path(folder) / "design.yaml"
    ...     _ = path.write_bytes(b"abc")
    ...     input_file("design", path)["sha256"][:16]
    'ba7816bf8f01cfea'
    """
    return {"role": role, "name": Path(path).name, "sha256": hashlib.sha256(Path(path).read_bytes()).hexdigest()}


def _key(name: str) -> str:
    return name.replace(" ", "_")


def _num(value: float | None) -> float | None:
    """A float rounded to 9 significant digits (no binary noise like 0.30000000000000004)."""
    return None if value is None else float(f"{value:.9g}")


def _stage(stage) -> dict:
    entry = {"id": stage.id, "kind": stage.kind, "output": stage.output, "view": stage.view,
             "fanout": stage.fanout, "fanout_limit": stage.fanout_limit,
             "supply_ma_worst": _num(milliamps(stage.supply_amps_worst)),
             "supply_ma_typical": _num(milliamps(stage.supply_amps_typical)),
             "bias_ma_worst": _num(milliamps(stage.bias_amps_worst)), "template": stage.template}
    if stage.kind == "follower":
        entry.update(input=stage.input, tube=stage.tube, envelope=stage.envelope, section=stage.section,
                     load_ohms=_num(stage.load_ohms))
    else:
        entry["branches"] = [{"inputs": list(b.inputs), "tube": b.tube, "envelope": b.envelope,
                              "section": b.section, "means": b.means, "diodes": list(b.diodes)}
                             for b in stage.branches]
        entry["plate_load_ohms"] = _num(stage.plate_load_ohms)
    return entry


def _part(part) -> dict:
    entry = {"ref": part.ref, "kind": part.kind, "value": part.value, "role": part.role,
             "stage": part.stage, "pins": [{"pin": pin, "net": net} for pin, net in part.pins]}
    for name in ("ohms", "farads", "watts_rating", "dissipation_watts", "tolerance", "volts_rating"):
        value = getattr(part, name)
        if value is not None:
            entry[name] = _num(value)
    if part.tube is not None:
        entry["tube"] = part.tube
    return entry


def _register(reg) -> dict:
    return {"name": reg.name, "next": reg.next, "next_complement": reg.next_complement, "output": reg.output,
            "complement": reg.complement, "reset": reg.reset, "envelope": reg.envelope, "tube": reg.tube,
            "form": reg.form, "fanout": reg.fanout, "fanout_limit": reg.fanout_limit,
            "plate_load_ohms": _num(reg.plate_load_ohms), "upper_ohms": _num(reg.upper_ohms),
            "lower_ohms": _num(reg.lower_ohms), "commutating_farads": _num(reg.commutating_farads),
            "steering_farads": _num(reg.steering_farads), "steering_ohms": _num(reg.steering_ohms),
            "supply_ma_worst": _num(milliamps(reg.supply_amps_worst)),
            "supply_ma_typical": _num(milliamps(reg.supply_amps_typical)),
            "bias_ma_worst": _num(milliamps(reg.bias_amps_worst)), "clock_to_q_seconds": _num(reg.clock_to_q_seconds),
            "setup_seconds": _num(reg.setup_seconds)}


def _clock(clock) -> dict | None:
    if clock is None:
        return None
    return {"net": clock.net, "reset_net": clock.reset_net, "swing_volts": _num(clock.swing_volts),
            "swing_min_volts": _num(clock.swing_min_volts), "swing_max_volts": _num(clock.swing_max_volts),
            "tolerance": _num(clock.tolerance), "fall_seconds_max": _num(clock.fall_seconds_max),
            "load_farads": _num(clock.load_farads), "reset_pullup_ohms": _num(clock.reset_pullup_ohms)}


def _timing(t) -> dict | None:
    if t is None:
        return None
    return {"path": list(t.path), "path_seconds": _num(t.path_seconds), "start": t.start, "end": t.end,
            "output_seconds": _num(t.output_seconds), "clock_to_q_seconds": _num(t.clock_to_q_seconds),
            "setup_seconds": _num(t.setup_seconds), "high_seconds_min": _num(t.high_seconds_min),
            "low_seconds_min": _num(t.low_seconds_min), "min_period_seconds": _num(t.min_period_seconds),
            "margin": _num(t.margin), "max_clock_hz": _num(t.max_clock_hz),
            "wiring_pf": _num(picofarads(t.wiring_farads)),
            "corner": t.corner,
            "worst": {"corner": t.corner_worst, "path": list(t.path_worst), "start": t.start_worst,
                      "end": t.end_worst, "path_seconds": _num(t.path_seconds_worst),
                      "output_seconds": _num(t.output_seconds_worst),
                      "clock_to_q_seconds": _num(t.clock_to_q_seconds_worst),
                      "min_period_seconds": _num(t.min_period_seconds_worst)},
            "stages": [{"id": s.id, "output": s.output, "rise_seconds": _num(s.rise_seconds),
                        "fall_seconds": _num(s.fall_seconds), "rise_seconds_worst": _num(s.rise_seconds_worst),
                        "fall_seconds_worst": _num(s.fall_seconds_worst)} for s in t.stages]}


def plan_document(plan: Plan, input_files: Sequence[dict] = ()) -> dict:
    """The plan document as plain JSON data (dicts, lists, strings, numbers).

    ``input_files``: entries of input_file() for the design and stock files
    the plan was made from. Cost O(size of the plan). Lists keep the plan's
    order (stages in topological order, envelopes and parts by designator).
    """
    budget = plan.budget
    return {
        "schema": SCHEMA,
        "tool": {"name": "tubeplan", "version": __version__},
        "input_files": [dict(entry) for entry in input_files],
        "design": plan.design,
        "inputs": [{"name": name, "complement_available": complement,
                    "fanout_limit": dict(plan.input_fanout_limits).get(name)} for name, complement in plan.inputs],
        "outputs": dict(plan.outputs),
        "forms": dict(plan.forms),
        "levels": {"plate_volts": _num(plan.plate_volts), "bias_volts": _num(plan.bias_volts),
                   "high_volts": _num(plan.high_volts), "low_volts": _num(plan.low_volts),
                   "follower_low_volts": _num(plan.follower_low_volts)},
        "stages": [_stage(stage) for stage in plan.stages],
        "registers": [_register(reg) for reg in plan.registers],
        "clock": _clock(plan.clock),
        "timing": _timing(plan.timing),
        "envelopes": [{"ref": e.ref, "tube": e.tube, "base": e.base, "winding": e.winding,
                       "heater_connection": e.heater_connection, "heater_volts": _num(e.heater_volts),
                       "heater_amps": _num(e.heater_amps),
                       "sections": [{"index": s.index, "means": s.means, "stage": s.stage,
                                     "nets": dict(s.nets)} for s in e.sections]}
                      for e in plan.envelopes],
        "parts": [_part(part) for part in plan.parts],
        "budget": {"heater_watts": _num(budget.heater_watts),
                   "windings": [{"id": w.id, "volts": _num(w.volts), "amps": _num(w.amps),
                                 "max_amps": _num(w.max_amps), "elevated_volts": _num(w.elevated_volts)}
                                for w in budget.windings],
                   "plate_ma_worst": _num(milliamps(budget.plate_amps_worst)),
                   "plate_ma_typical": _num(milliamps(budget.plate_amps_typical)),
                   "bias_ma": _num(milliamps(budget.bias_amps)),
                   "plate_max_ma": _num(milliamps(budget.plate_max_amps)),
                   "bias_max_ma": _num(milliamps(budget.bias_max_amps))},
        "stock": [{"tube": s.tube, "on_hand": s.on_hand, "reserve": s.reserve, "used": s.used,
                   "scarce": s.scarce, "from_memory": s.from_memory} for s in plan.stock],
        "solution": {"solver": plan.solution.solver, "status": plan.solution.status,
                     "objective": _num(plan.solution.objective), "lp_bound": _num(plan.solution.lp_bound),
                     "gap": _num(plan.solution.gap), "mode": plan.solution.mode,
                     "network": plan.solution.network,
                     "networks": [{"network": n.label, "stages": n.stages, "sections": n.sections,
                                   "envelopes": None if n.envelopes is None else _num(n.envelopes),
                                   "note": n.note} for n in plan.solution.networks],
                     "levels": [{"criterion": _key(c), "value": _num(v), "lp_bound": _num(b), "gap": _num(g)}
                                for c, v, b, g in plan.solution.levels],
                     "terms": {_key(name): _num(value) for name, value in plan.solution.terms}},
    }


def plan_json(plan: Plan, input_files: Sequence[dict] = ()) -> str:
    """plan.json text: ``json.dumps(plan_document(...), indent=2, sort_keys=True)`` and a newline."""
    return json.dumps(plan_document(plan, input_files), indent=2, sort_keys=True) + "\n"
