"""Benchmark: whole ``tubeplan plan`` runs against a fixed yardstick of CPU work (not a test).

The yardstick is sympy's ``SOPform`` on one seeded random 8-input function
(each assignment on with probability 0.4, don't-care 0.1), timed inside its own
process after the imports; each plan is a fresh ``tubeplan plan`` process timed
from outside (start-up, reading, synthesis, the integer program, the report).
All run side by side in this one run, so the ratios hold on a loaded machine
where the seconds do not.  Plans run twice over: with the logic-family cache
empty (the first plan for a stock) and warm (every later one); both must write
byte-identical plans.  Designs: the bundled demo and three of our own in
benchmarks/designs/ (invented data), all on the demo's stock.  Goal: the demo
within 6 yardsticks (warm).

Run:  python3 benchmarks/plan.py [REPEATS]        (default 3; about a minute)
"""

from __future__ import annotations

import filecmp
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
STOCK = ROOT / "inventory_demo" / "stock.yaml"
DESIGNS = {
    "demo (2-bit adder)": ROOT / "inventory_demo" / "design.yaml",
    "seven-segment (minterms, don't-cares)": ROOT / "benchmarks" / "designs" / "seven_segment.yaml",
    "2-bit comparator": ROOT / "benchmarks" / "designs" / "comparator.yaml",
    "vote and parity of four": ROOT / "benchmarks" / "designs" / "majority_parity.yaml",
}
YARDSTICK = """
import random, time, sympy
from sympy.logic import SOPform
rng = random.Random(8)
on, dc = [], []
for i in range(256):
    u = rng.random()
    if u < 0.4:
        on.append(i)
    elif u < 0.5:
        dc.append(i)
start = time.perf_counter()
SOPform(sympy.symbols("x0:8"), on, dc)
print(time.perf_counter() - start)
"""


def yardstick() -> float:
    done = subprocess.run([sys.executable, "-c", YARDSTICK], capture_output=True, text=True, check=True)
    return float(done.stdout)


def plan_once(design: Path, out: Path, cache: str) -> float:
    env = dict(os.environ, PYTHONPATH=str(ROOT), TUBEPLAN_CACHE_DIR=cache)
    start = time.perf_counter()
    subprocess.run([sys.executable, "-m", "planner.cli", "plan", str(design), "--stock", str(STOCK),
                    "--out", str(out), "--quiet"], env=env, check=True, capture_output=True)
    return time.perf_counter() - start


def same_tree(a: Path, b: Path) -> bool:
    compared = filecmp.dircmp(a, b)
    return not (compared.diff_files or compared.left_only or compared.right_only) and all(
        filecmp.cmp(a / name, b / name, shallow=False) for name in compared.common_files)


def main() -> None:
    repeats = int(sys.argv[1]) if len(sys.argv) > 1 else 3
    with tempfile.TemporaryDirectory() as scratch:
        work = Path(scratch)
        sticks = [yardstick()]
        rows = []
        for label, design in DESIGNS.items():
            cold = plan_once(design, work / "cold", "")  # no cache: the family is designed
            cache = str(work / "cache")
            plan_once(design, work / "warm", cache)  # fills the cache
            warm = []
            for _ in range(repeats):
                warm.append(plan_once(design, work / "warm", cache))
                sticks.append(yardstick())
            identical = same_tree(work / "cold", work / "warm")
            rows.append((label, cold, statistics.median(warm), identical))
            print(f"  {label} done", file=sys.stderr, flush=True)
        stick = statistics.median(sticks)
        print(f"yardstick: sympy SOPform on one seeded 8-input function, median {stick:.3f} s "
              f"over {len(sticks)} runs interleaved with the plans")
        print("| design | cold cache | warm cache (median) | cold / yardstick | warm / yardstick | same plan |")
        print("|---|---:|---:|---:|---:|---|")
        for label, cold, warm, identical in rows:
            print(f"| {label} | {cold:.2f} s | {warm:.2f} s | {cold / stick:.1f} | {warm / stick:.1f} | "
                  f"{'yes' if identical else 'NO'} |")
        print(f"\nPython {sys.version.split()[0]}; load average {os.getloadavg()[0]:.1f}")


if __name__ == "__main__":
    main()
