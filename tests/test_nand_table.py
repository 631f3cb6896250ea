"""The stored table of minimum NAND circuits (3-input functions) against exhaustive search."""

from itertools import permutations

import pytest

from planner.stages.nand_exact import nand_circuit
from planner.stages.nand_table import FULL, INPUTS, best_completion, class_of, evaluate, lookup, table_limit

DEPTH = 7  # every circuit of up to 7 gates, searched afresh here (a few seconds)


def _exhaustive_sizes(depth: int) -> dict[int, int]:
    """Fewest NAND gates (inverters counted) for each 3-input function reachable within ``depth``
    gates: a plain depth-first enumeration of every circuit from the inputs (no symmetry used,
    unlike the table's generator), keeping the smallest size seen per function."""
    sizes = {f: 0 for f in INPUTS}
    seen = set()

    def search(nodes, left):  # a set of functions is expanded once per gates left
        key = (frozenset(nodes), left)
        if key in seen:
            return
        seen.add(key)
        n = len(nodes)
        for i in range(n):
            for j in range(i, n):
                f = FULL & ~(nodes[i] & nodes[j])
                if f in nodes:
                    continue
                if sizes.get(f, depth + 1) > n - 2:
                    sizes[f] = n - 2
                if left > 1:
                    search(nodes + [f], left - 1)

    search(list(INPUTS), depth)
    return sizes


def test_table_sizes_equal_exhaustive_search_for_every_function():
    """Reference: exhaustive enumeration of all circuits of up to DEPTH gates (computed here).
    Functions beyond DEPTH must be beyond it in the table too; every stored circuit is
    checked by evaluation, so its size is an upper bound everywhere."""
    sizes = _exhaustive_sizes(DEPTH)
    assert len(sizes) > 200
    limit = table_limit()
    for f in range(256):
        gates = lookup(f)
        if gates is not None:
            nodes = list(INPUTS)
            for i, j in gates:
                nodes.append(FULL & ~(nodes[i] & nodes[j]))
            assert (nodes[-1] if gates else f) == f and (gates or f in INPUTS)
        table_size = len(gates) if gates is not None else limit + 1
        assert min(sizes.get(f, DEPTH + 1), DEPTH + 1) == min(table_size, DEPTH + 1), f


@pytest.mark.parametrize("f", [0xE8, 0x80, 0x7F, 0x3C, 0xCA, 0x01])
def test_table_matches_the_synthesis_search_on_named_functions(f):
    """Reference: planner.stages.nand_exact's iterative-deepening search (exhaustive per depth)
    on majority, AND, NAND, a XOR b, the multiplexer and NOR."""
    gates = lookup(f)
    searched = nand_circuit(list(INPUTS), f, FULL, FULL, DEPTH, max_states=10**7)
    if searched is None:
        assert gates is None or len(gates) > DEPTH
    else:
        assert gates is not None and len(gates) == len(searched)


def test_permutation_classes_and_completions():
    # 80 classes of 3-input functions under input permutation (OEIS A000612, from memory).
    assert len({class_of(f) for f in range(256)}) == 80
    for order in permutations(range(3)):
        renamed = evaluate([(0, 1)], tuple(INPUTS[k] for k in order))  # NAND of two renamed inputs
        assert class_of(renamed) == class_of(FULL & ~(INPUTS[0] & INPUTS[1]))
    # With don't-cares the smallest completion wins: a & b with (a, b, c) = 111 free is
    # NAND(a, b) inverted (2 gates) or less; nothing smaller than the plain AND's circuit.
    care = FULL & ~0x80
    gates = best_completion(0xC0, care)
    assert gates is not None and (evaluate(gates, INPUTS) ^ 0xC0) & care == 0
    assert len(gates) <= len(lookup(0xC0))
