"""From a design to a proven stage network: blocks, polarity, decomposition.

Every named signal and every output is a *block*, minimised over its own
support (inputs and earlier signals as variables; where the design has at most
20 inputs, the combinations of signal values no input assignment produces are
don't-cares too).  Each block has two candidates:

* ``true``: one AND-OR-INVERT stage on the minimum SOP of ``~f``: ``f = NOT(SOP(~f))``;
* ``inverted``: the stage on the minimum SOP of ``f``, driving ``~f``; a consumer
  needing ``f`` (every design output does) gets an inverter.

Literals ``~x`` come from shared inverters (or a declared ``~a``).  Terms wider
than a branch and sums longer than a stage are decomposed (see
:mod:`planner.stages.decompose` and :meth:`Builder.aoi_net`).  The choice of
candidates minimises sections, then stages, then diodes: all polarity choices
of up to :data:`MAX_POLARITY_ENUMERATION` signals are tried, more by coordinate
descent; each output takes its cheaper candidate given the signals.  Where
branches take two inputs, a block of at most three inputs is also tried as an
exact minimum NAND circuit over every net already built
(:mod:`planner.stages.nand_exact`), and in ``aoi`` mode a whole NAND-style
build (NAND and inverter stages are AND-OR-INVERT stages too) is kept when it
needs fewer sections.  The result is proven against the design before it is
returned.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from types import MappingProxyType
from typing import Callable, Mapping

from planner.formula import FALSE
from planner.logic import (EXHAUSTIVE_LIMIT, BlockTooLarge, Cover, TruthTable, minimise, minimise_complement,
                           table_from_expr)
from planner.logic import design_support, design_table, output_support, output_table, used_inputs

from .builder import Builder
from .nand_exact import EXACT_MAX_GATES, EXACT_MAX_VARIABLES, cached_nand_circuit
from .nand_table import best_completion
from .network import SECTIONS_PER_BRANCH, Network
from .options import SynthesisOptions
from .simulate import input_patterns, prove

#: Up to this many signals every polarity choice is tried (2**6 networks built).
MAX_POLARITY_ENUMERATION = 6
#: Most nets the exact NAND search starts from (the inputs, then the latest nets built).
EXACT_MAX_START = 14
#: Passes of coordinate descent over signal polarities above that.
POLARITY_PASSES = 3


@dataclass(frozen=True)
class Candidate:
    """One way to build a block, costed on its own.

    ``polarity``: what the block's own last stage drives (``"true"``: f,
    ``"inverted"``: ~f; for an output, ``inverted`` includes the inverter back
    to f).  Costs assume every literal at hand in both polarities; ``literals``
    lists those it needs (``"~x"``: the complement of variable ``x``), whose
    inverters are shared network-wide.
    """

    block: str
    kind: str
    polarity: str
    form: str
    literals: tuple[str, ...]
    sections_by_means: Mapping[str, int]
    diodes: int
    stages: int
    chosen: bool

    @property
    def sections(self) -> int:
        return sum(SECTIONS_PER_BRANCH[m] * n for m, n in self.sections_by_means.items())


@dataclass(frozen=True)
class Synthesis:
    """The chosen network, and every block's candidates for the integer program."""

    network: Network
    candidates: Mapping[str, tuple[Candidate, ...]]
    signal_polarity: Mapping[str, str]


@dataclass(frozen=True)
class _Block:
    name: str
    kind: str
    table: TruthTable
    sop: Cover
    inverted: Cover
    flat: TruthTable | None = None

    @property
    def variables(self) -> tuple[str, ...]:
        return self.table.names


def _terms(cover: Cover) -> list[list[tuple[str, bool]]]:
    n = len(cover.names)
    terms = []
    for cube in cover.cubes:
        terms.append([(name, bool(cube.value >> (n - 1 - k) & 1))
                      for k, name in enumerate(cover.names) if cube.mask >> (n - 1 - k) & 1])
    return terms


