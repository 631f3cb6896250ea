"""The aggregated integer program: how many stages of each class go on each tube type.

Stages that need the same thing (the same branch means, the same fan-out
requirement, so the same ways to build them) are interchangeable, so the model
counts them per way instead of giving every branch its own binary: the model's
size grows with the number of stage classes and tube types, not with the design.

Variables (all integers):

* ``x[c, w]``: stages of class ``c`` built the ``w``-th way (a tube type and
  template); ``sum_w x[c, w] = count(c)``;
* ``n[t]``: envelopes of type ``t``, at most ``count - reserve`` (plus ``buy[t]``
  when diagnosing a shortage);
* ``h[t, k]``: envelopes of type ``t`` heated the ``k``-th way (a winding whose
  volts equal the heater's, wired parallel or series); ``sum_k h[t, k] = n[t]``.

* ``y[r, w]``: registers of class ``r`` built the ``w``-th way (a bistable on a
  dual-triode type, taking a whole envelope); ``sum_w y[r, w] = count(r)``.

Constraints: section packing by Hall's condition (below) in the envelopes the
bistables leave, winding amps, plate and bias supply milliamperes (registers'
included), and diode sections for diode-AND branches when the stock allows
vacuum diodes only.

Packing.  Sections of a type differ in what they can do (a pentode section of a
triode-pentode cannot gate on g3).  Demands ``d[k]`` of each kind ("single",
"dual", "follower") fit into ``n`` identical envelopes iff for every set ``S`` of
kinds ``sum_{k in S} d[k] <= n * |sections serving some kind in S|`` (Hall's
theorem for the transportation problem; P. Hall 1935, via max-flow min-cut).  A
type whose sections share one cathode cannot put a cathode follower (cathode at
its output) beside grounded-cathode sections: each follower then takes a whole
envelope, and the other kinds pack into the ``n - followers`` envelopes left.

Heater-cathode voltage.  A winding may be elevated (a DC reference); a heater
way then hosts grounded cathodes only if the elevation is within the type's
heater-cathode rating, and followers only if the follower's whole cathode range
is (``HeaterWay.hosts``).  Where a type's heater ways differ in that, its
envelopes are split into groups of equal ``hosts``, each demand kind and the
bistables are split over the groups that may host them (integer variables), and
each group gets its own Hall conditions: the follower's envelope can only be on
a winding that suits it, as a constraint of the program, not a check afterwards.

Objective (``spec.Objective``): ``envelopes * sum n + heater_watts * sum watts(h)
+ scarce * sum_{scarce t} n[t]``, or lexicographically (scarce envelopes, then
envelopes, then heater watts) by successive solves, each earlier optimum fixed
as a constraint.  Ties are broken by a tiny cost on each envelope that grows with
the type's place in name order (at most 1e-6 of one envelope in all), so equal
plans are told apart the same way every time; reported objectives leave it out.
"""

from __future__ import annotations

import itertools
import time
from dataclasses import dataclass

import pulp

from planner.errors import PlanningFailure

from .solver import Outcome, highs_available, solve

KINDS = ("dual", "single", "follower")
TIE_BREAK = 1e-6
#: The plate and bias rows are written in mA (amperes times this): the solver's absolute tolerances
#: (about 1e-7 of a row's unit) stay far below a microampere, and its scaling sees rows of the usual size.
SUPPLY_ROW_SCALE = 1e3


def _row_scale(what: str) -> float:
    """Units of an overload variable's row per ampere: mA for the supplies, A for a winding."""
    return SUPPLY_ROW_SCALE if what in ("plate", "bias") else 1.0


HOSTS = frozenset({"grounded", "follower"})
"""What an envelope's cathodes may be: at 0 V (inverting sections, bistables) or a follower's output."""


@dataclass(frozen=True)
class HeaterWay:
    """One way to heat an envelope: on ``winding`` wired ``connection`` at ``amps``.

    ``hosts``: which sections an envelope heated this way may hold within
    the type's heater-cathode rating, given the winding's elevation
    (``elevated_volts``): "grounded" (cathode at 0 V) and/or "follower".
    """

    winding: str
    connection: str
    volts: float
    amps: float
    elevated_volts: float = 0.0
    hosts: frozenset = HOSTS

    @property
    def watts(self) -> float:
        return self.volts * self.amps


