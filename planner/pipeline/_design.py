"""``plan_design``: from a design and a stock to a proven, optimal plan (or what is short)."""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, replace

from planner.electrical import RESET_PULLUP_OHMS, Bistable, DesignRules, Rails, cached_family, design_bistables
from planner.electrical import is_dual_triode
from planner.mapping import (COMPLEMENT, DIODE_FANIN, Counts, Infeasible, MappingOptions, NetworkTried, Plan,
                             Problem, RegisterSetting, Solution, Weights, build_plan, build_problem, clock_nets,
                             lower_bound, place, plan_timing, register_classes, register_view, solve_problem,
                             stage_ways, tube_kinds)
from planner.stages import FanoutError, Stage, SynthesisOptions, cached_network, describe_net, prove, repair_fanout

from ._multilevel import multilevel_networks
from ._shortage import Shortage, diagnose_shortage

_DIODE_RULES = {"solid-state": "solid-state", "vacuum-only": "vacuum", "none": "none"}
_FOLLOWER_PROBE = Stage("F?", "#f?", "follower", input="x")


@dataclass(frozen=True)
class _Candidate:
    """One stage-layer network with its aggregated problem."""

    label: str
    network: object
    problem: Problem | None
    ways: dict
    reason: str = ""


def design_rules(stock, options: MappingOptions) -> DesignRules:
    """The electrical rules for this stock: the options' rules with the stock's diode kind and branch limit."""
    base = options.rules if options.rules is not None else DesignRules()
    branches = stock.max_branches_per_stage or base.max_branches
    return replace(base, diodes=_DIODE_RULES[stock.diodes], max_branches=branches)


def _weights(stock, options: MappingOptions) -> Weights:
    o = stock.objective
    return Weights(o.envelopes, o.heater_watts, o.scarce, options.mode or o.mode)


def _synthesis_variants(stock, family, rules: DesignRules, options: MappingOptions):
    """Stage-layer options to try, derived from the stock: ([(label, SynthesisOptions)], diode fan-in).

    Dual-control branches where a stocked type has a dual template; diode ANDs
    (up to :data:`DIODE_FANIN` inputs) where the stock has diodes and a type
    has a diode template.  Besides that network, the ones without dual-control
    branches, without diodes and with neither are tried, since which is best
    depends on the stock (scarce multigrid tubes, short diode sections).
    """
    names = [t.tube for t in stock.tubes]
    dual = any((n, "dual") in family.drivers for n in names)
    diode_types = any(not stock.catalogue.get(n).amplifying_sections and stock.catalogue.get(n).diode_sections
                      for n in names)
    have_diodes = stock.diodes == "solid-state" or (stock.diodes == "vacuum-only" and diode_types)
    fanin = DIODE_FANIN if have_diodes and any((n, "diode") in family.drivers for n in names) else 0
    mode = options.synthesis_mode or "aoi"
    base = dict(max_branches=rules.max_branches, mode=mode, flatten_limit=options.flatten_limit)
    tries = [("dual-control and diode branches", dual, fanin), ("no dual-control branches", False, fanin),
             ("no diode ANDs", dual, 0), ("single-input branches only", False, 0)]
    seen, out, problems = set(), [], []
    for label, allow_dual, diode_fanin in tries:
        key = (allow_dual, diode_fanin)
        if key in seen:
            continue
        seen.add(key)
        try:
            out.append((label, SynthesisOptions(allow_dual=allow_dual, diode_fanin=diode_fanin, **base)))
        except ValueError as problem:
            problems.append(str(problem))
    if not out:
        raise Shortage("the stock cannot build this kind of stage: " + "; ".join(problems))
    return out, fanin


