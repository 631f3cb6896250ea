"""Truth tables as Python integers used as bitsets.

Bit ``i`` of a table is the input assignment ``i``, where ``names[0]`` is the
most significant bit of ``i``.  With ``n`` inputs, input ``names[k]`` is bit
position ``p = n - 1 - k`` of the assignment; :class:`Cube` masks use the same
positions.  Whole tables are combined with single integer operations (``&``,
``|``, ``^``), 2**n assignments at a time.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Iterable, Mapping

from planner.formula import Formula, as_formula, fold

if TYPE_CHECKING:  # sympy expressions are accepted and converted; tables never need sympy itself
    import sympy

MAX_TABLE_INPUTS = 24
"""Largest input count for which a full table is built (2**24 bits = 2 MiB)."""


@dataclass(frozen=True)
class TruthTable:
    """A single-output function with don't-cares.

    ``on``: assignments where the function is 1; ``dc``: assignments where its
    value does not matter; every other assignment is in the off-set.

    >>> t = table_from_minterms(("a", "b"), [1, 2])
    >>> bin(t.on), bin(t.off), t.care == t.full
    ('0b110', '0b1001', True)
    """

    names: tuple[str, ...]
    on: int
    dc: int = 0

    def __post_init__(self) -> None:
        names = tuple(self.names)
        object.__setattr__(self, "names", names)
        if len(set(names)) != len(names):
            raise ValueError(f"input names repeat: {names}")
        if len(names) > MAX_TABLE_INPUTS:
            raise ValueError(f"{len(names)} inputs: a truth table holds at most {MAX_TABLE_INPUTS}")
        full = (1 << (1 << len(names))) - 1
        if self.on < 0 or self.dc < 0 or (self.on | self.dc) & ~full:
            raise ValueError("on/dc bits lie outside the 2**n assignments")
        if self.on & self.dc:
            raise ValueError("an assignment is in both the on-set and the don't-care set")

    @property
    def n(self) -> int:
        return len(self.names)

    @property
    def full(self) -> int:
        """All 2**n assignments."""
        return (1 << (1 << len(self.names))) - 1

    @property
    def off(self) -> int:
        return self.full ^ (self.on | self.dc)

    @property
    def care(self) -> int:
        return self.full ^ self.dc

    def complement(self) -> "TruthTable":
        """The table of ~f: same don't-cares, on- and off-sets exchanged."""
        return TruthTable(self.names, self.off, self.dc)


def variable_bits(n: int, position: int) -> int:
    """Table of the input at bit ``position`` of the assignment, over ``n`` inputs.

    Cost: log2(2**n / 2**(p+1)) shift-and-or steps.  The pattern is 2**p
    zeros then 2**p ones, repeated; each step doubles the repeated part.

    >>> bin(variable_bits(2, 1)), bin(variable_bits(2, 0))
    ('0b1100', '0b1010')
    """
    width = 1 << position
    pattern = ((1 << width) - 1) << width
    length = width << 1
    size = 1 << n
    while length < size:
        pattern |= pattern << length
        length <<= 1
    return pattern


class Space:
    """Literal tables of one input count, built once per computation.

    ``one[p]`` / ``zero[p]``: assignments where bit ``p`` is 1 / 0.
    """

    __slots__ = ("n", "full", "one", "zero")

    def __init__(self, n: int) -> None:
        self.n = n
        self.full = (1 << (1 << n)) - 1
        self.one = tuple(variable_bits(n, p) for p in range(n))
        self.zero = tuple(self.full ^ b for b in self.one)

    def cube_bits(self, mask: int, value: int) -> int:
        """Assignments inside the cube (``x & mask == value``); ``len(mask)`` ANDs."""
        bits = self.full
        m = mask
        while m:
            low = m & -m
            p = low.bit_length() - 1
            bits &= self.one[p] if value & low else self.zero[p]
            m ^= low
        return bits

    def flip(self, bits: int, p: int) -> int:
        """``bits`` with input ``p`` negated in every assignment (mirror across ``p``)."""
        w = 1 << p
        return ((bits >> w) & self.zero[p]) | ((bits << w) & self.one[p])


def iter_bits(x: int) -> Iterable[int]:
    """Positions of the set bits of ``x``, lowest first."""
    while x:
        low = x & -x
        yield low.bit_length() - 1
        x ^= low


