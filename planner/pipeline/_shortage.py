"""What is short when no candidate network fits: the purchase, the overloads and the reasons in words."""

from __future__ import annotations

import time

from planner.errors import StockShort
from planner.mapping import Counts, Infeasible, Problem, diagnose
from planner.units import milliamps


class Shortage(StockShort):
    """The stock or the supplies cannot carry the design.

    ``message``: what is short, in words; ``purchase``: tube type -> envelopes
    to buy (the fewest that make the design fit); ``overloads``: winding id,
    "plate" or "bias" -> how far over, in amperes; ``unbuildable``: stages no
    stocked type has a template for (then nothing can be bought to help).
    """

    def __init__(self, message: str, purchase: dict | None = None, overloads: dict | None = None,
                 unbuildable: tuple[str, ...] = ()):
        super().__init__(message)
        self.message = message
        self.purchase = dict(purchase or {})
        self.overloads = dict(overloads or {})
        self.unbuildable = tuple(unbuildable)


def _section_word(tube) -> str:
    if not tube.amplifying_sections:
        return "diode"
    kinds = sorted({s.kind for s in tube.amplifying_sections})
    return "/".join(kinds)


def diagnose_shortage(candidates, family, stock, options, deadline) -> Shortage:
    """Diagnose every buildable network; the smallest purchase (then least overload) wins."""
    best, heaterless = None, ""
    for cand in candidates:
        if cand.problem is None:
            continue
        try:
            counts = diagnose(cand.problem, solver=options.solver, gap=options.gap,
                              time_limit_s=max(1.0, deadline - time.monotonic()))
        except Infeasible:  # no purchase helps: some stages only types with no usable heater winding can build
            heaterless = heaterless or _heater_reasons(cand.problem, stock)
            continue
        key = (sum(counts.purchase), round(_overload(stock, counts.overloads), 9), dict(counts.terms)["weighted"])
        if best is None or key < best[0]:
            best = (key, cand, counts)
    if best is None:
        reasons = tuple(dict.fromkeys(c.reason for c in candidates if c.reason))
        ratings = _rating_reasons(family, stock)
        if not family.drivers:  # no stocked type has any template: the ratings are the whole story
            reasons = (ratings,) if ratings else reasons
        elif ratings:
            reasons += (f"(unusable here: {ratings})",)
        if heaterless:
            reasons += (heaterless,)
        return Shortage(f"no stocked tube type can build the design: {'; '.join(reasons)}", unbuildable=reasons)
    _, cand, counts = best
    problem = cand.problem
    purchase = {k.tube: n for k, n in zip(problem.kinds, counts.purchase) if n}
    overloads = {w: v for w, v in counts.overloads if v > 1e-9}
    needs = []
    sections_used = _sections_used(problem, counts)
    for kind, bought in zip(problem.kinds, counts.purchase):
        if not bought:
            continue
        tube = stock.catalogue.get(kind.tube)
        word = _section_word(tube)
        per = kind.diode_sections or len(kind.sections)
        short = max(1, sections_used[kind.tube] - max(kind.usable, 0) * per)
        alts = [f"{bought} x {kind.tube}"]
        for other in problem.kinds:
            if other.tube == kind.tube or other.tube in purchase or bool(other.diode_sections) != bool(
                    kind.diode_sections):
                continue
            held = tuple((t, n) for t, n in sorted(purchase.items()) if t != kind.tube)
            try:
                trial = diagnose(problem, solver=options.solver, gap=options.gap,
                                 time_limit_s=max(1.0, deadline - time.monotonic()),
                                 allow_only=(other.tube,) + tuple(t for t, _ in held), fixed_purchase=held)
            except Infeasible:
                continue
            if _overload(stock, trial.overloads) <= _overload(stock, overloads.items()) + 1e-6:
                n = dict(zip((k.tube for k in problem.kinds), trial.purchase))[other.tube]
                alts.append(f"{n} x {other.tube}")
        plural = "s" if short != 1 else ""
        why = _why_not_free(cand, counts, kind, purchase, sections_used, family)
        needs.append(f"{short} more {word} section{plural}: " + " or ".join(alts) + (f" ({why})" if why else ""))
    # Every purchase listed is needed together; the alternatives after "or" replace one item.
    words = ["needs " + "; and ".join(needs)] if needs else []
    held = _reserve_note(stock, problem, purchase)
    if held:
        words.append(held)
    for what, amount in sorted(overloads.items()):
        if what == "plate":
            words.append(f"plate supply over by {milliamps(amount):.1f} mA")
        elif what == "bias":
            words.append(f"bias supply over by {milliamps(amount):.1f} mA")
        else:
            words.append(f"winding {what} over by {amount:.2f} A")
    message = "; ".join(words) or "the stock cannot carry the design"
    return Shortage(message, purchase, overloads)