@dataclass(frozen=True)
class TubeKind:
    """A stocked tube type as the model sees it.

    ``sections``: for each amplifying section, the kinds of demand it can serve;
    ``diode_sections``: diodes per envelope usable in a diode AND (0 unless the
    type holds only diodes with their own cathodes).
    """

    tube: str
    usable: int
    scarce: bool
    sections: tuple[frozenset, ...]
    diode_sections: int
    shared_cathode: bool
    heaters: tuple[HeaterWay, ...]


@dataclass(frozen=True)
class Way:
    """One way to build a stage: sections it takes on ``tube`` and the currents it draws.

    ``demand``: (kind, sections) pairs; ``plate_amps`` / ``plate_amps_typical`` from
    B+, ``bias_amps`` from the bias rail, worst case from the electrical templates.
    ``template``: the template's name ("single", "dual", "diode", "follower");
    ``diodes``: AND-gate diodes this way needs.
    """

    tube: str
    template: str
    demand: tuple[tuple[str, int], ...]
    plate_amps: float
    plate_amps_typical: float
    bias_amps: float
    fanout_limit: int
    diodes: int = 0


@dataclass(frozen=True)
class StageClass:
    """Interchangeable stages: ``stages`` (ids, in stage order) each built one of ``ways``."""

    key: tuple
    stages: tuple[str, ...]
    ways: tuple[Way, ...]

    @property
    def count(self) -> int:
        return len(self.stages)


@dataclass(frozen=True)
class RegisterWay:
    """One way to build a register: a bistable taking a whole envelope of ``tube`` (both its sections)."""

    tube: str
    plate_amps: float
    plate_amps_typical: float
    bias_amps: float
    fanout_limit: int


@dataclass(frozen=True)
class RegisterClass:
    """Interchangeable registers: ``registers`` (names, in design order) each built one of ``ways``."""

    registers: tuple[str, ...]
    ways: tuple[RegisterWay, ...]

    @property
    def count(self) -> int:
        return len(self.registers)


@dataclass(frozen=True)
class Supplies:
    """Limits of the rails and windings; ``fixed_*``: currents no choice changes."""

    plate_max_amps: float
    bias_max_amps: float
    windings: tuple[tuple[str, float, float], ...]  # id, volts, max amps
    fixed_plate_amps: float = 0.0
    fixed_plate_amps_typical: float = 0.0
    fixed_bias_amps: float = 0.0


@dataclass(frozen=True)
class Weights:
    """Objective weights (``spec.Objective``) and mode."""

    envelopes: float = 1.0
    heater_watts: float = 0.05
    scarce: float = 5.0
    mode: str = "weighted"


@dataclass(frozen=True)
class Problem:
    """The whole aggregated mapping problem; ``vacuum_diodes``: diode ANDs need tube diodes."""

    kinds: tuple[TubeKind, ...]
    classes: tuple[StageClass, ...]
    supplies: Supplies
    weights: Weights
    vacuum_diodes: bool = False
    registers: tuple[RegisterClass, ...] = ()


@dataclass(frozen=True)
class Level:
    """One solve of the objective sequence: criterion, its value, LP bound, solver gap."""

    criterion: str
    value: float
    lp_bound: float
    gap: float
    status: str


@dataclass(frozen=True)
class Counts:
    """A solution of the aggregated model.

    ``ways[c][w]``: stages of class ``c`` built way ``w``; ``envelopes[t]``;
    ``heaters[t]``: count per heater way of kind ``t``; ``purchase[t]``: extra
    envelopes (shortage diagnosis only); ``overloads``: (what, amount) with
    amount in A for windings ("H1"), "plate" and "bias".
    ``hosted[t]``: for a type whose heater ways differ in what they may
    host, per group of ways (``hosts``): sections per demand kind and
    bistables on envelopes of that group (empty otherwise).
    """

    ways: tuple[tuple[int, ...], ...]
    envelopes: tuple[int, ...]
    heaters: tuple[tuple[int, ...], ...]
    purchase: tuple[int, ...]
    overloads: tuple[tuple[str, float], ...]
    levels: tuple[Level, ...]
    status: str
    seconds: float
    terms: tuple[tuple[str, float], ...]
    register_ways: tuple[tuple[int, ...], ...] = ()
    hosted: tuple[tuple[tuple[frozenset, tuple[tuple[str, int], ...], int], ...], ...] = ()


