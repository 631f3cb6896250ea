"""Benchmark: CBC calls that stall, with and without a thread option (not a test).

One cover problem (the cyclic core of a seeded 8-input function's prime
implicant chart, as :func:`planner.logic.minimise` hands it to CBC) is solved
again and again by pulp's bundled CBC, alternating between the options the
code used before (``threads=1``) and the options it uses now (none), so both
run side by side under the same machine load.  A call counts as a stall when
it takes more than ``STALL_S`` seconds while the median call takes
milliseconds: an idle CBC (two threads waiting on each other, no CPU), not
work.  Every solve must give the same objective.

Run:  python3 benchmarks/solver_stalls.py [CALLS_PER_VARIANT]     (default 1000; minutes)
"""

from __future__ import annotations

import random
import statistics
import sys
import time
import warnings

import pulp

from planner.logic import prime_implicants, table_from_minterms
from planner.logic.exact import _reduce
from planner.logic.table import Space, iter_bits

STALL_S = 2.0


def cover_problem(n: int = 8, seed: int = 3) -> pulp.LpProblem:
    """The cyclic core of a seeded random function's prime implicant chart as a 0-1 program."""
    rng = random.Random(seed)
    on = [i for i in range(1 << n) if rng.random() < 0.45]
    table = table_from_minterms([f"x{k}" for k in range(n)], on)
    primes = prime_implicants(table, useful_only=True)
    space = Space(n)
    col_rows = [space.cube_bits(p.mask, p.value) & table.on for p in primes]
    lits = [p.literals for p in primes]
    row_cols: dict[int, int] = {}
    cols = 0
    for c, rs in enumerate(col_rows):
        cols |= 1 << c
        for r in iter_bits(rs):
            row_cols[r] = row_cols.get(r, 0) | 1 << c
    rows, cols, _ = _reduce(table.on, cols, col_rows, row_cols, lits)
    columns = list(iter_bits(cols))
    prob = pulp.LpProblem("cover", pulp.LpMinimize)
    x = {c: pulp.LpVariable(f"p{c}", cat=pulp.LpBinary) for c in columns}
    prob += pulp.lpSum((lits[c] * (len(columns) + 1) + 1) * x[c] for c in columns)
    for r in iter_bits(rows):
        prob += pulp.lpSum(x[c] for c in iter_bits(row_cols[r] & cols)) >= 1
    return prob


def main() -> None:
    calls = int(sys.argv[1]) if len(sys.argv) > 1 else 1000
    prob = cover_problem()
    print(f"cover problem: {len(prob.constraints)} rows, {len(prob.variables())} columns; "
          f"{calls} calls per variant, alternating", flush=True)
    variants = {"threads=1 (before)": {"threads": 1}, "no thread option (now)": {}}
    times: dict[str, list[float]] = {k: [] for k in variants}
    objectives: set[float] = set()
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", category=DeprecationWarning)
        for i in range(calls):
            for name, extra in variants.items():
                start = time.perf_counter()
                prob.solve(pulp.PULP_CBC_CMD(msg=False, **extra))
                times[name].append(time.perf_counter() - start)
                objectives.add(round(pulp.value(prob.objective), 6))
            if (i + 1) % 100 == 0:
                print(f"  {i + 1} calls each: stalls " + ", ".join(
                    f"{k}: {sum(t > STALL_S for t in v)}" for k, v in times.items()), flush=True)
    print(f"objectives seen: {sorted(objectives)} (must be one)")
    print(f"| options | calls | stalls (> {STALL_S:g} s) | total | median | slowest |")
    print("|---|---:|---:|---:|---:|---:|")
    for name, t in times.items():
        print(f"| {name} | {len(t)} | {sum(x > STALL_S for x in t)} | {sum(t):.1f} s | "
              f"{statistics.median(t) * 1000:.1f} ms | {max(t):.1f} s |")
    before, now = (sum(t) for t in times.values())
    print(f"total time ratio before / now: {before / now:.1f}")


if __name__ == "__main__":
    main()
