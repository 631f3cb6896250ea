"""Exact minimum cover of the on-set by prime implicants."""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import pulp

from .cover import Cube
from .table import Space, TruthTable, iter_bits


@dataclass(frozen=True)
class CoverSolution:
    """Chosen primes and whether the choice is proven minimum."""

    cubes: tuple[Cube, ...]
    proven: bool
    core_rows: int
    core_columns: int


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
               lits: list[int], time_limit_s: float | None) -> tuple[list[int], bool]:
    """Minimum-cost set cover of ``rows`` by ``cols`` as a 0-1 integer program (CBC via pulp).

    Objective: literals * (T + 1) + terms, T the number of candidate columns,
    so fewer literals always wins and terms break ties.  Returns the chosen
    columns and whether CBC proved the optimum (False on a time limit).
    """
    columns = list(iter_bits(cols))
    weight = len(columns) + 1
    prob = pulp.LpProblem("cover", pulp.LpMinimize)
    x = {c: prob.add_variable(f"p{c}", 0, 1, cat=pulp.LpBinary) for c in columns}
    prob += pulp.lpSum((lits[c] * weight + 1) * x[c] for c in columns)
    for r in iter_bits(rows):
        prob += pulp.lpSum(x[c] for c in iter_bits(row_cols[r] & cols)) >= 1
    with warnings.catch_warnings():
        # pulp 3.3 flags its bundled CBC for removal in 4.0; the bundled binary is what we use.
        warnings.filterwarnings("ignore", category=DeprecationWarning, message=".*PULP_CBC_CMD")
        # No ``threads`` option: CBC's ``-threads 1`` starts its parallel search with one worker that
        # sometimes waits on the main thread for 10 s (benchmarks/solver_stalls.py); serial CBC never does.
        solver = pulp.PULP_CBC_CMD(msg=False, timeLimit=time_limit_s)
    prob.solve(solver)
    picked = [c for c in columns if (x[c].value() or 0) > 0.5]
    covered = 0
    for c in picked:
        covered |= col_rows[c]
    if rows & ~covered:
        return _greedy(rows, cols, col_rows, lits), False
    return picked, prob.sol_status == pulp.LpSolutionOptimal


def _greedy(rows: int, cols: int, col_rows: list[int], lits: list[int]) -> list[int]:
    """Fallback cover when CBC returns no solution in time: most new rows per literal."""
    picked = []
    while rows:
        best = max(iter_bits(cols), key=lambda c: ((col_rows[c] & rows).bit_count() / max(lits[c], 1), -c))
        picked.append(best)
        rows &= ~col_rows[best]
        cols &= ~(1 << best)
    return picked


def minimum_cover(table: TruthTable, primes: tuple[Cube, ...], *,
                  time_limit_s: float | None = None) -> CoverSolution:
    """A cover of ``table.on`` by ``primes`` with fewest literals, then fewest terms.

    Reductions (:func:`_reduce`) first, then the cyclic core as an integer
    program solved by CBC (:func:`_solve_ilp`).  ``proven`` is True when the
    core was empty or CBC proved optimality.  ``primes`` must include every
    prime implicant that touches the on-set, else the result is only minimum
    among those given.

    >>> from .primes import prime_implicants
    >>> from .table import table_from_minterms
    >>> t = table_from_minterms(("a", "b", "c"), [0, 1, 2, 5, 6, 7])  # cyclic: no essentials
    >>> s = minimum_cover(t, prime_implicants(t))
    >>> len(s.cubes), s.proven, s.core_rows, s.core_columns
    (3, True, 6, 6)
    """
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
    if rows:
        picked, proven = _solve_ilp(rows, cols, col_rows, row_cols, lits, time_limit_s)
        chosen.extend(picked)
    return CoverSolution(tuple(primes[c] for c in sorted(chosen)), proven, core_rows, core_cols)


def _union(bitsets: list[int]) -> int:
    """Union of bitsets."""
    out = 0
    for b in bitsets:
        out |= b
    return out
