"""Multi-level synthesis: the whole design restructured and mapped onto a library of tube stages.

The design's don't-care-minimised blocks (every signal and output, as
:mod:`planner.stages.synthesis` minimises them) are written as BLIF; the ABC
logic synthesis system (Brayton and Mishchenko, "ABC: An Academic
Industrial-Strength Verification Tool", CAV 2010), which ships inside the
``pyosys`` wheel as the ``yosys-abc`` binary, restructures the whole design
(structural hashing, choice computation: Mishchenko, Chatterjee and Brayton,
"DAG-aware AIG rewriting", DAC 2006) and maps it onto a genlib library whose
gates are the stages the options allow, each with the area given by
``section_cost``.  The mapped netlist is read back into a :class:`Network`
(every gate one inverting stage, every pin one branch input) and proven
against the design.  Outputs therefore share stages, and the means of every
stage (single-input branches, dual-control NAND-2, diode ANDs) is chosen per
stage inside one network.
"""

from __future__ import annotations

import importlib.util
import itertools
import os
import subprocess
import tempfile
import time
from dataclasses import dataclass
from types import MappingProxyType
from typing import Mapping

from planner.errors import PlanningFailure, ToolError
from planner.formula import to_sympy

from .network import Network, renumber
from .options import SynthesisOptions
from .simulate import prove, simulate
from .synthesis import _blocks, _needed_signals

#: Most pins of one library gate (ABC's standard-cell mapper matches cuts of at most six leaves).
MAX_CELL_PINS = 6
#: Wall-clock budget of one ABC run, seconds.
ENGINE_TIMEOUT_S = 120.0
_REWRITE = ("balance; rewrite; refactor; balance; rewrite; rewrite -z; balance; refactor -z; rewrite -z; "
            "balance")
#: ABC scripts tried for every library; the mapped network with the least area is kept.
#: Each restructures the AIG differently (as given; AIG rewriting; fast extraction of
#: common cubes and kernels, ``fx``; LUT mapping with resubstitution, ``mfs2``) before
#: area-oriented mapping over structural choices (``dch``).
ENGINE_SCRIPTS = (
    "strash; dch -f; map -a; topo",
    "strash; dch -f; amap; topo",
    f"strash; {_REWRITE}; dch -f; amap; topo",
    "sop; fx; strash; dch -f; map -a; topo",
    "strash; if -K 6 -a; mfs2; sop; fx; strash; dch -f; map -a; topo",
)
#: Scripts that first collapse every output to two levels over the inputs (``collapse``
#: builds BDDs): tried only up to :data:`COLLAPSE_MAX_INPUTS` design inputs.
COLLAPSE_SCRIPTS = (
    "collapse; strash; dch -f; map -a; topo",
    "collapse; sop; fx; strash; dch -f; amap; topo",
)
COLLAPSE_MAX_INPUTS = 16
_PINS = "abcdefghijklmnop"


class EngineError(PlanningFailure, RuntimeError):
    """The synthesis engine is missing, failed or ran out of time."""


class EngineMissing(ToolError, EngineError):
    """The synthesis engine is not installed: the user's to fix (exit 2), not a way that failed."""


@dataclass(frozen=True)
class StageCell:
    """One library gate: an inverting stage with branches of ``widths`` inputs, built on ``template``.

    ``area``: branches times the template's cost per section, plus the diodes' cost.
    """

    name: str
    widths: tuple[int, ...]
    template: str
    area: float

    @property
    def expression(self) -> str:
        """The genlib function, pins ``a``, ``b``, ... in branch order.

        >>> StageCell("x", (2, 1), "dual", 2.0).expression
        '!(a*b+c)'
        """
        if not self.widths:
            return "CONST1"
        pins = iter(_PINS)
        return "!(" + "+".join("*".join(next(pins) for _ in range(w)) for w in self.widths) + ")"