class Infeasible(PlanningFailure):
    """The model has no solution within the stock and supplies."""


def _integer(lp: pulp.LpProblem, name: str, low, high, cat: str = "Integer") -> pulp.LpVariable:
    """A variable of ``lp`` (pulp 3 attaches variables to the model; older pulp builds them free)."""
    if hasattr(lp, "add_variable"):
        return lp.add_variable(name, low, high, cat=cat)
    return pulp.LpVariable(name, low, high, cat=cat)


def _linear(terms) -> pulp.LpAffineExpression:
    """The sum of ``coefficient * variable`` over ``terms`` (pairs), built as one expression.

    The same expression ``pulp.lpSum`` of the products gives (terms in first-appearance
    order, a zero coefficient dropped as pulp's product drops it), without the intermediate
    expression pulp's operators build for every product: the model's main cost when a plan
    bounds a few dozen candidates.
    """
    coefficients: dict = {}
    for coefficient, variable in terms:
        if coefficient != 0:
            coefficients[variable] = coefficients[variable] + coefficient if variable in coefficients else coefficient
    return pulp.LpAffineExpression(coefficients)


def _subsets(kinds: list[str]):
    for r in range(1, len(kinds) + 1):
        yield from itertools.combinations(kinds, r)


class _Model:
    """The pulp model of a :class:`Problem`; ``slack``: allow purchases and overloads."""

    def __init__(self, problem: Problem, *, slack: bool) -> None:
        self.problem = problem
        self.slack = slack
        self.fixes = 0
        self.lp = pulp.LpProblem("tubeplan_mapping", pulp.LpMinimize)
        kinds, classes, supplies = problem.kinds, problem.classes, problem.supplies
        self.x = [[_integer(self.lp, f"x_{c}_{w}", 0, cls.count) for w in range(len(cls.ways))]
                  for c, cls in enumerate(classes)]
        index = {kind.tube: t for t, kind in enumerate(kinds)}
        self.buy = [_integer(self.lp, f"buy_{t}", 0, None) if slack else 0
                    for t in range(len(kinds))]
        self.n = [_integer(self.lp, f"n_{t}", 0, None if slack else max(kind.usable, 0))
                  for t, kind in enumerate(kinds)]
        self.h = [[_integer(self.lp, f"h_{t}_{k}", 0, None) for k in range(len(kind.heaters))]
                  for t, kind in enumerate(kinds)]
        for c, cls in enumerate(classes):
            self.lp += pulp.lpSum(self.x[c]) == cls.count, f"class_{c}"
        # Registers: y[r, w] bistables of class r on way w, each a whole envelope of its type.
        self.y = [[_integer(self.lp, f"y_{r}_{w}", 0, reg.count) for w in range(len(reg.ways))]
                  for r, reg in enumerate(problem.registers)]
        bistables = [[] for _ in kinds]
        for r, reg in enumerate(problem.registers):
            self.lp += pulp.lpSum(self.y[r]) == reg.count, f"registers_{r}"
            for w, way in enumerate(reg.ways):
                bistables[index[way.tube]].append(self.y[r][w])
        demand = [{k: [] for k in KINDS} for _ in kinds]
        plate, bias, diodes = [], [], []
        # (coefficient, variable) pairs, summed by _linear
        for c, cls in enumerate(classes):
            for w, way in enumerate(cls.ways):
                diodes.append((way.diodes, self.x[c][w]))
                for kind, sections in way.demand:
                    demand[index[way.tube]][kind].append((sections, self.x[c][w]))
                plate.append((way.plate_amps * SUPPLY_ROW_SCALE, self.x[c][w]))
                bias.append((way.bias_amps * SUPPLY_ROW_SCALE, self.x[c][w]))
        for r, reg in enumerate(problem.registers):
            for w, way in enumerate(reg.ways):
                plate.append((way.plate_amps * SUPPLY_ROW_SCALE, self.y[r][w]))
                bias.append((way.bias_amps * SUPPLY_ROW_SCALE, self.y[r][w]))
        self.hosted = []
        for t, kind in enumerate(kinds):
            if slack:
                self.lp += self.n[t] <= max(kind.usable, 0) + self.buy[t], f"stock_{t}"
            self.lp += pulp.lpSum(self.h[t]) == self.n[t], f"heated_{t}"
            self.hosted.append(self._hosting(t, kind, demand[t], bistables[t]))
        if problem.vacuum_diodes and any(way.diodes for cls in classes for way in cls.ways):
            self.lp += _linear((kind.diode_sections, self.n[t]) for t, kind in enumerate(kinds)
                               if kind.diode_sections) >= _linear(diodes), "diodes"
        self.over = {}
        for wi, (ident, _volts, max_amps) in enumerate(supplies.windings):
            amps = _linear((way.amps, self.h[t][k]) for t, kind in enumerate(kinds)
                           for k, way in enumerate(kind.heaters) if way.winding == ident)
            self.lp += amps <= max_amps + self._over(ident, f"over_w{wi}"), f"winding_{wi}"
        self.lp += (_linear(plate) + supplies.fixed_plate_amps * SUPPLY_ROW_SCALE
                    <= supplies.plate_max_amps * SUPPLY_ROW_SCALE + self._over("plate", "over_plate")), "plate"
        self.lp += (_linear(bias) + supplies.fixed_bias_amps * SUPPLY_ROW_SCALE
                    <= supplies.bias_max_amps * SUPPLY_ROW_SCALE + self._over("bias", "over_bias")), "bias"
        self.envelopes = pulp.lpSum(self.n)
        self.scarce = pulp.lpSum(self.n[t] for t, kind in enumerate(kinds) if kind.scarce)
        self.heater_watts = _linear((way.watts, self.h[t][k]) for t, kind in enumerate(kinds)
                                    for k, way in enumerate(kind.heaters))
        ranks = {t: r for r, t in enumerate(sorted(range(len(kinds)), key=lambda t: kinds[t].tube))}
        scale = TIE_BREAK / max(1, len(kinds)) / max(1, sum(cls.count for cls in classes) + len(kinds))
        # Among equal plans, fewer AND diodes: a one-input branch needs none, and solid-state
        # diodes cost nothing in the objective, so without this a tie could add them anyway.  A whole
        # TIE_BREAK per diode: a smaller share falls below the solver's tolerances and is ignored.
        self.tie = (_linear((scale * (ranks[t] + 1), self.n[t]) for t in range(len(kinds)))
                    + TIE_BREAK * _linear(diodes))
        self.purchase = pulp.lpSum(self.buy) if slack else 0
        self.overload = pulp.lpSum(var / max(limit, 1e-9) for var, limit in self._limits())

    def _over(self, what: str, name: str):
        if not self.slack:
            return 0
        var = _integer(self.lp, name, 0, None, cat="Continuous")
        self.over[what] = var
        return var

    def _limits(self):
        supplies = self.problem.supplies
        limits = {ident: max_amps for ident, _v, max_amps in supplies.windings}
        limits.update(plate=supplies.plate_max_amps, bias=supplies.bias_max_amps)
        return [(var, limits[what] * _row_scale(what)) for what, var in self.over.items()]

    def _hosting(self, t: int, kind: TubeKind, demand: dict, bistables: list) -> list:
        """Packing of type ``t``, split over groups of heater ways that may host different sections.

        A winding's elevation may keep a follower's cathode within the
        heater-cathode rating but not a grounded cathode, or the other way
        round. Envelopes heated by ways of one group (equal ``hosts``) are
        interchangeable, so each group gets its share of every demand kind
        and of the bistables (integer split variables) and Hall's conditions
        of its own. With one group that may host everything, nothing is split.
        Returns [(hosts, {kind: split}, bistable split)] per group, or [].
        """
        groups: dict[frozenset, list[int]] = {}
        for k, way in enumerate(kind.heaters):
            groups.setdefault(way.hosts, []).append(k)
        if list(groups) in ([], [HOSTS]):
            self._packing(t, kind, demand, pulp.lpSum(bistables) if bistables else None, self.n[t], f"{t}")
            return []
        out = []
        shares = {k: [] for k in KINDS}
        held = []
        for g, (hosts, members) in enumerate(sorted(groups.items(), key=lambda kv: sorted(kv[0]))):
            n = pulp.lpSum(self.h[t][k] for k in members)
            split = {}
            for k in KINDS:
                if demand[k] and ("follower" if k == "follower" else "grounded") in hosts:
                    split[k] = _integer(self.lp, f"d_{t}_{g}_{k}", 0, None)
                    shares[k].append(split[k])
            b = _integer(self.lp, f"b_{t}_{g}", 0, None) if bistables and "grounded" in hosts else None
            if b is not None:
                held.append(b)
            self._packing(t, kind, {k: [(1, split[k])] if k in split else [] for k in KINDS}, b, n, f"{t}_{g}")
            out.append((hosts, split, b))
        for k in KINDS:
            if demand[k]:
                self.lp += pulp.lpSum(shares[k]) == _linear(demand[k]), f"share_{t}_{k}"
        if bistables:
            self.lp += pulp.lpSum(held) == pulp.lpSum(bistables), f"share_{t}_bistables"
        return out

    def _packing(self, t: int, kind: TubeKind, demand: dict, bistables, pool, tag: str) -> None:
        """Hall's conditions for the stage sections, in the envelopes of ``pool`` the bistables leave."""
        present = [k for k in KINDS if demand[k]]
        if bistables is not None:
            self.lp += bistables <= pool, f"bistables_{tag}"
        if not present:
            return
        n = pool if bistables is None else pool - bistables
        followers = _linear(demand["follower"])
        grounded = [k for k in present if k != "follower"]
        if kind.shared_cathode and "follower" in present:
            self.lp += followers <= n, f"followers_{tag}"
            groups = [(grounded, n - followers)] if grounded else []
        else:
            groups = [(present, n)]
        for members, envelopes in groups:
            for subset in _subsets(members):
                serving = sum(1 for caps in kind.sections if caps & set(subset))
                self.lp += (_linear(term for k in subset for term in demand[k])
                            <= serving * envelopes), f"pack_{tag}_{'_'.join(subset)}"

    def weighted(self):
        w = self.problem.weights
        return w.envelopes * self.envelopes + w.heater_watts * self.heater_watts + w.scarce * self.scarce

    def criterion(self, name: str):
        return {"weighted": self.weighted(), "scarce envelopes": self.scarce, "envelopes": self.envelopes,
                "heater watts": self.heater_watts, "purchase": self.purchase,
                "overload": self.overload}[name]

    def run(self, name: str, *, solver: str, deadline: float, gap: float, tie: bool) -> tuple[Outcome, float]:
        """Solve for criterion ``name`` (its LP relaxation too); return the outcome and the LP bound."""
        expr = self.criterion(name)
        self.lp.setObjective(expr + self.tie if tie else expr)
        remaining = max(1.0, deadline - time.monotonic())
        relaxed = solve(self.lp, solver=solver, time_limit_s=remaining, gap=gap, relax=True)
        if relaxed.status == "infeasible":
            return relaxed, float("nan")
        bound = relaxed.objective if relaxed.objective is not None else float("nan")
        remaining = max(1.0, deadline - time.monotonic())
        outcome = solve(self.lp, solver=solver, time_limit_s=remaining, gap=gap)
        return outcome, bound

    def fix(self, name: str, value: float) -> None:
        """Keep criterion ``name`` at its optimum ``value`` in later solves."""
        expr = self.criterion(name)
        integral = name in ("scarce envelopes", "envelopes", "purchase")
        limit = round(value) if integral else value + 1e-6 * max(1.0, abs(value))
        self.fixes += 1
        self.lp += expr <= limit, f"fixed_{self.fixes}"

    def counts(self, levels, status: str, seconds: float) -> Counts:
        val = lambda v: int(round(v.value() or 0)) if isinstance(v, pulp.LpVariable) else int(v)  # noqa: E731
        terms = (("envelopes", float(pulp.value(self.envelopes) or 0)),
                 ("heater watts", float(pulp.value(self.heater_watts) or 0)),
                 ("scarce envelopes", float(pulp.value(self.scarce) or 0)),
                 ("weighted", float(pulp.value(self.weighted()) or 0)))
        return Counts(tuple(tuple(val(v) for v in row) for row in self.x),
                      tuple(val(v) for v in self.n),
                      tuple(tuple(val(v) for v in row) for row in self.h),
                      tuple(val(v) for v in self.buy),
                      tuple((what, float(var.value() or 0) / _row_scale(what))
                            for what, var in sorted(self.over.items())),
                      tuple(levels), status, seconds, terms, tuple(tuple(val(v) for v in row) for row in self.y),
                      tuple(tuple((hosts, tuple((k, val(v)) for k, v in sorted(split.items())),
                                   0 if b is None else val(b)) for hosts, split, b in groups)
                            for groups in self.hosted))


