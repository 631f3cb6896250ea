"""Reading a plan directory for the proof: plan.json (defensively) and the deck as written.

Private to ``planner.prove``. Bad or missing files raise ``planner.spec.InputError``.
"""

from __future__ import annotations

import json
import re
from dataclasses import dataclass
from pathlib import Path

from planner.spec import InputError

PLAN_FILE, DECK_FILE = "plan.json", "plan.cir"


@dataclass(frozen=True)
class LogicStage:
    """One stage of the plan's network as logic: ``output`` = NOT(OR of ANDs of ``branches``), or a copy of
    ``input`` for a follower."""

    output: str
    kind: str
    branches: tuple[tuple[str, ...], ...] = ()
    input: str | None = None


@dataclass(frozen=True)
class Register:
    """A register's nets: ``output`` (q), ``complement`` (~q), ``next`` (its next state) and reset state."""

    name: str
    output: str
    complement: str
    next: str
    reset: int


@dataclass(frozen=True)
class ClockPlan:
    """The clock the plan recommends: falling ``swing_volts`` within ``fall_seconds``, ``period_seconds``;
    ``reset_net`` the line a momentary contact to BIAS resets the registers with."""

    swing_volts: float
    fall_seconds: float
    period_seconds: float
    reset_net: str = "RESET"


@dataclass(frozen=True)
class PlanDirectory:
    """What the proof needs from a plan directory. Levels in volts; ``deck`` is plan.cir as written."""

    path: Path
    design: str
    inputs: tuple[tuple[str, bool], ...]
    outputs: tuple[tuple[str, str], ...]
    stages: tuple[LogicStage, ...]
    registers: tuple[Register, ...]
    high_volts: float
    low_volts: float
    follower_low_volts: float
    clock: ClockPlan | None
    deck: str

    def low_threshold(self, output: str) -> float:
        """The highest low the family accepts on ``output``'s net (a follower's low may sit higher)."""
        net = dict(self.outputs)[output]
        followers = {s.output for s in self.stages if s.kind == "follower"}
        return self.follower_low_volts if net in followers else self.low_volts


def _field(document, where: str, *keys, kind=None):
    """``document[k0][k1]...``, or InputError naming the missing or mistyped field."""
    value = document
    for depth, key in enumerate(keys):
        if not isinstance(value, dict) or key not in value:
            raise InputError(where, 0, f"has no field {'.'.join(map(str, keys[:depth + 1]))}; re-plan to "
                                       "write a complete plan.json")
        value = value[key]
    if kind is not None and not isinstance(value, kind) or isinstance(value, bool) and kind in ((int, float), float):
        raise InputError(where, 0, f"field {'.'.join(map(str, keys))} has the wrong type; re-plan")
    return value


def _number(document, where: str, *keys) -> float:
    return float(_field(document, where, *keys, kind=(int, float)))


def _stages(document, where: str) -> tuple[LogicStage, ...]:
    stages = []
    for stage in _field(document, where, "stages", kind=list):
        kind = _field(stage, where, "kind", kind=str)
        output = _field(stage, where, "output", kind=str)
        if kind == "follower":
            stages.append(LogicStage(output, kind, input=_field(stage, where, "input", kind=str)))
        else:
            branches = tuple(tuple(_field(b, where, "inputs", kind=list)) for b in _field(stage, where, "branches",
                                                                                           kind=list))
            stages.append(LogicStage(output, kind, branches))
    return tuple(stages)


def _clock(document, where: str) -> ClockPlan | None:
    clock = document.get("clock")
    if not clock:
        return None
    timing = _field(document, where, "timing", kind=dict)
    hz = timing.get("max_clock_hz")
    period = 1.0 / float(hz) if hz else 1.5 * _number(document, where, "timing", "min_period_seconds")
    return ClockPlan(_number(document, where, "clock", "swing_volts"),
                     _number(document, where, "clock", "fall_seconds_max"), period,
                     str(clock.get("reset_net") or "RESET"))