def engine_binary() -> str:
    """Path of the ``yosys-abc`` binary shipped in the ``pyosys`` wheel (found without importing it).

    Raises :class:`EngineMissing` naming the package to install when it is absent.
    """
    spec = importlib.util.find_spec("pyosys")
    for folder in (spec.submodule_search_locations or []) if spec else []:
        path = os.path.join(folder, "yosys-abc")
        if os.access(path, os.X_OK):
            return path
    raise EngineMissing("the multi-level synthesis engine (yosys-abc from the 'pyosys' package) is not installed; "
                      "run: python3 -m pip install pyosys")


def _templates(options: SynthesisOptions) -> dict[str, int]:
    """Templates the options allow -> widest branch each takes."""
    allowed = {"single": 1}
    if options.mode != "nor" and options.allow_dual:
        allowed["dual"] = 2
    if options.mode != "nor" and options.diode_fanin >= 2:
        allowed["diode"] = options.diode_fanin
    return allowed


def stage_library(options: SynthesisOptions, section_cost: Mapping[str, float] | None = None,
                  diode_cost: float = 0.0, stage_cost: float = 0.0) -> tuple[StageCell, ...]:
    """Every stage shape the options allow, at most :data:`MAX_CELL_PINS` inputs, each on its cheapest template.

    Shapes: multisets of branch widths (widest first), at most ``options.branch_limit``
    branches, each within the fan-in of some allowed template; a stage is built on one
    template (``single``: one-input branches; ``dual``: branches of one or two inputs;
    ``diode``: up to ``diode_fanin``), so its area is its branch count times that
    template's ``section_cost`` (default 1: area = sections) plus ``diode_cost`` per
    diode, plus ``stage_cost`` per stage (a plate load and its dividers).  Also the
    constant 1 (a plate load alone: no section) and the constant 0 (an inverter on
    it).  Cost: the number of shapes, under a few hundred.

    >>> [c.name for c in stage_library(SynthesisOptions(max_branches=2))]
    ['one', 'zero', 'nand2', 'inv', 'aoi22', 'aoi21', 'nor2']
    """
    costs = {"single": 1.0, "dual": 1.0, "diode": 1.0}
    costs.update(section_cost or {})
    allowed = _templates(options)
    widest = max(allowed.values())
    single = min(costs[t] for t in allowed)
    cells = [StageCell("one", (), "single", stage_cost), StageCell("zero", (), "single", single + 2 * stage_cost)]
    for branches in range(1, options.branch_limit + 1):
        for widths in itertools.combinations_with_replacement(range(widest, 0, -1), branches):
            if sum(widths) > MAX_CELL_PINS:
                continue
            fits = [(stage_cost + costs[t] * branches + (diode_cost * sum(widths) if t == "diode" else 0.0), t)
                    for t, most in allowed.items() if widths[0] <= most]
            area, template = min(fits)
            cells.append(StageCell(_cell_name(widths), widths, template, area))
    return tuple(cells)


def _cell_name(widths: tuple[int, ...]) -> str:
    if widths == (1,):
        return "inv"
    if widths[0] == 1:
        return f"nor{len(widths)}"
    if len(widths) == 1:
        return f"nand{widths[0]}"
    return "aoi" + "".join(str(w) for w in widths)


def genlib_text(cells: tuple[StageCell, ...]) -> str:
    """The genlib library of ``cells`` (unit delays: the mapper optimises area)."""
    lines = []
    for cell in cells:
        if cell.name == "zero":
            lines.append(f"GATE zero {cell.area:.4f} O=CONST0;")
        elif not cell.widths:
            lines.append(f"GATE {cell.name} {cell.area:.4f} O=CONST1;")
        else:
            lines.append(f"GATE {cell.name} {cell.area:.4f} O={cell.expression}; PIN * INV 1 999 1 0 1 0")
    return "\n".join(lines) + "\n"