def _criteria(weights: Weights) -> tuple[str, ...]:
    if weights.mode == "lexicographic":
        return ("scarce envelopes", "envelopes", "heater watts")
    return ("weighted",)


def _sequence(model: _Model, criteria, *, solver: str, deadline: float, gap: float) -> Counts:
    start = time.monotonic()
    levels, status = [], "optimal"
    for i, name in enumerate(criteria):
        outcome, bound = model.run(name, solver=solver, deadline=deadline, gap=gap, tie=i == len(criteria) - 1)
        if not outcome.solved:
            raise Infeasible(name)
        value = float(pulp.value(model.criterion(name)) or 0)
        solver_gap = outcome.gap if outcome.status == "feasible" else 0.0
        levels.append(Level(name, value, min(bound, value) if bound == bound else bound, solver_gap,
                            outcome.status))
        status = "feasible" if outcome.status == "feasible" else status
        if i < len(criteria) - 1:
            model.fix(name, value)
    return model.counts(levels, status, time.monotonic() - start)


def solve_problem(problem: Problem, *, solver: str = "cbc", time_limit_s: float = 60.0,
                  gap: float = 0.0) -> Counts:
    """The optimal counts of ``problem`` within stock and supplies; :class:`Infeasible` if none.

    Cost: one LP and one integer solve per criterion (three in lexicographic mode).
    """
    deadline = time.monotonic() + time_limit_s
    return _sequence(_Model(problem, slack=False), _criteria(problem.weights), solver=solver,
                     deadline=deadline, gap=gap)


