"""Exact minimum NAND circuits for small functions (NAND-only mode).

Given nets with known functions (truth tables as bitsets over a block's own
variables), find the fewest two-input NAND gates and inverters that produce a
net equal to a target on its care set.  Iterative deepening depth-first search
over circuits, where a state is the *set* of functions available so far: every
order in which the same gates could be added collapses to one state, and a
state already searched with as many gates left is not searched again.  A gate
that repeats an available function is never added.  The search is exhaustive,
so the first depth that succeeds is the minimum (exact synthesis by
enumeration; cf. Knuth, TAOCP vol. 4A, section 7.1.2, on minimum Boolean
chains).  Its cost grows roughly as ``(nets^2)^gates``: it is used only for
functions of at most :data:`EXACT_MAX_VARIABLES` variables, circuits of at
most :data:`EXACT_MAX_GATES` gates, and gives up (returns None, so the caller
keeps its heuristic circuit) after :data:`EXACT_MAX_STATES` states.

>>> a, b = 0b1100, 0b1010          # two variables, names[0] most significant
>>> len(nand_circuit([a, b], a ^ b, 0b1111, 0b1111, 4))     # exclusive-OR: four NANDs
4
"""

from __future__ import annotations

from functools import lru_cache

EXACT_MAX_VARIABLES = 3
EXACT_MAX_GATES = 6
EXACT_MAX_STATES = 20_000


def nand_circuit(start: list[int], target: int, care: int, full: int, max_gates: int,
                 max_states: int = EXACT_MAX_STATES) -> list[tuple[int, int]] | None:
    """Fewest gates ``(i, j)`` (node indices; ``i == j`` an inverter) reaching ``target``.

    Nodes ``0 .. len(start)-1`` are the start functions, gate ``g`` is node
    ``len(start) + g``; the last gate produces the target.  ``[]`` when a start
    function already matches; None when more than ``max_gates`` gates are needed
    or the search visits more than ``max_states`` states (deterministically).
    ``full`` is the set of all assignments (the complement of ``f`` is ``full & ~f``).
    """
    if any((f ^ target) & care == 0 for f in start):
        return []
    budget = [max_states]
    for depth in range(1, max_gates + 1):
        seen: dict[frozenset[int], int] = {}
        found = _search(list(start), [], target, care, full, depth, seen, budget)
        if found is not None or budget[0] <= 0:
            return found
    return None


@lru_cache(maxsize=4096)
def cached_nand_circuit(start: tuple[int, ...], target: int, care: int, full: int,
                        max_gates: int) -> tuple[tuple[int, int], ...] | None:
    """:func:`nand_circuit`, memoised on its arguments (all values, so a hit is the same answer):
    the network variants a plan tries meet the same blocks and never repeat a search."""
    found = nand_circuit(list(start), target, care, full, max_gates)
    return None if found is None else tuple(found)


def _search(nodes: list[int], gates: list[tuple[int, int]], target: int, care: int, full: int, left: int,
            seen: dict[frozenset[int], int], budget: list[int]) -> list[tuple[int, int]] | None:
    """Depth-first: add one gate, at most ``left`` more; return the gate list when the target appears."""
    state = frozenset(nodes)
    if seen.get(state, -1) >= left or budget[0] <= 0:
        return None
    seen[state] = left
    budget[0] -= 1
    n = len(nodes)
    if left == 1:
        # Below the top, only gates reading the newest node can be new here: a gate on older
        # nodes alone would have finished a smaller circuit, found at an earlier depth (the
        # same first match, in the same order, as trying every pair).
        if gates:
            newest = nodes[-1]
            for i in range(n):
                if ((full & ~(nodes[i] & newest)) ^ target) & care == 0:
                    return gates + [(i, n - 1)]
            return None
        for i in range(n):
            for j in range(i, n):
                if ((full & ~(nodes[i] & nodes[j])) ^ target) & care == 0:
                    return gates + [(i, j)]
        return None
    for i in range(n):
        for j in range(i, n):
            f = full & ~(nodes[i] & nodes[j])
            if f in state:
                continue
            if (f ^ target) & care == 0:
                return gates + [(i, j)]
            nodes.append(f)
            found = _search(nodes, gates + [(i, j)], target, care, full, left - 1, seen, budget)
            nodes.pop()
            if found is not None:
                return found
    return None