def read_plan_directory(directory: Path) -> PlanDirectory:
    """The plan in ``directory`` (plan.json and plan.cir), or InputError naming what is wrong. Cost O(file size)."""
    directory = Path(directory)
    if not directory.is_dir():
        raise InputError(str(directory), 0, "is not a plan directory (give the --out directory of tubeplan plan)")
    texts = {}
    for name in (PLAN_FILE, DECK_FILE):
        path = directory / name
        if not path.is_file():
            raise InputError(str(path), 0, f"not found: {directory} holds no {name}; give the directory "
                                           "tubeplan plan wrote")
        try:
            texts[name] = path.read_text(encoding="utf-8")
        except (OSError, UnicodeDecodeError) as problem:
            reason = problem.strerror if isinstance(problem, OSError) else "not UTF-8 text"
            raise InputError(str(path), 0, f"cannot be read ({reason})") from None
    where = str(directory / PLAN_FILE)
    try:
        document = json.loads(texts[PLAN_FILE])
    except json.JSONDecodeError as problem:
        raise InputError(where, problem.lineno, f"is not valid JSON ({problem.msg})") from None
    if not isinstance(document, dict):
        raise InputError(where, 1, "is not a plan document (a JSON object)")
    inputs = tuple((_field(i, where, "name", kind=str), bool(i.get("complement_available", False)))
                   for i in _field(document, where, "inputs", kind=list))
    outputs = tuple(sorted((str(k), str(v)) for k, v in _field(document, where, "outputs", kind=dict).items()))
    registers = tuple(Register(_field(r, where, "name", kind=str), _field(r, where, "output", kind=str),
                               _field(r, where, "complement", kind=str), _field(r, where, "next", kind=str),
                               int(r.get("reset", 0)))
                      for r in document.get("registers") or ())
    levels = _field(document, where, "levels", kind=dict)
    low = _number(document, where, "levels", "low_volts")
    deck = texts[DECK_FILE]
    if not re.search(r"(?m)^\s*\.end\s*$", deck, re.IGNORECASE):
        raise InputError(str(directory / DECK_FILE), 0, "is not a complete SPICE deck (no .end line); re-plan "
                                                       "or restore it")
    return PlanDirectory(directory, str(document.get("design", directory.name)), inputs, outputs,
                         _stages(document, where), registers, _number(document, where, "levels", "high_volts"), low,
                         float(levels.get("follower_low_volts") or low), _clock(document, where), deck)


def evaluate(plan: PlanDirectory, values: dict[str, int]) -> dict[str, int]:
    """Every net's logic value from the plan's stage network, given the inputs' and registers' nets.

    A net a stage reads before it is known (stages out of order) is settled by
    repeating the pass; an unknown net after that is a bad plan.json (InputError).
    Cost O(stages x passes).

    >>> s = LogicStage("n1", "inverting", (("a", "b"),))
    >>> p = PlanDirectory(Path("."), "d", (("a", False), ("b", False)), (("y", "n1"),), (s,), (), 1, 0, 0, None, "")
    >>> evaluate(p, {"a": 1, "b": 1})["n1"]
    0
    """
    nets = dict(values)
    pending = list(plan.stages)
    while pending:
        left = []
        for stage in pending:
            reads = [stage.input] if stage.kind == "follower" else [n for b in stage.branches for n in b]
            if any(n not in nets for n in reads):
                left.append(stage)
            elif stage.kind == "follower":
                nets[stage.output] = nets[stage.input]
            else:
                nets[stage.output] = int(not any(all(nets[n] for n in b) for b in stage.branches))
        if len(left) == len(pending):
            missing = sorted({n for s in left for b in s.branches for n in b if n not in nets}
                             | {s.input for s in left if s.kind == "follower" and s.input not in nets})
            raise InputError(str(plan.path / PLAN_FILE), 0,
                             f"the plan's stages read nets nothing drives: {', '.join(missing)}; re-plan")
        pending = left
    return nets