def lower_bound(problem: Problem, *, time_limit_s: float = 60.0) -> float | None:
    """A lower bound on the first criterion of ``problem``'s objective; None when it has no solution.

    The first criterion is the weighted objective, or the scarce envelopes in lexicographic mode,
    without the tie-break: every plan of the problem costs at least this much.  It is the
    optimum of the model's LP relaxation, solved in this process by HiGHS through highspy
    (no solver process started; Huangfu and Hall, "Parallelizing the dual revised simplex
    method", Mathematical Programming Computation 2018), and None when that relaxation is
    infeasible, which makes the integer program infeasible too.  ``-inf`` when HiGHS gives no
    answer or highspy is not installed (no bound known).  The planner uses it to skip solving
    candidates that cannot beat the best plan found (:mod:`planner.pipeline`).  Cost: one LP
    solve, milliseconds.
    """
    if not highs_available():
        return float("-inf")
    model = _Model(problem, slack=False)
    model.lp.setObjective(model.criterion(_criteria(problem.weights)[0]))
    outcome = solve(model.lp, solver="highs", time_limit_s=time_limit_s, gap=0.0, relax=True)
    if outcome.status == "infeasible":
        return None
    return outcome.objective if outcome.objective is not None else float("-inf")


def diagnose(problem: Problem, *, solver: str = "cbc", time_limit_s: float = 60.0, gap: float = 0.0,
             forbid: tuple[str, ...] = (), allow_only: tuple[str, ...] | None = None,
             fixed_purchase: tuple[tuple[str, int], ...] = ()) -> Counts:
    """The smallest purchase (fewest envelopes bought), then the least overload, then the objective.

    Purchases and overloads are slack variables; the three criteria are solved
    in that order, each optimum fixed.  ``forbid``: types that may not be
    bought; ``allow_only``: only these may be bought; ``fixed_purchase``:
    purchases held at these counts (used to test alternatives).
    """
    deadline = time.monotonic() + time_limit_s
    model = _Model(problem, slack=True)
    for t, kind in enumerate(problem.kinds):
        held = dict(fixed_purchase)
        if kind.tube in held:
            model.lp += model.buy[t] == held[kind.tube], f"held_{t}"
        elif kind.tube in forbid or (allow_only is not None and kind.tube not in allow_only):
            model.lp += model.buy[t] == 0, f"forbid_{t}"
    return _sequence(model, ("purchase", "overload") + _criteria(problem.weights), solver=solver,
                     deadline=deadline, gap=gap)