def _design_names(design, signals: list[str], outputs: list[str]) -> dict[str, str]:
    """Design name -> BLIF name: ``i0``, ``s0``, ``o0``, ... (inputs, signals, outputs), so no
    design name can clash with the engine's own."""
    rename = {name: f"i{k}" for k, name in enumerate(design.input_names)}
    rename.update((name, f"s{k}") for k, name in enumerate(signals))
    rename.update((name, f"o{k}") for k, name in enumerate(outputs))
    return rename


def _header(design, rename: Mapping[str, str], outputs: list[str]) -> list[str]:
    return [".model design", ".inputs " + " ".join(rename[n] for n in design.input_names),
            ".outputs " + " ".join(rename[name] for name in outputs)]


def blif_text(design, blocks: Mapping[str, object], outputs: list[str]) -> tuple[str, dict[str, str]]:
    """BLIF of the design's don't-care-minimised ``blocks`` (``.names`` covers over each block's
    support) for the design outputs ``outputs`` (the others are constants, left out: the engine
    cannot read a constant output).  Returns the text and BLIF name -> design name (see
    :func:`_design_names`).
    """
    signals = _needed_signals(design, blocks)
    rename = _design_names(design, signals, outputs)
    lines = _header(design, rename, outputs)
    for name in signals + outputs:
        cover = blocks[name].sop
        n = len(cover.names)
        lines.append(".names " + " ".join([rename[v] for v in cover.names] + [rename[name]]))
        for cube in cover.cubes:
            row = "".join("-" if not cube.mask >> (n - 1 - k) & 1 else "1" if cube.value >> (n - 1 - k) & 1
                          else "0" for k in range(n))
            lines.append(f"{row} 1" if n else "1")
    lines.append(".end")
    return "\n".join(lines) + "\n", {v: k for k, v in rename.items()}


def expression_blif(design, outputs: list[str]) -> str | None:
    """BLIF of the design's expressions as written (AND, OR, NOT, XOR nodes; signals shared).

    The engine sees the structure the designer wrote (an XOR chain stays one)
    besides the minimised sums of products.  Output don't-cares are not used
    (implementing the on-set exactly is always right).  None when an expression
    holds an operator other than those four or a constant (then only the minimised
    form is used).  Names as in :func:`blif_text`. The formulas go through sympy, whose
    argument order the net numbering follows, so the engine sees the text it always has.
    """
    import sympy

    signals = [s.name for s in design.signals]
    rename = _design_names(design, signals, outputs)
    lines = _header(design, rename, outputs)
    made: dict = {}

    def node(expr) -> str:
        if isinstance(expr, sympy.Symbol):
            return rename[expr.name]
        if expr in made:
            return made[expr]
        if not isinstance(expr, (sympy.Not, sympy.And, sympy.Or, sympy.Xor)) and expr not in (sympy.true, sympy.false):
            raise ValueError(type(expr).__name__)
        args = sorted((node(a) for a in expr.args), key=_natural)
        net = f"x{len(made)}"
        made[expr] = net
        n = len(args)
        if expr is sympy.true or expr is sympy.false:
            lines.append(f".names {net}" + ("\n1" if expr is sympy.true else ""))
        elif isinstance(expr, sympy.Not):
            lines.extend([f".names {args[0]} {net}", "0 1"])
        elif isinstance(expr, sympy.And):
            lines.extend([".names " + " ".join(args + [net]), "1" * n + " 1"])
        elif isinstance(expr, sympy.Or):
            lines.append(".names " + " ".join(args + [net]))
            lines.extend("-" * k + "1" + "-" * (n - 1 - k) + " 1" for k in range(n))
        else:
            acc = args[0]
            for k, other in enumerate(args[1:]):
                out = net if k == n - 2 else f"{net}_{k}"
                lines.extend([f".names {acc} {other} {out}", "01 1", "10 1"])
                acc = out
        return net

    try:
        for spec in list(design.signals) + [o for o in design.outputs if o.name in outputs]:
            lines += [f".names {node(to_sympy(spec.expr))} {rename[spec.name]}", "1 1"]
    except ValueError:
        return None
    lines.append(".end")
    return "\n".join(lines) + "\n"


