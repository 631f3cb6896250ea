"""Speed of stage synthesis on random designs (invented here, fixed seed).

Run: python benchmarks/stages_synthesis.py.  Goal: a design of 12 inputs, 6 signals
and 8 outputs of five-input functions synthesises in under 10 s per mode on one core.
"""

import random
import time

import sympy

from planner.spec import Design, InputSpec, OutputSpec, SignalSpec
from planner.stages import SynthesisOptions, synthesise


def random_function(rng, names, k):
    chosen = rng.sample(names, k)
    bits = rng.getrandbits(1 << k)
    syms = [sympy.Symbol(n) for n in chosen]
    return sympy.Or(*[sympy.And(*[s if m >> (k - 1 - j) & 1 else sympy.Not(s) for j, s in enumerate(syms)])
                      for m in range(1 << k) if bits >> m & 1])


def main():
    rng = random.Random(3)
    print("inputs signals outputs mode sections stages seconds")
    for n, n_signals, n_outputs in [(8, 2, 4), (10, 4, 6), (12, 6, 8), (14, 8, 8)]:
        names = [f"x{i}" for i in range(n)]
        known, signals = list(names), []
        for k in range(n_signals):
            signals.append(SignalSpec(f"s{k}", random_function(rng, known, 4)))
            known.append(f"s{k}")
        outputs = tuple(OutputSpec(f"o{k}", random_function(rng, known, 5), sympy.false, "")
                        for k in range(n_outputs))
        design = Design("bench", "-", tuple(InputSpec(x) for x in names), tuple(signals), outputs)
        for options in (SynthesisOptions(), SynthesisOptions(mode="nand"), SynthesisOptions(mode="nor")):
            start = time.perf_counter()
            cost = synthesise(design, options).network.cost()
            print(n, n_signals, n_outputs, options.mode, cost.sections, cost.stages,
                  round(time.perf_counter() - start, 2))


if __name__ == "__main__":
    main()
