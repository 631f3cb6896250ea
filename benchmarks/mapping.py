"""Benchmark of the stock-aware mapping (not a test): synthetic networks of 100, 1,000 and 5,000 branches.

For each size: a random stage network (invented: AOI stages over earlier nets,
seeded), fan-out repaired where needed (followers first), the aggregated integer program solved to a
1 % gap (CBC, single thread), the placement and the full parts netlist; time,
envelopes, and envelopes of a greedy first-fit baseline (each stage on the
first type in name order with a template, stock and fan-out for it, sections
packed first-fit), printed with their ratio.  Peak memory of this process and
of the solver child processes.

Run: ``/tmp/venv/bin/python benchmarks/mapping.py [sizes...]``.
"""

from __future__ import annotations

import random
import resource
import sys
import tempfile
import time
from pathlib import Path

from planner.electrical import DesignRules, Rails, design_family
from planner.mapping.assemble import place
from planner.mapping.build import build_plan
from planner.mapping.model import Weights, solve_problem
from planner.mapping.plan import Solution
from planner.pipeline._design import _fanout_limits
from planner.mapping.problem import DIODE_FANIN, build_problem
from planner.spec import load_stock
from planner.spec.design import Design, InputSpec, OutputSpec
from planner.stages import Branch, Network, Stage, repair_fanout

# Invented data: a large box of tubes for the benchmark.
STOCK = """\
# Invented benchmark data.
supplies:
  plate: {volts: 250, max_ma: 100000}
  bias: {volts: -100, max_ma: 20000}
  heater:
    - {id: H1, volts: 6.3, max_amps: 900}
    - {id: H2, volts: 12.6, max_amps: 300}
tubes:
  12AU7: {count: 3000, reserve: 10}
  12AT7: {count: 2000}
  6AU6: {count: 3000}
  5915: {count: 1500, scarce: true}
  6J6: {count: 1500}
diodes: solid-state
"""


def synthetic_network(branches: int, seed: int = 1) -> Network:
    """A random network of about ``branches`` branches: stages of 1-3 branches of 1-2 inputs over
    earlier nets (at most 3 loads each before followers), inputs 32 primaries; outputs the last 16 nets."""
    rng = random.Random(seed)
    inputs = tuple(f"i{k}" for k in range(32))
    nets = list(inputs)
    loads = {n: 0 for n in nets}
    stages, count = [], 0
    while count < branches:
        k = len(stages) + 1
        body = []
        for _ in range(rng.choice((1, 1, 2, 2, 3))):
            width = rng.choice((1, 1, 2))
            pool = [n for n in nets[-60:] if loads[n] < 3] or inputs
            picks = tuple(sorted(set(rng.sample(pool, min(width, len(pool))))))
            body.append(Branch(picks, "single" if len(picks) == 1 else "dual"))
            for n in picks:
                loads[n] += 1
        body = tuple(dict.fromkeys(body))
        out = f"n{k}"
        stages.append(Stage(f"S{k}", out, "inverting", body))
        nets.append(out)
        loads[out] = 0
        count += len(body)
    outputs = {f"y{j}": s.output for j, s in enumerate(stages[-16:])}
    # Keep every stage: nets without loads become outputs too.
    for s in stages:
        if loads[s.output] == 0 and s.output not in outputs.values():
            outputs[f"y{len(outputs)}"] = s.output
    return Network(inputs, tuple(stages), outputs)


def greedy(problem, ways_of, network) -> tuple[int, float]:
    """First-fit baseline: each stage on the first way (type name order) whose type still has sections;
    returns envelopes and the weighted objective (each envelope on its type's first heater way)."""
    kinds = {k.tube: k for k in problem.kinds}
    free = {t: k.usable * len(k.sections) for t, k in kinds.items()}
    used = {t: 0 for t in kinds}
    for stage in network.stages:
        for way in ways_of[stage.id]:
            need = sum(n for _k, n in way.demand)
            if kinds[way.tube].shared_cathode and way.template == "follower":
                need = len(kinds[way.tube].sections)
            if need <= free[way.tube]:
                free[way.tube] -= need
                used[way.tube] += need
                break
        else:
            raise RuntimeError(f"greedy baseline: no room for {stage.id}")
    envelopes = {t: -(-n // len(kinds[t].sections)) for t, n in used.items()}
    w = problem.weights
    objective = sum(n * (w.envelopes + w.heater_watts * kinds[t].heaters[0].watts + w.scarce * kinds[t].scarce)
                    for t, n in envelopes.items())
    return sum(envelopes.values()), objective


def run(branches: int, stock, family, rules) -> None:
    network = synthetic_network(branches)
    start = time.perf_counter()
    network = repair_fanout(network, _fanout_limits(family, stock, DIODE_FANIN), strategy="followers")
    weights = Weights(stock.objective.envelopes, stock.objective.heater_watts, stock.objective.scarce)
    problem, ways_of = build_problem(network, family, stock, weights, diode_fanin=DIODE_FANIN)
    built = time.perf_counter()
    counts = solve_problem(problem, gap=0.01, time_limit_s=60)
    solved = time.perf_counter()
    placement = place(network, problem, counts)
    design = Design("bench", "-", tuple(InputSpec(n) for n in network.inputs), (),
                    tuple(OutputSpec(name, None) for name in network.outputs))
    level = counts.levels[-1]
    solution = Solution("cbc", counts.status, level.value, level.lp_bound, level.gap, solved - start)
    plan = build_plan(design, network, family, stock, problem, counts, placement, solution, rules)
    done = time.perf_counter()
    n_branches = sum(len(s.branches) for s in network.stages)
    envelopes = len(plan.envelopes)
    greedy_envelopes, greedy_objective = greedy(problem, ways_of, network)
    print(f"{n_branches:6d} branches {len(network.stages):5d} stages {len(problem.classes):3d} classes | "
          f"model {built - start:6.2f} s, solve {solved - built:6.2f} s (gap {level.gap:.4f}, "
          f"LP bound {level.lp_bound:.1f}, objective {level.value:.1f}), plan {done - solved:6.2f} s | "
          f"envelopes {envelopes} vs greedy {greedy_envelopes} (ratio {envelopes / greedy_envelopes:.3f}), "
          f"objective ratio {level.value / greedy_objective:.3f} | "
          f"{len(plan.parts)} parts")


def main(argv: list[str]) -> None:
    sizes = [int(a) for a in argv] or [100, 1000, 5000]
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "stock.yaml"
        path.write_text(STOCK)
        stock = load_stock(str(path))
    rules = DesignRules(diodes="solid-state")
    tubes = [(stock.catalogue.get(t.tube), rules.wear) for t in stock.tubes]
    start = time.perf_counter()
    family = design_family(Rails(stock.plate.volts, stock.bias.volts), tubes, rules)
    print(f"family for {len(tubes)} types: {time.perf_counter() - start:.1f} s")
    for size in sizes:
        run(size, stock, family, rules)
    own = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    child = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024
    print(f"peak memory: this process {own:.0f} MiB, largest solver process {child:.0f} MiB")


if __name__ == "__main__":
    main(sys.argv[1:])