def _rating_reasons(family, stock) -> str:
    """Why the stocked types without any stage template have none, by the limit they miss (ratings first).

    The plate rating is the usual one: "the plate supply (1050 V worst case)
    exceeds the plate rating of 12AU7 (300 V) by 750 V, ...", with the supply
    that would fit the best-rated of them.
    """
    with_template = {tube for tube, _ in family.drivers}
    missing = {}
    for (tube, what), shortfall in sorted(family.rejected.items()):
        if tube not in with_template and what in ("single", "dual", "diode"):
            missing.setdefault(tube, shortfall)
    over = {tube: f for tube, f in missing.items() if getattr(f, "limit", "") == "max plate voltage"}
    parts = []
    if over:
        ratings = {tube: stock.catalogue.get(tube).max_plate_volts for tube in over}
        worst = family.rails.plate_volts * (1 + family.rules.supply_tolerance)
        listed = ", ".join(f"{tube} ({ratings[tube]:g} V) by {over[tube].amount:.0f} V"
                           for tube in sorted(over, key=lambda t: (-ratings[t], t)))
        fits = max(ratings.values()) / (1 + family.rules.supply_tolerance)
        parts.append(f"the plate supply ({worst:.0f} V worst case) exceeds the plate rating of {listed}; a plate "
                     f"supply of at most {fits:.0f} V would suit the {max(ratings, key=lambda t: (ratings[t], t))}")
    parts += [f"{tube}: {getattr(f, 'message', f)}" for tube, f in sorted(missing.items()) if tube not in over]
    return "; ".join(parts)


def _heater_reasons(problem: Problem, stock) -> str:
    """The stocked types whose heaters fit no winding, in words (then buying more of them cannot help)."""
    windings = ", ".join(f"{w.id} {w.volts:g} V" for w in stock.windings)
    unpowered = []
    for kind in problem.kinds:
        if not kind.heaters and kind.sections:
            tube = stock.catalogue.get(kind.tube)
            volts = [tube.heater_volts] + ([tube.heater_series[0]] if tube.heater_series else [])
            unpowered.append(f"{kind.tube} ({' or '.join(f'{v:g} V' for v in volts)})")
    if not unpowered:
        return "no purchase of stocked types makes the design fit"
    return (f"the heaters of {', '.join(unpowered)} fit no heater winding ({windings}), and some stages only "
            "those types can build: add a winding of their heater voltage")


def _why_not_free(cand, counts, kind, purchase, sections_used, family) -> str:
    """Why the stock's free sections of other types cannot take the stages that need ``kind`` bought.

    A free type whose heater fits no winding cannot be powered. Otherwise the
    stages the diagnosis put on ``kind`` with no way on a free type either
    drive more loads than that type's templates allow, or need a template (two
    control grids, a diode gate) the type has none of.
    """
    problem = cand.problem
    free = [k for k in problem.kinds if k.tube not in purchase and not k.diode_sections and k.sections
            and sections_used[k.tube] < max(k.usable, 0) * len(k.sections)]
    reasons = [f"the {k.tube}'s heater fits no heater winding" for k in free if not k.heaters]
    spare = [k.tube for k in free if k.heaters]
    loads = cand.network.load_counts()
    outputs = {stage.id: stage.output for stage in cand.network.stages}
    stuck, templates = [], set()
    for cls, row in zip(problem.classes, counts.ways):
        on_kind = sum(n for way, n in zip(cls.ways, row) if way.tube == kind.tube)
        if spare and on_kind and not any(way.tube in spare for way in cls.ways):
            stuck += [loads[outputs[sid]] for sid in cls.stages if sid in outputs]
            templates |= {way.template for way in cls.ways if way.tube == kind.tube}
    if stuck:
        fewest, most = min(stuck), max(stuck)
        span = f"{fewest}" if fewest == most else f"{fewest} to {most}"
        drive = "stage drives" if len(stuck) == 1 else "stages drive"
        reasons.append(f"{len(stuck)} of these {drive} {span} loads")
        for tube in spare:
            limits = [family.drivers[(tube, t)].fanout_limit for t in sorted(templates)
                      if (tube, t) in family.drivers]
            if limits:
                reasons.append(f"a {tube} stage drives at most {max(limits)}")
            else:
                reasons.append(f"{tube} has no {'/'.join(sorted(templates))} stage template")
    if not reasons:
        return ""
    return f"the free {', '.join(k.tube for k in free)} sections will not do: {'; '.join(reasons)}"


def _reserve_note(stock, problem, purchase) -> str:
    """The tubes held in reserve that would cover part of the purchase if released, in words."""
    kinds = {k.tube for k in problem.kinds}
    held = [(t.tube, t.reserve, t.count) for t in stock.tubes if t.reserve and t.tube in kinds]
    if not held or not purchase:
        return ""
    listed = ", ".join(f"{tube} {reserve} of {count}" for tube, reserve, count in held)
    total = sum(reserve for _, reserve, _ in held)
    return (f"{total} {'tube is' if total == 1 else 'tubes are'} held in reserve ({listed}) and not used; "
            "lowering a reserve in the stock file makes them available")


def _limit(stock, what: str) -> float:
    if what == "plate":
        return stock.plate.max_amps
    if what == "bias":
        return stock.bias.max_amps
    return next(w.max_amps for w in stock.windings if w.id == what)


def _overload(stock, overloads) -> float:
    """How far a solution is over its limits: each (what, amperes) overload as a share of its limit, summed."""
    return sum(v / _limit(stock, w) for w, v in overloads)


def _sections_used(problem: Problem, counts: Counts) -> dict[str, int]:
    used = {k.tube: 0 for k in problem.kinds}
    diodes = 0
    for cls, row in zip(problem.classes, counts.ways):
        for way, n in zip(cls.ways, row):
            used[way.tube] += n * sum(s for _k, s in way.demand)
            diodes += n * way.diodes
    for cls, row in zip(problem.registers, counts.register_ways):
        for way, n in zip(cls.ways, row):
            used[way.tube] += 2 * n
    for kind in problem.kinds:
        if kind.diode_sections:
            used[kind.tube] = max(used[kind.tube], diodes)
    return used
