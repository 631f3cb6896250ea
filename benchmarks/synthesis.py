"""Two-level against multi-level synthesis: envelopes and time, side by side, on seeded designs.

Run: python benchmarks/synthesis.py [--quick].  Designs are invented here (fixed seed): n
inputs and 8 to 40 outputs, each output an OR of two to four product terms drawn from a
shared pool (so outputs can share logic), some with an XOR of two inputs.  Per design and
stock (tests/fixtures/synthesis: rich, triode, scarce; invented data), the two-level path is
the project's own networks (``synthesise`` for every stage-layer variant of the stock) and
the multi-level path the engine's (``multilevel_networks``); each network gets followers and
the integer program, and the fewest envelopes of each path are printed with the seconds its
synthesis took, and the ratio multi / two.  The planner keeps both and takes the better.
Also the fixture circuits (comparators, decoders, adders, multiplier, square root, majority).
"""

from __future__ import annotations

import random
import sys
import time
from pathlib import Path

import sympy

from planner.electrical import Rails, design_family
from planner.mapping import MappingOptions
from planner.mapping.model import Infeasible, solve_problem
from planner.pipeline._multilevel import multilevel_networks
from planner.pipeline._design import _repaired, _synthesis_variants, _weights, design_rules
from planner.mapping.problem import build_problem
from planner.spec import Design, InputSpec, OutputSpec, load_design, load_stock
from planner.stages import prove, synthesise

FIXTURES = Path(__file__).resolve().parent.parent / "tests" / "fixtures" / "synthesis"


def seeded_design(seed: int, n_inputs: int, n_outputs: int) -> Design:
    """Invented multi-output design: outputs are ORs of terms from a shared pool (fixed seed)."""
    rng = random.Random(seed)
    xs = [sympy.Symbol(f"x{k}") for k in range(n_inputs)]
    pool = []
    for _ in range(max(6, n_outputs)):
        chosen = rng.sample(xs, rng.randint(2, 3))
        pool.append(sympy.And(*[x if rng.random() < 0.6 else sympy.Not(x) for x in chosen]))
    outputs = []
    for k in range(n_outputs):
        terms = rng.sample(pool, rng.randint(2, 4))
        if rng.random() < 0.25:
            a, b = rng.sample(xs, 2)
            terms.append(sympy.Xor(a, b) & rng.choice(xs))
        outputs.append(OutputSpec(f"o{k}", sympy.Or(*terms), sympy.false, ""))
    return Design(f"seeded-{seed}", "-", tuple(InputSpec(str(x)) for x in xs), (), tuple(outputs))


class Mapper:
    """The planner's steps for one stock: family, variants, fan-out repair, integer program."""

    def __init__(self, stock):
        self.stock = stock
        self.options = MappingOptions()
        self.rules = design_rules(stock, self.options)
        tubes = [(stock.catalogue.get(t.tube), t.condition if t.condition is not None else self.rules.wear)
                 for t in stock.tubes if stock.catalogue.get(t.tube).amplifying_sections]
        self.family = design_family(Rails(stock.plate.volts, stock.bias.volts), tubes, self.rules)
        self.weights = _weights(stock, self.options)
        self.variants, self.fanin = _synthesis_variants(stock, self.family, self.rules, self.options)

    def envelopes(self, network, design) -> float | None:
        """Fewest envelopes over the network's fan-out repairs (as the planner tries them), or None."""
        best = None
        for _label, repaired, _reason in _repaired("", network, self.family, self.stock, self.fanin, {}, {},
                                                   self.options):
            if repaired is None:
                continue
            prove(repaired, design)
            problem, ways = build_problem(repaired, self.family, self.stock, self.weights, diode_fanin=self.fanin)
            if any(not ways[s.id] for s in repaired.stages):
                continue
            try:
                counts = solve_problem(problem, solver="cbc", gap=0.0, time_limit_s=60)
            except Infeasible:
                continue
            found = dict(counts.terms)["envelopes"]
            best = found if best is None else min(best, found)
        return best

    def two_level(self, design):
        start = time.perf_counter()
        networks = [synthesise(design, synth).network for _, synth in self.variants]
        return networks, time.perf_counter() - start

    def multi_level(self, design):
        start = time.perf_counter()
        found = multilevel_networks(design, self.stock, self.family, self.variants, self.weights, self.options)
        return [n for _, n, _ in found if n is not None], time.perf_counter() - start


def best(mapper, networks, design):
    values = [e for e in (mapper.envelopes(n, design) for n in networks) if e is not None]
    return min(values) if values else None


def row(name, mapper, design):
    two, t_two = mapper.two_level(design)
    multi, t_multi = mapper.multi_level(design)
    e_two, e_multi = best(mapper, two, design), best(mapper, multi, design)
    ratio = f"{e_multi / e_two:.2f}" if e_two and e_multi else "-"
    both = min(e for e in (e_two, e_multi) if e is not None) if (e_two or e_multi) else None
    print(f"{name:<22} {len(design.outputs):>3} {_n(e_two):>9} {t_two:>7.2f} {_n(e_multi):>9} {t_multi:>7.2f} "
          f"{ratio:>6} {_n(both):>6}", flush=True)
    return e_two, e_multi


def _n(value) -> str:
    return "-" if value is None else f"{value:g}"


def main():
    quick = "--quick" in sys.argv
    stocks = ["rich"] if quick else ["rich", "triode", "scarce"]
    sizes = [(8, 8), (8, 16)] if quick else [(8, 8), (9, 16), (10, 24), (10, 32), (10, 40)]
    for stock_name in stocks:
        mapper = Mapper(load_stock(FIXTURES / f"{stock_name}.yaml"))
        print(f"\nstock {stock_name}: envelopes (fewest over the path's networks) and synthesis seconds")
        print(f"{'design':<22} {'out':>3} {'two-level':>9} {'s':>7} {'multi':>9} {'s':>7} {'ratio':>6} {'both':>6}")
        totals = [0.0, 0.0, 0.0]
        for seed, (n, m) in enumerate(sizes, 1):
            e = row(f"seeded {n} in", mapper, seeded_design(seed, n, m))
            _add(totals, e)
        for name in ("full_adder", "compare2", "bcd7seg", "mult2x2", "sqrt6", "compare3", "decoder3to8",
                     "adder3", "majority5")[: 3 if quick else None]:
            e = row(name, mapper, load_design(FIXTURES / f"{name}.yaml"))
            _add(totals, e)
        print(f"{'total':<22} {'':>3} {totals[0]:>9g} {'':>7} {totals[1]:>9g} {'':>7} "
              f"{totals[1] / totals[0] if totals[0] else 0:>6.2f} {totals[2]:>6g}")


def _add(totals, pair):
    two, multi = pair
    if two is not None and multi is not None:
        totals[0] += two
        totals[1] += multi
        totals[2] += min(two, multi)


if __name__ == "__main__":
    main()
