"""Exact minima checked against an independent brute force on small functions.

The brute force here shares no code with planner.logic: it lists every cube
as a string over {0, 1, -}, keeps those inside on|dc, and finds the cheapest
cover (literals, then terms) by dynamic programming over subsets of the on-set.
"""

import itertools
import random

import pytest

from planner.logic import minimise, minimise_complement, table_from_minterms


def _brute_minimum(n, on, dc):
    cubes = []
    for pattern in itertools.product("01-", repeat=n):
        points = [i for i in range(1 << n)
                  if all(ch == "-" or int(ch) == (i >> (n - 1 - k) & 1) for k, ch in enumerate(pattern))]
        if all(p in on or p in dc for p in points):
            covered = sum(1 << on.index(p) for p in points if p in on)
            cubes.append((sum(ch != "-" for ch in pattern), covered))
    full = (1 << len(on)) - 1
    best = {0: (0, 0)}
    frontier = [0]
    while frontier:  # relax until no state improves (costs are positive, so this ends)
        nxt = []
        for state in frontier:
            lits, terms = best[state]
            for cube_lits, covered in cubes:
                new = state | covered
                if new == state:
                    continue
                cost = (lits + cube_lits, terms + 1)
                if new not in best or cost < best[new]:
                    best[new] = cost
                    nxt.append(new)
        frontier = nxt
    return best[full]


def test_every_three_input_function():
    for f in range(256):
        on = [i for i in range(8) if f >> i & 1]
        cover = minimise(table_from_minterms(("a", "b", "c"), on))
        assert (cover.literals, cover.terms) == _brute_minimum(3, on, []), f


@pytest.mark.parametrize("n,count", [(3, 200), (4, 25)])
def test_random_functions_with_dont_cares(n, count):
    rng = random.Random(n)
    names = tuple("abcd"[:n])
    done = 0
    while done < count:
        values = [rng.choice("01-") for _ in range(1 << n)]
        on = [i for i, v in enumerate(values) if v == "1"]
        off = [i for i, v in enumerate(values) if v == "0"]
        dc = [i for i, v in enumerate(values) if v == "-"]
        if len(on) > 9 or len(off) > 9:
            continue  # keep the brute force's 2**|on| states small
        done += 1
        table = table_from_minterms(names, on, dc)
        cover = minimise(table)
        assert (cover.literals, cover.terms) == _brute_minimum(n, on, dc), values
        comp = minimise_complement(table)
        assert (comp.literals, comp.terms) == _brute_minimum(n, off, dc), values