def _fanout_limits(family, stock, diode_fanin: int):
    """The most loads a stage may drive: the best stocked way that builds it (see
    :func:`planner.mapping.stage_ways`); a follower, the best stocked follower."""
    kinds = tube_kinds(stock, family)
    follower = max((family.followers[k.tube].fanout_limit for k in kinds if k.tube in family.followers), default=0)
    best: dict[tuple, int] = {}

    def limit(stage) -> int:
        if stage.kind == "follower":
            return follower
        shape = tuple(len(b.inputs) for b in stage.branches)
        if shape not in best:
            ways = stage_ways(stage, 0, family, kinds, frozenset(), diode_fanin)
            best[shape] = max((w.fanout_limit for w in ways), default=0)
        return best[shape]
    return limit


def _capped(limit, cap: int | None):
    """``limit`` held to at most ``cap`` loads (None: as it is); a follower's limit is never capped."""
    if cap is None:
        return limit
    return lambda stage: limit(stage) if stage.kind == "follower" else min(limit(stage), cap)


def _repair_caps(family, stock) -> list[int | None]:
    """Load limits to repair to: each stocked template's (None: the best way of each stage), so a network
    whose nets the plentiful lower-limit types can drive is among the candidates."""
    names = {t.tube for t in stock.tubes}
    limits = sorted({d.fanout_limit for (tube, _t), d in family.drivers.items() if tube in names
                     and d.fanout_limit >= 2}, reverse=True)
    return [None] + limits[1:]


#: How each repair strategy is named in progress messages and plan labels.
_STRATEGY_WORDS = {"buffers": "buffer trees", "duplicates": "duplicated drivers", "followers": "followers"}


def _register_setting(design, stock, family, tubes) -> RegisterSetting:
    """The bistable of every stocked dual triode that can hold a register, on one shared clock.

    Raises :class:`Shortage` when the stock has no such type or no solid-state diodes for the steering.
    """
    if stock.diodes != "solid-state":
        raise Shortage(f"the design's registers need solid-state steering diodes, and the stock's diodes are "
                       f"{stock.diodes!r}; set diodes: solid-state",
                       unbuildable=("registers need solid-state steering diodes",))
    duals = [(t, w) for t, w in tubes if is_dual_triode(t)]
    if not duals:
        raise Shortage("the design's registers need a dual triode (two triode sections in one envelope), and the "
                       "stock has none", unbuildable=("no dual triode for the registers",))
    swing, results = design_bistables(family, duals, {t.name: t for t, _ in tubes})
    usable = {name: b for name, b in results.items() if isinstance(b, Bistable)}
    if not usable:
        reasons = "; ".join(f"{name}: {why.message}" for name, why in sorted(results.items()))
        raise Shortage(f"no stocked dual triode can hold a register: {reasons}", unbuildable=(reasons,))
    clock, reset = clock_nets(design)
    return RegisterSetting(usable, clock, reset, swing)


def _reset_amps(stock, rules: DesignRules) -> float:
    """The most the reset line takes from B+ (and gives the bias supply) while a reset contact is closed."""
    span = (stock.plate.volts - stock.bias.volts) * (1 + rules.supply_tolerance)
    return span / (RESET_PULLUP_OHMS * (1 - rules.resistor_tolerance))


def _primary_limits(design, setting) -> tuple[dict, dict]:
    """Limits on primary nets (registers' outputs, inputs declaring a fan-out) and their names for messages."""
    limits, names = {}, {}
    for spec in design.inputs:
        if spec.fanout is not None:
            limits[spec.name] = spec.fanout
            if spec.complement:
                limits[COMPLEMENT + spec.name] = spec.fanout
    if setting is not None:
        # A register's outputs carry no more loads than the best stocked bistable drives.
        most = max(b.fanout_limit for b in setting.bistables.values())
        for reg in design.registers:
            limits[reg.name] = limits[COMPLEMENT + reg.name] = most
            names[reg.name] = f"register {reg.name}"
            names[COMPLEMENT + reg.name] = f"the complement of register {reg.name}"
    return limits, names


