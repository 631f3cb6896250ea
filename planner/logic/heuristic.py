"""Heuristic two-level minimisation past the exact range.

The expand / irredundant / reduce iteration of R. K. Brayton, G. D. Hachtel,
C. T. McMullen and A. L. Sangiovanni-Vincentelli, "Logic Minimization
Algorithms for VLSI Synthesis" (Kluwer, 1984), done on truth-table bitsets
instead of cube lists: every containment and intersection test is one
big-integer operation over the 2**n assignments.
"""

from __future__ import annotations

import time
from dataclasses import dataclass

from .cover import Cube
from .isop import isop_cubes
from .table import Space, TruthTable, iter_bits

#: Memory the heuristic may give its cubes' bitsets (each one a whole table of 2**n bits).
MEMORY_BUDGET_BYTES = 256 << 20
#: Most products a cover may have: beyond it a block is refused (BlockTooLarge).
MAX_COVER_CUBES = 200_000


@dataclass
class _Term:
    """A cube with its assignment bitset; ``prime`` when it came out of EXPAND unchanged since."""

    mask: int
    value: int
    bits: int
    prime: bool = False


@dataclass(frozen=True)
class HeuristicResult:
    """``essential``: essential primes found; ``cubes``: the rest of the cover."""

    cubes: tuple[Cube, ...]
    essential: tuple[Cube, ...]
    iterations: int


def _cost(terms: list[_Term]) -> tuple[int, int]:
    return sum(t.mask.bit_count() for t in terms), len(terms)


