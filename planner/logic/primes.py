"""Prime implicants by Quine-McCluskey, done bit-parallel on truth tables."""

from __future__ import annotations

from .cover import Cube
from .table import Space, TruthTable, iter_bits


def prime_implicants(table: TruthTable, *, useful_only: bool = False) -> tuple[Cube, ...]:
    """All prime implicants of ``on | dc`` (with ``useful_only``: those touching the on-set).

    Quine-McCluskey's merging (W. V. Quine, "The problem of simplifying truth
    functions", Amer. Math. Monthly 59, 1952; E. J. McCluskey, "Minimization of
    Boolean functions", Bell Syst. Tech. J. 35, 1956), with one big-integer
    operation doing every merge of a column at once.  For each set ``S`` of
    free inputs, ``A[S]`` has bit ``x`` (``x`` zero on ``S``) when the cube
    with free inputs ``S`` through ``x`` lies inside ``on | dc``:
    ``A[S] = A[S-j] & (A[S-j] >> 2**j) & zero[j]``.  A cube is prime when no
    ``A[S+j]`` contains it.  Cost: O(3**n) bit operations, done as
    O(n * 2**n) integer operations on 2**n-bit integers; sets ``S`` with an
    empty ``A[S-j]`` are skipped.

    >>> from .table import table_from_minterms
    >>> t = table_from_minterms(("a", "b", "c"), [0, 1, 2, 5, 6, 7])
    >>> len(prime_implicants(t))
    6
    """
    n = table.n
    space = Space(n)
    cover_set = table.on | table.dc
    if not cover_set:
        return ()
    implicants: dict[int, int] = {0: cover_set}
    for free in range(1, 1 << n):
        low = free & -free
        below = implicants.get(free ^ low)
        if not below:
            continue
        p = low.bit_length() - 1
        merged = below & (below >> (1 << p)) & space.zero[p]
        if merged:
            implicants[free] = merged
    all_inputs = (1 << n) - 1
    primes = []
    for free in sorted(implicants):
        reps = implicants[free]
        covered = 0
        for p in range(n):
            bit = 1 << p
            if free & bit:
                continue
            bigger = implicants.get(free | bit)
            if bigger:
                covered |= bigger | (bigger << (1 << p))
        reps &= ~covered
        mask = all_inputs ^ free
        for x in iter_bits(reps):
            if useful_only and not table.on & space.cube_bits(mask, x):
                continue
            primes.append(Cube(mask, x))
    return tuple(sorted(primes, key=lambda c: c.sort_key(n)))