def _repaired(label, network, family, stock, fanin, limits, names, options):
    """``network`` repaired for fan-out every way worth trying: [(label, network or None, reason)]; the
    caller drops networks met before (:func:`_candidates`).

    Each cap of :func:`_repair_caps` with each strategy of
    :func:`planner.stages.repair_fanout` (followers only where a stocked
    follower drives two loads or more, and first: among equal plans the first
    found wins, and a follower adds no inversion delay); the integer program then chooses.
    """
    best = _fanout_limits(family, stock, fanin)  # one table of stage shapes, held to each cap below
    strategies = ["buffers", "duplicates"]
    if best(_FOLLOWER_PROBE) >= 2:
        strategies.insert(0, "followers")
    out = []
    for cap in _repair_caps(family, stock):
        limit = _capped(best, cap)
        for strategy in strategies:
            try:
                repaired = repair_fanout(network, limit, limits, strategy=strategy, names=names)
            except FanoutError as problem:
                reason = f"{_STRATEGY_WORDS[strategy]}: {problem}"
                options.say(f"mapping: network '{label}' fails: {reason}")
                out.append((label, None, reason))
                continue
            if repaired == network:
                out.append((label, repaired, ""))
                continue
            at = "" if cap is None else f" to {cap} loads"
            # Where no follower fits (every load a diode gate's, say), the followers' network is a buffers' one.
            if strategy == "followers" and not any(s.kind == "follower" for s in repaired.stages):
                strategy = "buffers"
            out.append((f"{label}, {_STRATEGY_WORDS[strategy]}{at}", repaired, ""))
    return out


def _candidates(design, stock, family, rules, options, weights, setting=None) -> list[_Candidate]:
    """Every stage-layer network the stock allows for ``design`` (its registers' view), repaired for
    fan-out, proven, with its problem."""
    view = register_view(design)
    found, seen = [], set()
    variants, fanin = _synthesis_variants(stock, family, rules, options)
    limits, names = _primary_limits(design, setting)
    networks = []
    for variant, synth in variants:
        options.say(f"mapping: synthesising and proving network '{variant}'")
        networks.append((variant, cached_network(view, synth), ""))
    networks += multilevel_networks(view, stock, family, variants, weights, options)
    ways_memo: dict = {}  # the ways of each stage shape, shared by every candidate
    for variant, synthesised, failure in networks:
        if synthesised is None:
            found.append(_Candidate(variant, None, None, {}, failure))
            continue
        for label, network, reason in _repaired(variant, synthesised, family, stock, fanin, limits, names, options):
            if network is None:
                found.append(_Candidate(label, None, None, {}, reason))
                continue
            key = (network.stages, tuple(sorted(network.outputs.items())))
            if key in seen:
                continue
            seen.add(key)
            prove(network, view)  # outputs, next states and their complements, before any plan is made
            registers, stuck_registers = ((), [])
            reset_amps = 0.0
            if setting is not None:
                registers, stuck_registers = register_classes(design, network, setting.bistables, stock.tubes)
                reset_amps = _reset_amps(stock, rules)
            # Every network may use every template the stock allows (diode ANDs included).
            problem, ways = build_problem(network, family, stock, weights, diode_fanin=fanin, registers=registers,
                                          fixed_plate_amps=reset_amps, fixed_bias_amps=reset_amps,
                                          ways_memo=ways_memo)
            loads = network.load_counts()
            stuck = [f"stage {s.id} ({s.view} driving {describe_net(network, s.output, names)}, "
                     f"{loads[s.output]} loads)" for s in network.stages if not ways[s.id]]
            stuck += stuck_registers
            reason = ""
            if stuck:
                reason = "no stocked type has a template for " + ", ".join(stuck[:5]) + (
                    f" and {len(stuck) - 5} more" if len(stuck) > 5 else "")
                options.say(f"mapping: network '{label}' fails: {reason}")
            found.append(_Candidate(label, network, None if stuck else problem, ways, reason))
            options.say(f"mapping: network '{label}': {len(network.stages)} stages, "
                        f"{len(problem.classes)} stage classes")
    return found