def _step(cost: tuple[int, int]) -> int:
    """Literals a pass must save to count as progress: one per thousand, at least one.

    Later passes save ever less; this keeps the effort bounded and deterministic.
    """
    return max(1, cost[0] // 1000)


def _expand(space: Space, terms: list[_Term], on: int, off: int) -> list[_Term]:
    """EXPAND: raise each cube to a prime implicant that stays off the off-set.

    Cubes are taken largest first; a cube whose on-set part is already inside
    the primes made so far is dropped.  Literals are removed greedily, each
    time the one whose removal brings in the most on-set assignments not yet
    covered (then the most on-set assignments, then the lowest input bit);
    a literal whose removal meets the off-set is never tried again for this
    cube, since the cube only grows.  Cost per cube: O(n * literals removed)
    big-integer operations.
    """
    order = sorted(terms, key=lambda t: (t.mask.bit_count(), t.mask, t.value))
    uncovered = on
    out: list[_Term] = []
    for t in order:
        if not t.bits & uncovered:
            continue
        if t.prime:  # no literal can be raised: expanding would only re-test them all
            out.append(t)
            uncovered ^= uncovered & t.bits
            continue
        mask, value, bits = t.mask, t.value, t.bits
        candidates = list(iter_bits(mask))
        while candidates:
            feasible = []
            for p in candidates:
                w = 1 << p
                mirror = bits >> w if value & w else bits << w
                if not mirror & off:
                    gain = mirror & uncovered
                    feasible.append((gain.bit_count() if gain else 0, p, mirror))
            if not feasible:
                break
            top = max(f[0] for f in feasible)
            tied = [f for f in feasible if f[0] == top]
            if len(tied) > 1:
                _, best, best_mirror = max(tied, key=lambda f: ((f[2] & on).bit_count(), -f[1]))
            else:
                _, best, best_mirror = tied[0]
            bit = 1 << best
            mask &= ~bit
            value &= ~bit
            bits |= best_mirror
            candidates = [f[1] for f in feasible if f[1] != best]
        out.append(_Term(mask, value, bits, prime=True))
        uncovered ^= uncovered & bits
    return out


def _suffix_unions(terms: list[_Term]) -> list[int]:
    """``u[i]`` = union of the bits of ``terms[i:]`` (``u[len(terms)] = 0``); one OR per term."""
    u = [0] * (len(terms) + 1)
    for i in range(len(terms) - 1, -1, -1):
        u[i] = u[i + 1] | terms[i].bits
    return u


def _irredundant(terms: list[_Term], on: int, dc: int, prefer: int | None = None) -> list[_Term]:
    """IRREDUNDANT: drop cubes covered by the others, most literals tried first.

    Sequential reverse-delete with suffix unions: when cube i is tried, the
    others are the kept cubes before it and all cubes after it, so the result
    is irredundant and the cost is O(number of cubes) big-integer operations.
    """
    if prefer is None:
        order = sorted(terms, key=lambda t: (-t.mask.bit_count(), t.mask, t.value))
    else:
        order = sorted(terms[:prefer], key=lambda t: (-t.mask.bit_count(), t.mask, t.value)) + terms[prefer:]
    suffix = _suffix_unions(order)
    kept_union = dc
    kept = []
    for i, t in enumerate(order):
        others = kept_union | suffix[i + 1]
        need = t.bits & on
        if need | others != others:
            kept.append(t)
            kept_union |= t.bits
    return kept


def _smallest_cube(space: Space, t: _Term, need: int) -> tuple[int, int, int]:
    """``(mask, value, bits)`` of the smallest cube inside ``t`` holding every
    assignment of ``need`` (a non-empty subset of ``t.bits``): each free input
    of ``t`` on which all of ``need`` agrees becomes a literal.
    Cost: at most two ANDs per free input.
    """
    mask, value, bits = t.mask, t.value, t.bits
    for p in iter_bits(((1 << space.n) - 1) ^ t.mask):
        if not need & space.zero[p]:
            mask |= 1 << p
            value |= 1 << p
            bits &= space.one[p]
        elif not need & space.one[p]:
            mask |= 1 << p
            bits &= space.zero[p]
    return mask, value, bits


def _reduce(space: Space, terms: list[_Term], on: int, dc: int) -> list[_Term]:
    """REDUCE: shrink each cube to the smallest cube holding the on-set part only it covers.

    Largest cubes first, each seeing the already-reduced cubes before it and
    the unreduced ones after it (suffix unions), so the cover stays a cover.
    Cost: O(number of cubes * n) big-integer operations.
    """
    order = sorted(terms, key=lambda t: (t.mask.bit_count(), t.mask, t.value))
    suffix = _suffix_unions(order)
    done_union = dc
    out = []
    for i, t in enumerate(order):
        others = done_union | suffix[i + 1]
        need = t.bits & on
        need ^= need & others
        if not need:
            continue
        mask, value, bits = _smallest_cube(space, t, need)
        out.append(t if mask == t.mask else _Term(mask, value, bits))
        done_union |= bits
    return out


def _last_gasp(space: Space, terms: list[_Term], on: int, dc: int, off: int) -> list[_Term]:
    """LAST_GASP: reduce every cube against all the others at once, expand the
    reduced cubes toward each other, and let IRREDUNDANT choose among old and
    new primes.  Cost: like one reduce / expand / irredundant pass.
    """
    k = len(terms)
    prefix = [0] * (k + 1)
    for i in range(k):
        prefix[i + 1] = prefix[i] | terms[i].bits
    suffix = _suffix_unions(terms)
    reduced = []
    for i, t in enumerate(terms):
        others = prefix[i] | suffix[i + 1] | dc
        need = t.bits & on
        need ^= need & others
        if not need:
            continue
        mask, value, _ = _smallest_cube(space, t, need)
        if mask != t.mask:
            reduced.append(_Term(mask, value, need))
    if len(reduced) < 2:
        return terms
    target = 0
    for r in reduced:
        target |= r.bits
    fresh = _expand(space, [_Term(r.mask, r.value, space.cube_bits(r.mask, r.value)) for r in reduced],
                    target, off)
    old = {(t.mask, t.value) for t in terms}
    fresh = [t for t in fresh if (t.mask, t.value) not in old]
    return _irredundant(terms + fresh, on, dc, prefer=len(terms))


def _is_essential(t: _Term, on: int, off_mirrors: list[int]) -> bool:
    """A prime is essential iff some on-set assignment in it has every neighbour
    across one of its literals in the off-set: then no other implicant reaches it.
    Cost: one AND per literal."""
    e = t.bits & on
    for p in iter_bits(t.mask):
        e &= off_mirrors[p]
        if not e:
            return False
    return True


def heuristic_cover(table: TruthTable, *, time_limit_s: float | None = None) -> HeuristicResult:
    """An irredundant prime cover of ``table.on`` avoiding ``table.off`` (not proven minimum).

    Memory stays within about :data:`MEMORY_BUDGET_BYTES`: when a bitset per on-set
    assignment would not fit, the start is Minato's irredundant cover
    (:func:`planner.logic.isop.isop_cubes`) instead of the assignments, and when a
    bitset per cube of that would not fit either, that cover is returned as it is
    (irredundant, not improved).  Past :data:`MAX_COVER_CUBES` products
    :class:`BlockTooLarge` is raised.

    Expand the on-set assignments to primes, make the cover irredundant, set
    the essential primes aside (their assignments become don't-cares), then
    repeat reduce / expand / irredundant while the cost (literals, then
    terms) falls; when a pass stops paying, try LAST_GASP once, as in
    Brayton et al. 1984.  A pass that saves fewer than one literal per
    thousand ends the search (see :func:`_step`), so the result does not
    depend on machine speed; ``time_limit_s`` can stop it sooner, keeping
    the best cover so far.  Cost: per pass O(cubes * n) big-integer
    operations of 2**n bits.

    >>> from .table import table_from_minterms
    >>> r = heuristic_cover(table_from_minterms(("a", "b", "c"), [3, 5, 6, 7]))
    >>> len(r.essential), len(r.cubes)   # majority: all three primes essential
    (3, 0)
    """
    start = time.monotonic()
    space = Space(table.n)
    on, dc, off = table.on, table.dc, table.off
    table_bytes = max(1, (1 << table.n) // 8)
    if on.bit_count() * table_bytes // 2 <= MEMORY_BUDGET_BYTES:
        all_inputs = (1 << table.n) - 1
        terms = [_Term(all_inputs, m, 1 << m) for m in iter_bits(on)]
    else:  # a bitset per minterm would not fit: start from an irredundant cover instead
        cubes = isop_cubes(table, MAX_COVER_CUBES)
        if 3 * len(cubes) * table_bytes > MEMORY_BUDGET_BYTES:  # nor a bitset per cube: keep it as it is
            return HeuristicResult(tuple(Cube(m, v) for m, v in cubes), (), 0)
        terms = [_Term(m, v, space.cube_bits(m, v)) for m, v in cubes]
    terms = _expand(space, terms, on, off)
    terms = _irredundant(terms, on, dc)
    off_mirrors = [space.flip(off, p) for p in range(table.n)]
    essential = [t for t in terms if _is_essential(t, on, off_mirrors)]
    ess_bits = 0
    for t in essential:
        ess_bits |= t.bits
    rest_on = on & ~ess_bits
    rest_dc = dc | ess_bits
    rest = [t for t in terms if t.bits & rest_on]
    rest = _irredundant(rest, rest_on, rest_dc)
    best, best_cost = rest, _cost(rest)
    iterations = 0
    while best and (time_limit_s is None or time.monotonic() - start < time_limit_s):
        iterations += 1
        trial = _reduce(space, best, rest_on, rest_dc)
        trial = _expand(space, trial, rest_on, off)
        trial = _irredundant(trial, rest_on, rest_dc)
        cost = _cost(trial)
        if cost < best_cost:
            progress = best_cost[0] - cost[0] >= _step(best_cost)
            best, best_cost = trial, cost
            if progress:
                continue
        trial = _last_gasp(space, best, rest_on, rest_dc, off)
        cost = _cost(trial)
        if cost >= best_cost:
            break
        progress = best_cost[0] - cost[0] >= _step(best_cost)
        best, best_cost = trial, cost
        if not progress:
            break
    return HeuristicResult(
        tuple(Cube(t.mask, t.value) for t in best),
        tuple(Cube(t.mask, t.value) for t in essential),
        iterations,
    )