def _natural(net: str) -> tuple[str, int]:
    return net[0], int(net[1:].split("_")[0])


def run_engine(sources: list[tuple[str, tuple[str, ...]]], genlib: str,
               timeout_s: float = ENGINE_TIMEOUT_S) -> list[list[str | None]]:
    """Run ABC in a temporary directory: each BLIF source with each of its scripts, mapped to ``genlib``.

    ``sources``: (BLIF text, scripts).  Returns, per source, the mapped BLIF of each
    of its scripts in order (None where that script failed on that source).  One
    engine call does all; if it fails, each
    script is run alone so one script's failure costs only its own result.  ABC is
    deterministic: the same inputs give the same netlists.  Raises
    :class:`EngineError` when the binary is missing, exceeds ``timeout_s``, or no
    script maps any source.
    """
    binary = engine_binary()
    with tempfile.TemporaryDirectory(prefix="tubeplan-engine-") as folder:
        with open(os.path.join(folder, "stages.genlib"), "w", encoding="ascii") as f:
            f.write(genlib)
        jobs = []
        for s, (blif, scripts) in enumerate(sources):
            with open(os.path.join(folder, f"design{s}.blif"), "w", encoding="ascii") as f:
                f.write(blif)
            jobs += [(s, k, [f"read_blif design{s}.blif", script, f"write_blif mapped{s}_{k}.blif"])
                     for k, script in enumerate(scripts)]
        deadline = time.monotonic() + timeout_s
        log = _call(binary, folder, [c for _, _, commands in jobs for c in commands], deadline)
        results = [[_read(folder, s, k) for k in range(len(scripts))] for s, (_, scripts) in enumerate(sources)]
        if any(r is None for row in results for r in row):
            for s, k, commands in jobs:
                if results[s][k] is None:
                    log = _call(binary, folder, commands, deadline)
                    results[s][k] = _read(folder, s, k)
    if all(r is None for row in results for r in row):
        raise EngineError("the multi-level synthesis engine failed: " + " / ".join(log.strip().splitlines()[-2:]))
    return results


def _call(binary: str, folder: str, commands: list[str], deadline: float) -> str:
    """One engine run of ``commands`` after reading the library; its output (for error messages)."""
    left = deadline - time.monotonic()
    try:
        if left <= 0:
            raise subprocess.TimeoutExpired(binary, 0)
        done = subprocess.run([binary, "-c", "; ".join(["read_library stages.genlib"] + commands)], cwd=folder,
                              capture_output=True, check=False, text=True, timeout=left)
    except subprocess.TimeoutExpired:
        raise EngineError("the multi-level synthesis engine ran out of time") from None
    return done.stdout + done.stderr


def _read(folder: str, source: int, script: int) -> str | None:
    path = os.path.join(folder, f"mapped{source}_{script}.blif")
    if not os.path.exists(path):
        return None
    with open(path, encoding="ascii") as f:
        return f.read()


def _logical_lines(text: str) -> list[list[str]]:
    """BLIF lines with continuations joined and comments dropped, split into words."""
    out, pending = [], ""
    for raw in text.splitlines():
        line = raw.split("#", 1)[0].rstrip()
        if line.endswith("\\"):
            pending += line[:-1] + " "
            continue
        line = pending + line
        pending = ""
        if line.strip():
            out.append(line.split())
    return out