def _rank(counts: Counts, weights: Weights) -> tuple:
    terms = dict(counts.terms)
    if weights.mode == "lexicographic":
        return (round(terms["scarce envelopes"]), round(terms["envelopes"]), terms["heater watts"])
    return (terms["weighted"],)


def plan_design(design, stock, options: MappingOptions = MappingOptions()) -> Plan:
    """The cheapest plan for ``design`` within ``stock`` and its supplies, proven; or :class:`Shortage`.

    Steps: the logic family for the stocked types (each at its condition, or
    the rules' wear); with registers, a bistable for each stocked dual triode
    on one shared clock and the logic between the registers
    (:func:`planner.mapping.register_view`); the stage networks the
    stock allows (see :func:`_synthesis_variants`) and the multi-level ones
    (:func:`multilevel_networks`), each with followers
    wherever no stocked template can drive a net's loads, each proven against
    the design (next states and their complements included); the
    aggregated integer program for each (:func:`planner.mapping.solve_problem`); the
    best plan over all of them.  When none fits, the purchase and overloads
    that would make one fit (the fewest envelopes bought over all networks)
    are raised as :class:`Shortage`.  The plan carries its timing estimate
    (:func:`planner.mapping.plan_timing`).  Deterministic for equal inputs.
    """
    start = time.monotonic()
    deadline = start + options.time_limit_s
    rules = design_rules(stock, options)
    tubes = [(stock.catalogue.get(t.tube), t.condition if t.condition is not None else rules.wear)
             for t in stock.tubes if stock.catalogue.get(t.tube).amplifying_sections]
    if not tubes:
        raise Shortage("the stock has no tube type with an amplifying section (triode, pentode or multigrid)")
    options.say(f"mapping: the logic family for {len(tubes)} tube types (designed once, then kept in the cache)")
    family = cached_family(Rails(stock.plate.volts, stock.bias.volts), tubes, rules,
                           elevations=tuple(w.elevated_volts for w in stock.windings))
    for (tube, what), why in sorted(family.rejected.items()):
        if what == "follower":
            options.say(f"mapping: no {tube} follower: {why.limit} short by {why.amount:.1f} {why.unit}: "
                        f"{why.message}")
    weights = _weights(stock, options)
    setting = _register_setting(design, stock, family, tubes) if design.registers else None
    candidates = _candidates(design, stock, family, rules, options, weights, setting)
    best, tried = _solve_candidates(candidates, weights, options, deadline)
    if best is None:
        raise diagnose_shortage(candidates, family, stock, options, deadline)
    cand, counts = best
    placement = place(cand.network, cand.problem, counts, tuple(r.name for r in design.registers))
    last = counts.levels[-1]
    solution = Solution(options.solver, counts.status, last.value, last.lp_bound, last.gap,
                        time.monotonic() - start, weights.mode,
                        tuple((lv.criterion, lv.value, lv.lp_bound, lv.gap) for lv in counts.levels),
                        counts.terms, cand.label, tuple(tried))
    plan = build_plan(design, cand.network, family, stock, cand.problem, counts, placement, solution, rules, setting)
    options.say("mapping: estimating the timing")
    timing, flips = plan_timing(plan, cand.network, placement, family, stock, rules, setting)
    registers = tuple(replace(r, clock_to_q_seconds=flips[r.name]) for r in plan.registers)
    wear: dict[str, float] = {}
    for tube, condition in tubes:
        wear[tube.name] = min(condition, wear.get(tube.name, condition))
    return replace(plan, timing=timing, registers=registers, tube_wear=tuple(sorted(wear.items())),
                   supply_tolerance=rules.supply_tolerance)


#: How far (relative) a candidate's lower bound must exceed the best plan's value before it is
#: not solved: far above the LP solver's tolerances (about 1e-7), so a bound a rounding error too
#: high never drops a plan that would have tied.
_BOUND_MARGIN = 1e-6