def _reachable(variables: tuple[str, ...], bits: Mapping[str, int], full: int) -> int:
    """Points of the block's own space that some input assignment produces (bitset, variables[0] MSB).

    A depth-first walk over the variables, ANDing each one's input-space bitset
    or its complement; empty intersections are cut off, so the cost is at most
    ``2 * 2**k`` big-integer ANDs for ``k`` variables.
    """
    reach = 0
    stack = [(0, 0, full)]
    while stack:
        depth, index, region = stack.pop()
        if depth == len(variables):
            reach |= 1 << index
            continue
        b = bits[variables[depth]]
        for value, part in ((0, region & ~b), (1, region & b)):
            if part:
                stack.append((depth + 1, 2 * index + value, part))
    return reach


def _blocks(design, options: SynthesisOptions) -> list[_Block]:
    """Every signal then every output, minimised over its own support."""
    names = design.input_names
    order = names + tuple(s.name for s in design.signals)
    signal_set = {s.name for s in design.signals}
    exhaustive = len(names) <= EXHAUSTIVE_LIMIT
    bits: dict[str, int] = {}
    full = 0
    if exhaustive:
        bits, full = input_patterns(names)
    specs = [(s.name, "signal", s.expr, FALSE, None) for s in design.signals]
    specs += [(o.name, "output", None, None, o) for o in design.outputs]
    blocks = []
    for name, kind, expr, dc, output in specs:
        if output is not None and output.minterms is not None:  # read as a table, never an expression
            support = output_support(design, output)
            table = output_table(design, output, support)
        else:
            if output is not None:
                expr, dc = output.expr, output.dont_care
            support = design_support(design, expr, dc)
            if options.flatten_limit is not None and len(support) <= options.flatten_limit:
                table = design_table(design, expr, dc, support)
            else:
                table = table_from_expr(expr, used_inputs(order, expr, dc), dc)
        variables = table.names
        if exhaustive and signal_set & set(variables):
            unreachable = table.full & ~_reachable(variables, bits, full)
            table = TruthTable(variables, table.on & ~unreachable, table.dc | unreachable)
        flat = None
        if exhaustive:
            if kind == "signal":
                bits[name] = design_table(design, expr, names=names).on
            if options.fanin >= 2 and len(support) <= EXACT_MAX_VARIABLES:
                flat = table if expr is None else design_table(design, expr, dc, support)
        try:
            blocks.append(_Block(name, kind, table, minimise(table), minimise_complement(table), flat))
        except BlockTooLarge as problem:
            raise BlockTooLarge(f"{kind} {name!r}: {problem}") from None
    return blocks


def _table_node(i: int, starts: int) -> int:
    """A table circuit's node index among ``starts`` start nets: inputs keep theirs, gates follow the starts."""
    return i if i < 3 else starts + i - 3


def _form(block: _Block, polarity: bool, exact: bool) -> str:
    """The expression of f that the chosen build follows."""
    if not block.inverted.cubes:
        return "1"
    if not block.sop.cubes:
        return "0"
    terms = _terms(block.sop)
    if exact or not polarity or (len(terms) == 1 and len(terms[0]) == 1):
        return block.sop.text()
    return f"~({block.inverted.text()})"


