"""An irredundant sum of products straight from a truth table, in bounded memory."""

from __future__ import annotations

from planner.errors import BadInput

from .table import TruthTable


class BlockTooLarge(BadInput, ValueError):
    """A function whose cover would exceed the minimiser's limits of work or memory."""


def isop_cubes(table: TruthTable, max_cubes: int) -> list[tuple[int, int]]:
    """Cubes ``(mask, value)`` of an irredundant sum of products of ``table`` on its care set.

    The interval method of S. Minato ("Fast generation of prime-irredundant
    covers from binary decision diagrams", IEICE Trans. Fundamentals E76-A, 1993),
    after E. Morreale (1970), done on truth-table slices: to cover ``L`` inside
    ``U`` (here the on-set inside on | dc), split on the first input, cover what
    only the 0-half can cover, what only the 1-half can cover, and then the rest
    with cubes free of that input.  Memory is the table plus one slice per level
    (never a bitset per minterm or per cube); results are memoised per (level,
    L, U) on slices of up to 2**8 assignments, which repeat.  Raises
    :class:`BlockTooLarge` past ``max_cubes`` cubes.

    >>> from .table import table_from_minterms
    >>> sorted(isop_cubes(table_from_minterms(("a", "b", "c"), [3, 5, 6, 7]), 10))  # majority
    [(3, 3), (5, 5), (6, 6)]
    """
    n = table.n
    cubes: list[tuple[int, int]] = []
    memo: dict[tuple[int, int, int], tuple[tuple[tuple[int, int], ...], int]] = {}

    def cover(lower: int, upper: int, depth: int) -> tuple[tuple[tuple[int, int], ...], int]:
        """Cubes over the inputs from ``depth`` on, and the assignments they cover, for [lower, upper]."""
        width = 1 << (n - depth)
        if not lower:
            return (), 0
        if upper == (1 << width) - 1:
            return ((0, 0),), upper
        key = (depth, lower, upper)
        if width <= 256 and key in memo:
            return memo[key]
        half = width >> 1
        low_mask = (1 << half) - 1
        l0, l1, u0, u1 = lower & low_mask, lower >> half, upper & low_mask, upper >> half
        bit = 1 << (n - 1 - depth)
        c0, r0 = cover(l0 & ~u1, u0, depth + 1)
        c1, r1 = cover(l1 & ~u0, u1, depth + 1)
        cs, rs = cover((l0 & ~r0) | (l1 & ~r1), u0 & u1, depth + 1)
        result = (tuple((m | bit, v) for m, v in c0) + tuple((m | bit, v | bit) for m, v in c1) + cs,
                  (r0 | rs) | ((r1 | rs) << half))
        if len(result[0]) > max_cubes:
            raise BlockTooLarge(f"its sum of products needs more than {max_cubes} products")
        if width <= 256:
            memo[key] = result
        return result

    found, covered = cover(table.on, table.on | table.dc, 0)
    cubes.extend(found)
    if table.on & ~covered or covered & table.off:
        raise AssertionError("internal error: the irredundant cover disagrees with its table")
    return cubes
