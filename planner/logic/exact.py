"""Exact minimum cover of the on-set by prime implicants."""

from __future__ import annotations

import heapq
import math
import os
import re
import tempfile
import time
import warnings
from dataclasses import dataclass

from .cover import Cube
from .table import Space, TruthTable, iter_bits


#: Seconds CBC may spend on one cyclic core before the minimum is given up (see :func:`minimum_cover`).
DEFAULT_COVER_BUDGET_S = 1.0
#: The least time CBC is given for a cyclic core when the budget is (nearly) spent before it starts.
MIN_SOLVER_S = 0.1
_LOWER_BOUND = re.compile(r"^Lower bound:\s*(-?[0-9.eE+-]+)", re.MULTILINE)


@dataclass(frozen=True)
class CoverSolution:
    """Chosen primes; whether the choice is proven minimum; a proven lower bound on its literals."""

    cubes: tuple[Cube, ...]
    proven: bool
    core_rows: int
    core_columns: int
    literal_bound: int

    @property
    def literals(self) -> int:
        return sum(c.literals for c in self.cubes)

    @property
    def gap(self) -> float:
        """(literals - bound) / literals: 0 when proven minimum."""
        return 0.0 if self.proven else max(0, self.literals - self.literal_bound) / max(self.literals, 1)


def _reduce(rows: int, cols: int, col_rows: list[int], row_cols: dict[int, int],
            lits: list[int]) -> tuple[int, int, list[int]]:
    """Essential columns, row dominance and column dominance, repeated to a fixed point.

    Rows are on-set assignments (bit positions of ``rows``), columns are primes
    (bit positions of ``cols``).  A row covered by one column makes that column
    essential.  A row whose columns include all columns of another row is
    dropped (covering the other covers it).  A column whose rows lie inside
    another column's, with no fewer literals, is dropped.  What is left is the
    cyclic core (the prime implicant chart reductions of McCluskey 1956).
    Cost: per pass, one big-integer AND per (row, column) incidence.
    """
    chosen: list[int] = []
    order = sorted(range(len(col_rows)), key=lambda c: lits[c])
    no_more: list[int] = [0] * len(col_rows)  # columns with at most as many literals
    acc = 0
    i = 0
    while i < len(order):
        j = i
        while j < len(order) and lits[order[j]] == lits[order[i]]:
            acc |= 1 << order[j]
            j += 1
        for k in range(i, j):
            no_more[order[k]] = acc
        i = j
    changed = True
    while changed and rows:
        changed = False
        for r in iter_bits(rows):
            if not rows >> r & 1:
                continue
            cs = row_cols[r] & cols
            if cs & (cs - 1) == 0:
                c = cs.bit_length() - 1
                chosen.append(c)
                cols &= ~(1 << c)
                rows &= ~col_rows[c]
                changed = True
        for r in iter_bits(rows):
            if not rows >> r & 1:
                continue
            sup = rows & ~(1 << r)
            for c in iter_bits(row_cols[r] & cols):
                sup &= col_rows[c]
                if not sup:
                    break
            if sup:
                rows &= ~sup
                changed = True
        for c in iter_bits(cols):
            rs = col_rows[c] & rows
            dom = cols & no_more[c] & ~(1 << c)
            for r in iter_bits(rs):
                dom &= row_cols[r]
                if not dom:
                    break
            if dom or not rs:
                cols &= ~(1 << c)
                changed = True
    return rows, cols, chosen


def _solve_ilp(rows: int, cols: int, col_rows: list[int], row_cols: dict[int, int],
               lits: list[int], budget_s: float | None) -> tuple[list[int], bool, int]:
    """Minimum-cost set cover of ``rows`` by ``cols`` as a 0-1 integer program (CBC via pulp).

    Objective: literals * (T + 1) + terms, T the number of candidate columns,
    so fewer literals always wins and terms break ties.  Returns the chosen
    columns, whether CBC proved the optimum, and a proven lower bound on their
    literals.  ``budget_s`` counts from this call (building the model included): CBC
    gets what is left of it (at least :data:`MIN_SOLVER_S`).  Past it CBC stops; its incumbent then depends on
    how far it got, so it is dropped and the cover is made without the clock
    (:func:`_greedy`), and the bound is the LP relaxation's (solved apart, also
    without the clock): a budget-stopped block gives the same cover on any machine.
    """
    import pulp  # loaded only when a cyclic core needs it

    entered = time.perf_counter()
    columns = list(iter_bits(cols))
    weight = len(columns) + 1
    prob = pulp.LpProblem("cover", pulp.LpMinimize)
    x = {c: prob.add_variable(f"p{c}", 0, 1, cat=pulp.LpBinary) for c in columns}
    prob += pulp.lpSum((lits[c] * weight + 1) * x[c] for c in columns)
    for r in iter_bits(rows):
        prob += pulp.lpSum(x[c] for c in iter_bits(row_cols[r] & cols)) >= 1
    start = time.perf_counter()
    limit = None if budget_s is None else max(MIN_SOLVER_S, budget_s - (start - entered))
    _cbc(pulp, prob, limit, relax=False)
    picked = [c for c in columns if (x[c].value() or 0) > 0.5]
    covered = 0
    for c in picked:
        covered |= col_rows[c]
    if prob.sol_status == pulp.LpSolutionOptimal and not rows & ~covered:
        return picked, True, sum(lits[c] for c in picked)
    if limit is None or time.perf_counter() - start < limit * 0.9:
        raise AssertionError("internal error: CBC gave no optimal cover of the core before its budget")
    bound = _cbc(pulp, prob, None, relax=True)
    literal_bound = math.floor(bound / weight + 1e-9) if bound is not None else 0
    return _greedy(rows, cols, col_rows, lits), False, literal_bound