def _beyond(bound: float, best: Counts, weights: Weights) -> bool:
    """Whether every plan of a candidate whose first criterion is at least ``bound`` ranks below ``best``."""
    value = _rank(best, weights)[0]
    return bound > value + _BOUND_MARGIN * max(1.0, abs(value))


def _pruned_note(bound: float, best: Counts, weights: Weights) -> str:
    if weights.mode == "lexicographic":
        return (f"not solved: at least {math.ceil(bound - _BOUND_MARGIN)} scarce envelopes (LP bound), "
                f"the chosen plan's {_rank(best, weights)[0]}")
    return f"not solved: objective at least {bound:.2f} (LP bound), the chosen plan's {_rank(best, weights)[0]:.2f}"


def _solve_candidates(candidates, weights: Weights, options: MappingOptions, deadline: float):
    """The best candidate and its counts (None when none fits), and what each candidate needed, in order.

    Each buildable candidate's LP relaxation is solved first, in-process
    (:func:`planner.mapping.lower_bound`): an infeasible one does not fit the
    stock.  The others are solved exactly (:func:`planner.mapping.solve_problem`)
    in order of their bounds, the lowest first; one whose bound already exceeds
    the best plan found is not solved (it cannot win or tie) and is listed with
    its bound.  The best is the least rank, then the earliest candidate, as if
    every one were solved in order.
    """
    options.say(f"mapping: bounding {sum(c.problem is not None for c in candidates)} candidate networks "
                "(their LP relaxations), then solving the promising ones")
    bounds, by_shape = {}, {}
    for k, cand in enumerate(candidates):
        if cand.problem is None:
            continue
        # Problems differing only in which stages make up each class have the same model.
        p = cand.problem
        shape = (p.kinds, tuple((c.count, c.ways) for c in p.classes), p.supplies, p.weights, p.vacuum_diodes,
                 tuple((r.count, r.ways) for r in p.registers))
        if shape not in by_shape:
            by_shape[shape] = lower_bound(p, time_limit_s=max(1.0, deadline - time.monotonic()))
        bounds[k] = by_shape[shape]
    outcomes: dict[int, tuple] = {}  # k -> (counts or None, note)
    best = None  # (rank, k, counts)
    for k in sorted((k for k in bounds if bounds[k] is not None), key=lambda k: (bounds[k], k)):
        if best is not None and _beyond(bounds[k], best[2], weights):
            continue
        cand = candidates[k]
        try:
            counts = solve_problem(cand.problem, solver=options.solver, gap=options.gap,
                                   time_limit_s=max(1.0, deadline - time.monotonic()))
        except Infeasible:
            outcomes[k] = (None, "does not fit the stock")
            continue
        outcomes[k] = (counts, "")
        if best is None or (_rank(counts, weights), k) < best[:2]:
            best = (_rank(counts, weights), k, counts)
    tried = []
    for k, cand in enumerate(candidates):
        if cand.problem is None:
            tried.append(_tried(cand, None, cand.reason))
            continue
        if k in outcomes:
            counts, note = outcomes[k]
        elif bounds[k] is None:  # its LP relaxation is infeasible
            counts, note = None, "does not fit the stock"
        else:  # its bound exceeds the best plan's
            counts, note = None, _pruned_note(bounds[k], best[2], weights)
        if counts is None:
            options.say(f"mapping: network '{cand.label}' {note}")
            tried.append(_tried(cand, None, note))
            continue
        options.say(f"mapping: network '{cand.label}': {dict(counts.terms)['envelopes']:.0f} envelopes")
        tried.append(_tried(cand, dict(counts.terms)["envelopes"], ""))
    return (None if best is None else (candidates[best[1]], best[2])), tried


def _tried(cand: _Candidate, envelopes: float | None, note: str) -> NetworkTried:
    """What one candidate network needed: stages, sections and its plan's envelopes."""
    if cand.network is None:
        return NetworkTried(cand.label, None, None, None, note)
    return NetworkTried(cand.label, len(cand.network.stages), cand.network.cost().sections,
                        None if envelopes is None else round(envelopes, 6), note)

