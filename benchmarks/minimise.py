"""Benchmark: two-level minimisation against sympy's SOPform (not a test).

Seeded random functions (each assignment on with probability 0.4, don't-care
0.1, else off) at 6, 8, 9, 10, 12, 14 and 16 inputs.  For each: our time and
literal count for the minimum SOP of f (exact up to 10 inputs, the
expand / irredundant / reduce heuristic above), beside sympy SOPform's, each
run in its own subprocess (SOPform with a 120 s timeout).  SOPform runs on
every function up to 9 inputs and on the first two at 10 (20-60 s each
there); above 10 it is skipped.  The heuristic is also run inside the
exact range so its literal count can be set against the proven minimum.
Peak resident memory is each worker process's own (resource.getrusage).
Times are wall-clock (time.perf_counter) with the process CPU time beside
ours; CBC runs in a child process of the worker, so its CPU time shows only
in the wall-clock figure.  The machine may be shared: compare ratios.

Two further tables (``--extra`` runs only these):

- 10 inputs with 20 % don't-cares (on 0.4, don't-care 0.2), f and ~f each
  minimised on its own, as ``tubeplan logic`` and synthesis do: seconds,
  proven or the gap to the LP bound (goal: each within 2 s, the exact cover's
  budget being 1 s);
- 18- and 20-input blocks, a seeded random function and a seeded sum of 40
  products of 2-6 literals each: seconds and the worker's peak resident
  memory (goal: under 500 MiB).

Run:  python3 benchmarks/minimise.py [--extra]          (2-4 minutes; --extra about 2)
"""

from __future__ import annotations

import json
import random
import statistics
import subprocess
import sys
import time

SIZES = (6, 8, 9, 10, 12, 14, 16)
FUNCTIONS = {6: 5, 8: 5, 9: 5, 10: 5, 12: 3, 14: 3, 16: 3}
SOPFORM_FUNCTIONS = {6: 5, 8: 5, 9: 5, 10: 2}
SOPFORM_TIMEOUT_S = 120


def random_function(n: int, seed: int, dont_care: float = 0.1) -> tuple[list[int], list[int]]:
    """On-set and don't-care minterms of a seeded random function of n inputs."""
    rng = random.Random(seed)
    on, dc = [], []
    for i in range(1 << n):
        u = rng.random()
        if u < 0.4:
            on.append(i)
        elif u < 0.4 + dont_care:
            dc.append(i)
    return on, dc


def extra_worker(kind: str, n: int, seed: int) -> dict:
    """One measurement of the extra tables in this (fresh) process (see the module docstring)."""
    import resource

    from planner.logic import TruthTable, minimise, table_from_minterms
    from planner.logic.table import Space

    names = tuple(f"x{k}" for k in range(n))
    if kind in ("dc20-f", "dc20-not-f"):
        on, dc = random_function(n, seed, dont_care=0.2)
        table = table_from_minterms(names, on, dc)
        table = table if kind == "dc20-f" else table.complement()
    elif kind == "random":
        rng = random.Random(seed)
        bits = rng.getrandbits(2 << n)  # two bits per assignment: on 1/4, don't-care 1/4 of the rest
        on = dc = 0
        for i in range(1 << n):
            pair = bits >> (2 * i) & 3
            on |= (pair == 0) << i
            dc |= (pair == 1) << i
        table = TruthTable(names, on, dc)
    else:  # a sum of 40 products
        rng = random.Random(seed)
        space = Space(n)
        on = 0
        for _ in range(40):
            chosen = rng.sample(range(n), rng.randint(2, 6))
            mask = sum(1 << p for p in chosen)
            on |= space.cube_bits(mask, mask & rng.getrandbits(n))
        table = TruthTable(names, on)
    minimise(table_from_minterms(("a", "b", "c"), [0, 1, 2, 5, 6, 7]))  # warm-up (one CBC call)
    start = time.perf_counter()
    cover = minimise(table)
    seconds = time.perf_counter() - start
    return {"seconds": seconds, "literals": cover.literals, "terms": cover.terms, "exact": cover.exact,
            "gap": cover.gap, "peak_mib": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}


def extra_main() -> None:
    """The two extra tables of the module docstring."""
    print("10 inputs, 20 % don't-cares, each polarity on its own (goal: within 2 s, proven or with its gap)")
    print("| seed | polarity | seconds | literals | proven | gap |")
    print("|---:|---|---:|---:|---|---:|")
    for seed in range(5):
        for kind, label in (("dc20-f", "f"), ("dc20-not-f", "~f")):
            r = measure(kind, 10, 9000 + seed, extra=True)
            gap = "" if r["exact"] else f"{r['gap'] * 100:.1f} %"
            print(f"| {9000 + seed} | {label} | {r['seconds']:.2f} | {r['literals']} | "
                  f"{'yes' if r['exact'] else 'no'} | {gap} |", flush=True)
    print("\nLarge blocks (goal: under 500 MiB peak)")
    print("| inputs | function | seconds | products | literals | peak RSS |")
    print("|---:|---|---:|---:|---:|---:|")
    for n in (18, 20):
        for kind, label in (("sop", "sum of 40 products"), ("random", "random, 1/4 on, 3/16 don't-care")):
            r = measure(kind, n, 7000 + n, extra=True)
            print(f"| {n} | {label} | {r['seconds']:.1f} | {r['terms']} | {r['literals']} | "
                  f"{r['peak_mib']:.0f} MiB |", flush=True)