def _cbc(pulp, prob, budget_s: float | None, relax: bool) -> float | None:
    """Solve ``prob`` with pulp's bundled CBC (serial search, fixed seeds); its objective when
    ``relax`` (the LP relaxation), else CBC's lower bound from its log (None when absent)."""
    handle, log = tempfile.mkstemp(prefix="tubeplan-cover-", suffix=".log")
    os.close(handle)
    try:
        with warnings.catch_warnings():
            # pulp 3.3 flags its bundled CBC for removal in 4.0; the bundled binary is what we use.
            warnings.filterwarnings("ignore", category=DeprecationWarning, message=".*PULP_CBC_CMD")
            # No ``threads`` option: CBC's ``-threads 1`` starts its parallel search with one worker that
            # sometimes waits on the main thread for 10 s (benchmarks/solver_stalls.py); serial CBC never does.
            solver = pulp.PULP_CBC_CMD(msg=False, mip=not relax, timeLimit=budget_s, logPath=log,
                                       options=["randomSeed 1", "randomCbcSeed 1"])
        prob.solve(solver)
        if relax:
            return pulp.value(prob.objective) if prob.sol_status == pulp.LpSolutionOptimal else None
        with open(log, encoding="utf-8", errors="replace") as text:
            found = _LOWER_BOUND.search(text.read())
        return float(found.group(1)) if found else None
    finally:
        os.unlink(log)


def _greedy(rows: int, cols: int, col_rows: list[int], lits: list[int]) -> list[int]:
    """The cover when CBC's budget runs out: most new rows per literal, then redundant columns
    dropped (most literals first).  Deterministic: ties go to the lowest column.

    Lazy evaluation (a column's ratio only falls as rows get covered, so a popped column
    whose fresh ratio still heads the heap is the true best): about one bit count per
    column per pick instead of one per column per step.
    """
    heap = [(-(col_rows[c] & rows).bit_count() / max(lits[c], 1), c) for c in iter_bits(cols)]
    heapq.heapify(heap)
    picked = []
    left = rows
    while left:
        _, c = heapq.heappop(heap)
        fresh = (-(col_rows[c] & left).bit_count() / max(lits[c], 1), c)
        if heap and fresh > heap[0]:
            heapq.heappush(heap, fresh)
            continue
        picked.append(c)
        left &= ~col_rows[c]
    for c in sorted(picked, key=lambda c: (-lits[c], c)):
        others = 0
        for d in picked:
            if d != c:
                others |= col_rows[d]
        if not rows & ~others:
            picked.remove(c)
    return picked


def minimum_cover(table: TruthTable, primes: tuple[Cube, ...], *,
                  budget_s: float | None = DEFAULT_COVER_BUDGET_S) -> CoverSolution:
    """A cover of ``table.on`` by ``primes`` with fewest literals, then fewest terms.

    Reductions (:func:`_reduce`) first, then the cyclic core as an integer
    program solved by CBC (:func:`_solve_ilp`) within ``budget_s`` seconds from
    this call on, the reductions included (None: no limit).  ``proven`` is True when the core was empty or CBC proved
    optimality; otherwise ``literal_bound`` and ``gap`` say how far from the
    minimum the cover may be.  ``primes`` must include every prime implicant
    that touches the on-set, else the result is only minimum among those given.

    >>> from .primes import prime_implicants
    >>> from .table import table_from_minterms
    >>> t = table_from_minterms(("a", "b", "c"), [0, 1, 2, 5, 6, 7])  # cyclic: no essentials
    >>> s = minimum_cover(t, prime_implicants(t))
    >>> len(s.cubes), s.proven, s.core_rows, s.core_columns, s.gap
    (3, True, 6, 6, 0.0)
    """
    entered = time.perf_counter()
    space = Space(table.n)
    col_rows = [space.cube_bits(p.mask, p.value) & table.on for p in primes]
    lits = [p.literals for p in primes]
    row_cols: dict[int, int] = {}
    cols = 0
    for c, rs in enumerate(col_rows):
        if not rs:
            continue
        cols |= 1 << c
        for r in iter_bits(rs):
            row_cols[r] = row_cols.get(r, 0) | 1 << c
    rows = table.on
    uncovered = rows & ~_union(col_rows)
    if uncovered:
        raise ValueError(f"the primes given leave assignments {list(iter_bits(uncovered))[:8]} uncovered")
    rows, cols, chosen = _reduce(rows, cols, col_rows, row_cols, lits)
    core_rows, core_cols = rows.bit_count(), cols.bit_count()
    proven = True
    bound = sum(lits[c] for c in chosen)
    if rows:
        left = None if budget_s is None else budget_s - (time.perf_counter() - entered)
        picked, proven, core_bound = _solve_ilp(rows, cols, col_rows, row_cols, lits, left)
        chosen.extend(picked)
        bound += core_bound
    return CoverSolution(tuple(primes[c] for c in sorted(chosen)), proven, core_rows, core_cols, bound)


def _union(bitsets: list[int]) -> int:
    """Union of bitsets."""
    out = 0
    for b in bitsets:
        out |= b
    return out
