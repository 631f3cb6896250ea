"""Benchmark of fan-out repair (not a test): repaired plans against a naive rule, at 16, 64 and 256 loads.

The network (invented): a NAND-2 of inputs a, b drives half the loads; an
inverter of it drives the other half (loads wanting the complement); every load
is a NAND-2 of its net and an input of its own.  The stock (invented): 12AU7,
12AT7 and 6AU6 in quantity at +150 V / -100 V, silicon diodes.

Ours: :func:`planner.stages.repair_fanout` with each strategy at each stocked
limit (as :func:`planner.pipeline.plan_design` tries them), every
network through the aggregated integer program, the best kept.  Naive: every
net over its limit gets an inverter pair per extra group of loads (the pair's
second inverter drives a group; pairs hang on the driver, then on earlier
pairs), at each stocked limit, through the same integer program, the best kept.
Printed per size: envelopes, sections and wall-clock time of both and their
ratios, measured side by side in one run.

Run: ``python3 benchmarks/fanout.py [loads...]``.
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

from planner.electrical import Rails, design_family
from planner.mapping import MappingOptions
from planner.mapping.model import Infeasible, solve_problem
from planner.pipeline._design import _capped, _fanout_limits, _rank, _repair_caps, _weights, design_rules
from planner.mapping.problem import DIODE_FANIN, build_problem
from planner.spec import load_stock
from planner.stages import Branch, Network, Stage, repair_fanout
from planner.stages.network import renumber

# Invented data: a large box of tubes for the benchmark.
STOCK = """\
# Invented benchmark data.
supplies:
  plate: {volts: 150, max_ma: 100000}
  bias: {volts: -100, max_ma: 20000}
  heater:
    - {id: H1, volts: 6.3, max_amps: 900}
    - {id: H2, volts: 12.6, max_amps: 300}
tubes:
  12AU7: {count: 3000}
  12AT7: {count: 2000}
  6AU6: {count: 100}
diodes: solid-state
"""


def fan_network(loads: int) -> Network:
    """The benchmark network of ``loads`` loads, half on a NAND's net and half on its inverter's."""
    inputs = ("a", "b") + tuple(f"c{k}" for k in range(loads))
    stages = [Stage("S1", "n1", "inverting", (Branch(("a", "b"), "dual"),)),
              Stage("S2", "n2", "inverting", (Branch(("n1",), "single"),))]
    for k in range(loads):
        net = "n1" if k % 2 == 0 else "n2"
        stages.append(Stage(f"S{k + 3}", f"n{k + 3}", "inverting", (Branch((net, f"c{k}"), "dual"),)))
    return Network(inputs, tuple(stages), {f"y{k}": f"n{k + 3}" for k in range(loads)})


def naive(network: Network, limit) -> Network:
    """Every net over its limit: an inverter pair per extra group of loads (pairs hang breadth first)."""
    records = {}
    for s in network.stages:
        records[s.output] = ("inverting", tuple((b.inputs, b.means) for b in s.branches))
    outputs = dict(network.outputs)
    users: dict[str, list] = {}
    for s in network.stages:
        for b, branch in enumerate(s.branches):
            for p, net in enumerate(branch.inputs):
                users.setdefault(net, []).append((s.output, b, p))
    for name, net in network.outputs.items():
        users.setdefault(net, []).append(("output", name, 0))
    fresh = 0
    for s in network.stages:
        slots, own = users.get(s.output, []), limit(s)
        if len(slots) <= own:
            continue
        each = limit(Stage("I", "#", "inverting", (Branch(("x",), "single"),)))
        nodes, free = [s.output], [own]
        while sum(free) < len(slots):
            parent = next(i for i, f in enumerate(free) if f > 0)
            free[parent] -= 1
            fresh += 2
            first, second = f"#p{fresh - 1}", f"#p{fresh}"
            records[first] = ("inverting", (((nodes[parent],), "single"),))
            records[second] = ("inverting", (((first,), "single"),))
            nodes.append(second)
            free.append(each)
        k = 0
        for consumer, b, p in slots:
            while free[k] == 0:
                k += 1
            free[k] -= 1
            if consumer == "output":
                outputs[b] = nodes[k]
                continue
            body = [list(x) for x, _ in records[consumer][1]]
            body[b][p] = nodes[k]
            records[consumer] = ("inverting", tuple((tuple(x), m) for x, (_, m) in zip(body, records[consumer][1])))
    return renumber(network.inputs, network.complements, records, outputs, {}, {}, {})


def _distinct(networks):
    return list({(n.stages, tuple(sorted(n.outputs.items()))): n for n in networks}.values())


def best_plan(networks, family, stock, weights):
    """(envelopes, sections, stages) of the best network by the integer program's objective."""
    best = None
    for network in _distinct(networks):
        problem, ways = build_problem(network, family, stock, weights, diode_fanin=DIODE_FANIN)
        if any(not w for w in ways.values()):
            continue
        try:
            counts = solve_problem(problem, gap=0.0, time_limit_s=120)
        except Infeasible:
            continue
        if best is None or _rank(counts, weights) < _rank(best[0], weights):
            best = (counts, network)
    counts, network = best
    return dict(counts.terms)["envelopes"], network.cost().sections, len(network.stages)


def run(loads: int, stock, family, weights) -> tuple:
    network = fan_network(loads)
    caps = _repair_caps(family, stock)
    best = _fanout_limits(family, stock, DIODE_FANIN)
    limits = [_capped(best, cap) for cap in caps]
    start = time.perf_counter()
    ours = [repair_fanout(network, limit, strategy=s) for limit in limits for s in ("buffers", "duplicates")]
    ours = best_plan(ours, family, stock, weights)
    mid = time.perf_counter()
    theirs = best_plan([naive(network, limit) for limit in limits], family, stock, weights)
    end = time.perf_counter()
    return ours, theirs, mid - start, end - mid


def main(argv: list[str]) -> None:
    sizes = [int(a) for a in argv] or [16, 64, 256]
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "stock.yaml"
        path.write_text(STOCK)
        stock = load_stock(str(path))
    options = MappingOptions()
    rules = design_rules(stock, options)
    tubes = [(stock.catalogue.get(t.tube), rules.wear) for t in stock.tubes]
    family = design_family(Rails(stock.plate.volts, stock.bias.volts), tubes, rules)
    weights = _weights(stock, options)
    print("| loads | ours: envelopes | sections | stages | time | naive: envelopes | sections | stages | time "
          "| envelopes ratio (ours / naive) | time ratio |")
    print("|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|")
    for loads in sizes:
        (oe, osec, ost), (ne, nsec, nst), ot, nt = run(loads, stock, family, weights)
        print(f"| {loads} | {oe:.0f} | {osec} | {ost} | {ot:.2f} s | {ne:.0f} | {nsec} | {nst} | {nt:.2f} s "
              f"| {oe / ne:.3f} | {ot / nt:.2f} |", flush=True)


if __name__ == "__main__":
    main(sys.argv[1:])