def read_mapped(text: str, cells: Mapping[str, StageCell], names: Mapping[str, str], design,
                options: SynthesisOptions, constants: Mapping[str, bool]) -> Network:
    """The :class:`Network` of a mapped BLIF netlist.

    Every ``.gate`` is one inverting stage (its pins grouped into branches by
    the cell's widths; a net on two pins of one branch counts once, a branch
    containing another is absorbed).  ``.names`` lines the engine leaves are
    buffers, inverters or constants; ``.barbuf`` lines are wires.  An inverter
    on an input whose complement the design declares is replaced by the
    ``~name`` net.  Nets are then renumbered as
    :func:`planner.stages.network.renumber` does.  ``constants``: design outputs
    left out of the netlist -> their value (1: a plate load alone; 0: an
    inverter on it).  Forms are filled in by the caller.
    """
    output_net = {name: net for net, name in names.items() if net.startswith("o")}
    declared = {spec.name for spec in design.inputs if spec.complement}
    names = {net: name for net, name in names.items() if name in design.input_names}
    alias: dict[str, str] = {}
    drivers: dict[str, tuple] = {}
    lines = _logical_lines(text)
    k = 0
    while k < len(lines):
        words = lines[k]
        k += 1
        if words[0] == ".gate":
            cell = cells[words[1]]
            pins = dict(word.split("=", 1) for word in words[2:])
            out = pins.pop("O")
            if cell.name == "zero":
                drivers["#one"] = ()
                drivers[out] = (("#one",),)
                continue
            letters = iter(_PINS)
            drivers[out] = tuple(tuple(pins[next(letters)] for _ in range(w)) for w in cell.widths)
        elif words[0] in (".barbuf", ".buf"):
            alias[words[2]] = words[1]
        elif words[0] == ".names":
            nets = words[1:]
            rows = []
            while k < len(lines) and not lines[k][0].startswith("."):
                rows.append(lines[k])
                k += 1
            out = nets[-1]
            if len(nets) == 1:
                drivers["#one"] = ()
                drivers[out] = () if ["1"] in rows else (("#one",),)
            elif rows in ([["1", "1"]], [["0", "0"]]):
                alias[out] = nets[0]
            elif rows in ([["0", "1"]], [["1", "0"]]):
                drivers[out] = ((nets[0],),)
            else:
                raise EngineError(f"the engine left an unmapped node {out} ({rows})")

    def resolve(net: str) -> str:
        while net in alias:
            net = alias[net]
        return names.get(net, net)
    records: dict[str, tuple] = {}
    for out, body in drivers.items():
        branches = {tuple(sorted({resolve(x) for x in branch})) for branch in body}
        kept = [b for b in sorted(branches, key=lambda b: (len(b), b))
                if not any(set(o) < set(b) for o in branches)]
        records[resolve(out)] = tuple(sorted(kept))
    # An inverter on a declared input is its complement, already at hand.
    complement_of = {net: "~" + body[0][0] for net, body in records.items()
                     if len(body) == 1 and len(body[0]) == 1 and body[0][0] in declared}
    final: dict[str, tuple] = {}
    for net, body in records.items():
        if net in complement_of:
            continue
        final[net] = ("inverting", tuple((tuple(complement_of.get(x, x) for x in b), options.means_for(len(b)))
                                         for b in body))
    if constants:
        final["#one"] = ("inverting", ())
        final["#zero"] = ("inverting", ((("#one",), "single"),))
    outputs = {o.name: ("#one" if constants[o.name] else "#zero") if o.name in constants
               else complement_of.get(resolve(output_net[o.name]), resolve(output_net[o.name]))
               for o in design.outputs}
    complements = tuple(spec.name for spec in design.inputs if spec.complement)
    forms = {o.name: o.name for o in design.outputs}
    return renumber(design.input_names, complements, final, outputs, forms, {}, {})


def network_area(network: Network, cells: tuple[StageCell, ...]) -> float:
    """Library area of a network: each stage at the area of the cell of its shape."""
    by_widths = {c.widths: c.area for c in cells if c.name != "zero"}
    return sum(by_widths.get(tuple(sorted((len(b.inputs) for b in s.branches), reverse=True)), 0.0)
               for s in network.stages)


@dataclass(frozen=True)
class MultiLevel:
    """A multi-level network and how it was found: ``script`` the engine script, ``area`` its library area."""

    network: Network
    script: str
    area: float
    areas: Mapping[str, float]