def evaluate(expr: Formula | sympy.Basic, variables: Mapping[str, int], full: int) -> int:
    """Bit-parallel value of ``expr`` (a formula, or a sympy expression): each name maps to its table.

    A :func:`planner.formula.fold`, so shared subexpressions are evaluated once
    and nesting depth is unlimited.  Cost: one big-integer operation per argument
    of every distinct node.

    >>> from planner.formula import symbol
    >>> bin(evaluate(symbol("a") & ~symbol("b"), {"a": 0b1100, "b": 0b1010}, 0b1111))
    '0b100'
    """
    def at_name(name: str) -> int:
        if name not in variables:
            raise ValueError(f"the expression uses {name!r}, which is not among the inputs "
                             f"{tuple(variables)}")
        return variables[name]

    def combine(op: str, values: list[int]) -> int:
        if op == "and":
            v = full
            for x in values:
                v &= x
            return v
        if op == "or":
            v = 0
            for x in values:
                v |= x
            return v
        if op == "xor":
            v = 0
            for x in values:
                v ^= x
            return v
        return full ^ values[0]  # not

    return fold(as_formula(expr), at_name, full, 0, combine)


def symbol_names(expr: Formula | sympy.Basic) -> frozenset[str]:
    """Names used in ``expr`` (a formula, or a sympy expression).

    >>> from planner.formula import symbol
    >>> sorted(symbol_names(symbol("b") | ~symbol("a")))
    ['a', 'b']
    """
    return as_formula(expr).names


def table_from_expr(expr: Formula | sympy.Basic, names: Iterable[str],
                    dont_care: Formula | sympy.Basic | None = None) -> TruthTable:
    """Truth table of ``expr`` over ``names``; where ``dont_care`` holds (None: nowhere) the value is free.

    Cost: one big-integer operation per expression node (see :func:`evaluate`).

    >>> import sympy
    >>> a, b = sympy.symbols("a b")
    >>> t = table_from_expr(a ^ b, ("a", "b"), dont_care=a & b)
    >>> bin(t.on), bin(t.dc)
    ('0b110', '0b1000')
    """
    names = tuple(names)
    space = Space(len(names))
    variables = {name: space.one[len(names) - 1 - k] for k, name in enumerate(names)}
    f = evaluate(expr, variables, space.full)
    dc = 0 if dont_care is None else evaluate(dont_care, variables, space.full)
    return TruthTable(names, f & (space.full ^ dc), dc)


def table_from_minterms(names: Iterable[str], minterms: Iterable[int],
                        dont_care: Iterable[int] = ()) -> TruthTable:
    """Truth table from on-set and don't-care assignment numbers.

    >>> table_from_minterms(("a", "b", "c"), [0, 7], dont_care=[3]).dc
    8
    """
    names = tuple(names)
    size = 1 << len(names)
    on = dc = 0
    for m in minterms:
        if not 0 <= m < size:
            raise ValueError(f"minterm {m} is outside 0..{size - 1} for {len(names)} inputs")
        on |= 1 << m
    for m in dont_care:
        if not 0 <= m < size:
            raise ValueError(f"don't-care {m} is outside 0..{size - 1} for {len(names)} inputs")
        dc |= 1 << m
    if on & dc:
        raise ValueError(f"assignments listed as both on and don't-care: {list(iter_bits(on & dc))}")
    return TruthTable(names, on, dc)


def reindex(table: TruthTable, names: Iterable[str]) -> TruthTable:
    """``table`` over other inputs ``names``: any order, and inputs it does not use added.

    Shannon expansion on ``table.names[0]``, ``[1]``, ...: each distinct
    sub-table (a slice of the bitset) becomes ``x & high | ~x & low`` over the
    new inputs, memoised, so the cost is three big-integer operations per
    distinct sub-function (at most about 2**k / k + 2**(2**j) per level) rather
    than one per minterm.

    >>> t = reindex(table_from_minterms(("b", "a"), [1]), ("a", "b", "c"))  # ~b & a
    >>> sorted(iter_bits(t.on))
    [4, 5]
    """
    names = tuple(names)
    missing = sorted(set(table.names) - set(names))
    if missing:
        raise ValueError(f"the table uses {missing}, which are not among {names}")
    space = Space(len(names))
    position = {name: len(names) - 1 - k for k, name in enumerate(names)}
    memo: dict[tuple[int, int], int] = {}

    def lift(bits: int, depth: int) -> int:
        width = 1 << (table.n - depth)
        if bits == 0:
            return 0
        if bits == (1 << width) - 1:
            return space.full
        key = (depth, bits)
        if key not in memo:
            half = width >> 1
            p = position[table.names[depth]]
            high = lift(bits >> half, depth + 1)
            low = lift(bits & ((1 << half) - 1), depth + 1)
            memo[key] = (space.one[p] & high) | (space.zero[p] & low)
        return memo[key]

    return TruthTable(names, lift(table.on, 0), lift(table.dc, 0))


def assignment(names: tuple[str, ...], index: int) -> dict[str, bool]:
    """The input values of assignment number ``index`` (``names[0]`` most significant)."""
    n = len(names)
    return {name: bool(index >> (n - 1 - k) & 1) for k, name in enumerate(names)}