class _Assembly:
    """One build of the network for given signal polarities (True: the net carries the signal)."""

    def __init__(self, options: SynthesisOptions, blocks: Mapping[str, _Block], var_net: Mapping[str, tuple],
                 complements: Mapping[str, str], cache: dict) -> None:
        self.options = options
        self.blocks = blocks
        self.builder = Builder(options, complements)
        self.var_net: dict[str, tuple[str, bool]] = dict(var_net)
        self.cache = cache
        self.roots: list[str] = []

    def literal(self, var: str, positive: bool) -> str:
        net, polarity = self.var_net[var]
        return net if polarity == positive else self.builder.complement(net)

    def _trial(self, make: Callable[[], str]) -> tuple[tuple[int, int, int], Builder, str]:
        saved = self.builder
        self.builder = saved.copy()
        try:
            net = make()
            return self.builder.live_cost(self.roots + [net]), self.builder, net
        finally:
            self.builder = saved

    def block_net(self, block: _Block, polarity: bool) -> tuple[str, bool]:
        """A net carrying f (``polarity``) or ~f; and whether the exact NAND search built it."""
        if not block.inverted.cubes or not block.sop.cubes:
            high = self.builder.constant_high()
            return (high if polarity == bool(block.sop.cubes) else self.builder.complement(high)), False
        terms = _terms(block.sop)
        if len(terms) == 1 and len(terms[0]) == 1:
            (var, positive), = terms[0]
            return self.literal(var, positive == polarity), False
        cover = _terms(block.inverted if polarity else block.sop)
        heuristic = self._trial(lambda: self.builder.aoi_net(
            [[self.literal(v, s) for v, s in term] for term in cover]))
        best, exact = heuristic, False
        if block.flat is not None:
            table = block.flat
            target = table.on if polarity else table.off
            base = self.builder.live_cost(self.roots)
            bound = min(EXACT_MAX_GATES, heuristic[0][1] - base[1] - 1)
            if bound >= 1:
                trial = self._trial(lambda: self._exact(table.names, target, table.care, bound))
                if trial[2] is None:
                    trial = self._trial(lambda: self._xor_split(table.names, target, table.care))
                if trial[2] is not None and trial[0] < heuristic[0]:
                    best, exact = trial, True
        self.builder = best[1]
        return best[2], exact

    def _xor_split(self, names: tuple[str, ...], target: int, care: int) -> str | None:
        """``f = x XOR g`` where f's two cofactors on ``x`` are complements (all care):
        build ``g`` by exact search (or a further split), then f from ``x`` and ``g``."""
        patterns, full = input_patterns(names)
        if care != full:
            return None
        for k, x in enumerate(names):
            shift = 1 << (len(names) - 1 - k)
            low = target & ~patterns[x]
            g = low | (low << shift)
            if target == full & (g ^ patterns[x]):
                part = self._exact(names, g, full, EXACT_MAX_GATES)
                if part is None:
                    part = self._xor_split(names, g, full)
                if part is not None:
                    return self._exact(names, target, full, EXACT_MAX_GATES)
        return None

    def _exact(self, names: tuple[str, ...], target: int, care: int, bound: int) -> str | None:
        """A minimum NAND circuit for ``target`` over the inputs ``names``, from every net at
        hand that depends on those inputs only (so outputs share gates), within ``bound`` gates."""
        patterns, full = input_patterns(names)
        values = dict(patterns)
        for name in names:
            if self.builder.has_complement(name) and self.builder.complement(name) == "~" + name:
                values["~" + name] = full & ~patterns[name]
        for net, (kind, body) in self.builder.drivers.items():
            uses = (body,) if kind == "follower" else tuple(x for inputs, _ in body for x in inputs)
            if all(x in values for x in uses):
                if kind == "follower":
                    values[net] = values[body]
                else:
                    conducting = 0
                    for inputs, _ in body:
                        on = full
                        for x in inputs:
                            on &= values[x]
                        conducting |= on
                    values[net] = full & ~conducting
        nets, funcs = [], []
        for net, f in values.items():
            if f not in funcs:
                nets.append(net)
                funcs.append(f)
        primaries = len(names) + sum(1 for x in nets if x.startswith("~"))
        if len(nets) > EXACT_MAX_START:
            nets = nets[:primaries] + nets[len(nets) - (EXACT_MAX_START - primaries):]
            funcs = [values[x] for x in nets]
        key = (tuple(funcs), target, care, bound)
        if key not in self.cache:
            self.cache[key] = self._table_or_search(names, nets, funcs, target, care, full, bound)
        gates = self.cache[key]
        if gates is None:
            return None
        if not gates:
            return next(net for net, f in zip(nets, funcs) if (f ^ target) & care == 0)
        for i, j in gates:
            nets.append(self.builder.complement(nets[i]) if i == j else self.builder.stage([[nets[i], nets[j]]]))
        return nets[-1]

    def _table_or_search(self, names: tuple[str, ...], nets: list[str], funcs: list[int], target: int,
                         care: int, full: int, bound: int) -> list[tuple[int, int]] | None:
        """Gates over ``nets`` (as :func:`nand_circuit` returns them) for ``target`` within ``bound``.

        Three variables: the stored minimum circuit from the plain inputs
        (:func:`nand_table.best_completion`); a search runs only when other nets
        (complements, other blocks' nets) might share gates, and only for a circuit
        smaller than the table's. Searches are memoised by their start functions,
        so network variants never repeat one (:func:`cached_nand_circuit`).
        """
        if any((f ^ target) & care == 0 for f in funcs):
            return []
        stored = None
        if len(names) == 3 and nets[:3] == list(names):
            found = best_completion(target, care)
            if found is not None:
                stored = [(_table_node(i, len(nets)), _table_node(j, len(nets))) for i, j in found]
        if stored is not None and (len(nets) == 3 or len(stored) == 1):
            return stored if len(stored) <= bound else None
        limit = bound if stored is None else min(bound, len(stored) - 1)
        searched = cached_nand_circuit(tuple(funcs), target, care, full, limit) if limit >= 1 else None
        if searched is not None:
            return searched
        return stored if stored is not None and len(stored) <= bound else None

    def output_net(self, block: _Block) -> tuple[str, bool, bool]:
        """The cheaper of the two candidates for an output: (net carrying f, polarity, exact)."""
        def make(polarity: bool) -> Callable[[], str]:
            def build() -> str:
                net, exact = self.block_net(block, polarity)
                made[polarity] = exact
                return net if polarity else self.builder.complement(net)
            return build
        made: dict[bool, bool] = {}
        trials = [(self._trial(make(p)), p) for p in (True, False)]
        (cost, builder, net), polarity = min(trials, key=lambda t: (t[0][0], not t[1]))
        self.builder = builder
        self.roots.append(net)
        return net, polarity, made[polarity]