def multilevel(design, options: SynthesisOptions = SynthesisOptions(),
               section_cost: Mapping[str, float] | None = None, diode_cost: float = 0.0, stage_cost: float = 0.0,
               scripts: tuple[str, ...] | None = None, timeout_s: float = ENGINE_TIMEOUT_S) -> MultiLevel:
    """The design restructured across outputs and mapped onto the stages ``options`` allow, proven.

    Every script of ``scripts`` is run (one engine call; default :data:`ENGINE_SCRIPTS`, and
    :data:`COLLAPSE_SCRIPTS` up to :data:`COLLAPSE_MAX_INPUTS` inputs); the network with the
    least library area (then fewest stages, then the earlier script) is kept.
    Forms are the minimised SOPs the engine was given; ``signals`` /
    ``inverted_signals`` name the nets that happen to carry a named signal
    (found by simulation, up to 20 inputs).  Deterministic.  Raises
    :class:`EngineError` (engine missing, failed, out of time) or
    :class:`planner.stages.ProofError` (never expected).

    Cost: one engine run; then one simulation per script.
    """
    if scripts is None:
        small = len(design.input_names) <= COLLAPSE_MAX_INPUTS
        scripts = ENGINE_SCRIPTS + (COLLAPSE_SCRIPTS if small else ())
    cells = stage_library(options, section_cost, diode_cost, stage_cost)
    by_name = {c.name: c for c in cells}
    blocks = {b.name: b for b in _blocks(design, options)}
    constants = {o.name: bool(blocks[o.name].sop.cubes) for o in design.outputs
                 if not blocks[o.name].sop.cubes or not blocks[o.name].inverted.cubes}
    outputs = [o.name for o in design.outputs if o.name not in constants]
    blif, names = blif_text(design, blocks, outputs)
    sources = [("minimised", blif, scripts)]
    written = expression_blif(design, outputs)
    if written is not None:
        # Collapsing forgets the structure as written: those scripts would repeat the minimised source's.
        sources.append(("as written", written, tuple(s for s in scripts if not s.startswith("collapse"))))
    if outputs:
        mapped = run_engine([(text, own) for _, text, own in sources], genlib_text(cells), timeout_s)
        results = [(f"{source}: {script}", text) for (source, _, own), texts in zip(sources, mapped)
                   for script, text in zip(own, texts) if text is not None]
    else:
        results = [("constants only", "")]
    best = None
    areas = {}
    for label, text in results:
        network = read_mapped(text, by_name, names, design, options, constants)
        area = network_area(network, cells)
        areas[label] = area
        key = (round(area, 9), len(network.stages), len(areas))
        if best is None or key < best[0]:
            best = (key, network, label, area)
    _, network, script, area = best
    network = _with_forms_and_signals(network, design, blocks)
    prove(network, design)
    return MultiLevel(network, script, area, MappingProxyType(areas))


def _with_forms_and_signals(network: Network, design, blocks: Mapping[str, object]) -> Network:
    """``network`` with each output's minimised form and the nets that carry named signals."""
    forms = {o.name: blocks[o.name].sop.text() if blocks[o.name].sop.cubes else "0" for o in design.outputs}
    signals, inverted = {}, {}
    if len(design.input_names) <= 20 and design.signals:
        from planner.logic import design_table
        values = simulate(network)
        by_value: dict[int, str] = {}
        for net in network.primary_nets + tuple(s.output for s in network.stages):
            by_value.setdefault(values[net], net)
        full = (1 << (1 << len(design.input_names))) - 1
        for s in design.signals:
            on = design_table(design, s.expr, names=design.input_names).on
            if on in by_value:
                signals[s.name] = by_value[on]
            if full & ~on in by_value:
                inverted[s.name] = by_value[full & ~on]
    return Network(network.inputs, network.stages, network.outputs, forms, signals, network.complements, inverted)