def _literals(expr) -> int:
    import sympy

    count, stack = 0, [expr]
    while stack:
        node = stack.pop()
        if isinstance(node, sympy.Symbol):
            count += 1
        else:
            stack.extend(node.args)
    return count


def worker(kind: str, n: int, seed: int) -> dict:
    """One measurement in this (fresh) process.

    Imports and one small warm-up call (for ours, one that runs CBC) happen
    before the clock starts, so first-call costs of either side are not timed.
    """
    import resource

    on, dc = random_function(n, seed)
    names = tuple(f"x{k}" for k in range(n))
    if kind == "sopform":
        import sympy
        from sympy.logic import SOPform

        SOPform(sympy.symbols("a b c"), [0, 1, 2, 5, 6, 7])  # warm-up, not timed
        start, cpu = time.perf_counter(), time.process_time()
        expr = SOPform(sympy.symbols(names), on, dc)
        seconds, cpu = time.perf_counter() - start, time.process_time() - cpu
        literals = _literals(expr)
        exact = None
    else:
        from planner.logic import minimise, table_from_minterms

        table = table_from_minterms(names, on, dc)
        minimise(table_from_minterms(("a", "b", "c"), [0, 1, 2, 5, 6, 7]))  # warm-up (one CBC call)
        start, cpu = time.perf_counter(), time.process_time()
        cover = minimise(table, exact_limit=0) if kind == "heuristic" else minimise(table)
        seconds, cpu = time.perf_counter() - start, time.process_time() - cpu
        literals, exact = cover.literals, cover.exact
    peak_mib = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    return {"seconds": seconds, "cpu": cpu, "literals": literals, "exact": exact, "peak_mib": peak_mib}


def measure(kind: str, n: int, seed: int, timeout_s: float | None = None, extra: bool = False) -> dict | None:
    """Run :func:`worker` (or :func:`extra_worker`) in a subprocess; None if it exceeds ``timeout_s``."""
    try:
        done = subprocess.run([sys.executable, __file__, "--extra-worker" if extra else "--worker", kind,
                               str(n), str(seed)],
                              capture_output=True, text=True, timeout=timeout_s, check=True)
    except subprocess.TimeoutExpired:
        return None
    return json.loads(done.stdout)


def main() -> None:
    from tabulate import tabulate

    rows = []
    started = time.perf_counter()
    for n in SIZES:
        seeds = [1000 * n + i for i in range(FUNCTIONS[n])]
        ours = [measure("ours", n, s) for s in seeds]
        heur = [measure("heuristic", n, s) for s in seeds] if n <= 10 else None
        ref = []
        for s in seeds[: SOPFORM_FUNCTIONS.get(n, 0)]:
            print(f"  SOPform, {n} inputs, seed {s} ...", file=sys.stderr, flush=True)
            ref.append(measure("sopform", n, s, timeout_s=SOPFORM_TIMEOUT_S))
        t_ours = statistics.median(r["seconds"] for r in ours)
        lits = sum(r["literals"] for r in ours)
        row = {
            "inputs": n,
            "functions": len(seeds),
            "method": "exact" if n <= 10 else "heuristic",
            "proven": sum(bool(r["exact"]) for r in ours),
            "ours median s": f"{t_ours:.4f}",
            "ours max s": f"{max(r['seconds'] for r in ours):.4f}",
            "ours median CPU s": f"{statistics.median(r['cpu'] for r in ours):.4f}",
            "ours literals": lits,
            "peak MiB": f"{max(r['peak_mib'] for r in ours):.0f}",
            "heuristic/exact literals": (f"{sum(r['literals'] for r in heur) / lits:.3f}" if heur else "-"),
        }
        finished = [(o, r) for o, r in zip(ours, ref) if r is not None]
        if finished:
            t_ref = statistics.median(r["seconds"] for _, r in finished)
            t_ours_same = statistics.median(o["seconds"] for o, _ in finished)
            ref_lits = sum(r["literals"] for _, r in finished)
            our_lits = sum(o["literals"] for o, _ in finished)
            row.update({
                "SOPform functions": len(finished),
                "SOPform median s": f"{t_ref:.3f}",
                "speed-up (median)": f"{t_ref / t_ours_same:.0f}x",
                "literals ours/SOPform": f"{our_lits}/{ref_lits} = {our_lits / ref_lits:.3f}",
                "never more literals": all(o["literals"] <= r["literals"] for o, r in finished),
            })
        elif ref:
            row["SOPform functions"] = f"timed out (> {SOPFORM_TIMEOUT_S} s)"
        else:
            row["SOPform functions"] = "skipped (its time grows about tenfold per input)"
        rows.append(row)
        print(f"{n} inputs done ({time.perf_counter() - started:.0f} s so far)", file=sys.stderr, flush=True)
    keys = []
    for row in rows:
        keys += [k for k in row if k not in keys]
    print(tabulate([[row.get(k, "") for k in keys] for row in rows], headers=keys, disable_numparse=True))
    print(f"\nwall time {time.perf_counter() - started:.0f} s; Python {sys.version.split()[0]}")


if __name__ == "__main__":
    if len(sys.argv) == 5 and sys.argv[1] == "--worker":
        print(json.dumps(worker(sys.argv[2], int(sys.argv[3]), int(sys.argv[4]))))
    elif len(sys.argv) == 5 and sys.argv[1] == "--extra-worker":
        print(json.dumps(extra_worker(sys.argv[2], int(sys.argv[3]), int(sys.argv[4]))))
    elif sys.argv[1:] == ["--extra"]:
        extra_main()
    else:
        main()
        print()
        extra_main()