def _needed_signals(design, blocks: Mapping[str, _Block]) -> list[str]:
    """Signals some output depends on (transitively), in topological order."""
    needed: set[str] = set()
    for out in reversed(design.outputs):
        needed |= set(blocks[out.name].variables)
    for signal in reversed(design.signals):
        if signal.name in needed:
            needed |= set(blocks[signal.name].variables)
    return [s.name for s in design.signals if s.name in needed]


def _assemble(design, options, blocks, signals: list[str], polarity: Mapping[str, bool], cache: dict):
    complements = {spec.name: "~" + spec.name for spec in design.inputs if spec.complement}
    asm = _Assembly(options, blocks, {name: (name, True) for name in design.input_names}, complements, cache)
    for name in signals:
        net, _ = asm.block_net(blocks[name], polarity[name])
        asm.var_net[name] = (net, polarity[name])
    chosen = {}
    for out in design.outputs:
        chosen[out.name] = asm.output_net(blocks[out.name])
    return asm, chosen


def _candidates(options, blocks: Mapping[str, _Block], block_names: list[str], chosen: Mapping[str, bool],
                cache: dict) -> dict[str, tuple[Candidate, ...]]:
    """Both candidates of every block, each built alone with every literal at hand."""
    result = {}
    for name in block_names:
        block = blocks[name]
        found = []
        # The exact NAND search works over the block's inputs: they are at hand too.
        names = tuple(dict.fromkeys(block.variables + (block.flat.names if block.flat else ())))
        for polarity in (True, False):
            var_net = {v: (v, True) for v in block.variables}
            asm = _Assembly(options, blocks, var_net, {v: "~" + v for v in names}, cache)
            net, exact = asm.block_net(block, polarity)
            if block.kind == "output" and not polarity:
                net = asm.builder.complement(net)
            network = asm.builder.network(names, names, {name: net}, {}, {}, {})
            cost = network.cost()
            used = {x for stage in network.stages for x in stage.input_nets} | set(network.outputs.values())
            literals = tuple(lit for v in names for lit in (v, "~" + v) if lit in used)
            found.append(Candidate(name, block.kind, "true" if polarity else "inverted",
                                   _form(block, polarity, exact), literals, cost.sections_by_means,
                                   cost.diodes, cost.stages, chosen.get(name) == polarity))
        result[name] = tuple(found)
    return result


def _choose_polarity(design, options, blocks, signals, cache):
    """The best build over signal polarities: all of them up to :data:`MAX_POLARITY_ENUMERATION`
    signals, else coordinate descent from all-true.  Returns ((cost, assembly, chosen), polarity)."""
    def build(polarity):
        asm, chosen = _assemble(design, options, blocks, signals, polarity, cache)
        return asm.builder.live_cost(asm.roots), asm, chosen

    polarity = {s: True for s in signals}
    best = build(polarity)
    if len(signals) <= MAX_POLARITY_ENUMERATION:
        for pattern in range(1, 1 << len(signals)):
            trial = {s: not (pattern >> k & 1) for k, s in enumerate(signals)}
            result = build(trial)
            if result[0] < best[0]:
                best, polarity = result, trial
    else:
        for _ in range(POLARITY_PASSES):
            improved = False
            for s in signals:
                trial = dict(polarity, **{s: not polarity[s]})
                result = build(trial)
                if result[0] < best[0]:
                    best, polarity, improved = result, trial, True
            if not improved:
                break
    return best, polarity


def synthesise(design, options: SynthesisOptions = SynthesisOptions()) -> Synthesis:
    """The stage network for ``design`` under ``options``, proven against the design.

    Deterministic: the same design and options give an identical network.
    Raises :class:`planner.stages.ProofError` if the result were ever wrong.
    """
    block_list = _blocks(design, options)
    blocks = {b.name: b for b in block_list}
    signals = _needed_signals(design, blocks)
    cache: dict = {}
    best, polarity = _choose_polarity(design, options, blocks, signals, cache)
    if options.mode == "aoi" and options.fanin >= 2:
        # NAND and inverter stages are AND-OR-INVERT stages too: the NAND-style build
        # (multi-level, exact for small blocks) sometimes needs fewer sections.
        nand = _choose_polarity(design, replace(options, mode="nand"), blocks, signals, cache)
        if nand[0][0] < best[0]:
            best, polarity = nand
    _, asm, chosen = best
    outputs = {name: net for name, (net, _, _) in chosen.items()}
    forms = {name: _form(blocks[name], p, exact) for name, (_, p, exact) in chosen.items()}
    true_nets, inverted_nets = {}, {}
    for s in signals:
        net, pol = asm.var_net[s]
        (true_nets if pol else inverted_nets)[s] = net
        if asm.builder.has_complement(net):
            (inverted_nets if pol else true_nets)[s] = asm.builder.complement(net)
    complements = tuple(spec.name for spec in design.inputs if spec.complement)
    network = asm.builder.network(design.input_names, complements, outputs, forms, true_nets, inverted_nets)
    prove(network, design)
    choice = {s: polarity[s] for s in signals}
    choice.update((name, p) for name, (_, p, _) in chosen.items())
    candidates = _candidates(options, blocks, signals + [o.name for o in design.outputs], choice, cache)
    return Synthesis(network, MappingProxyType(candidates),
                     MappingProxyType({s: "true" if polarity[s] else "inverted" for s in signals}))
