"""Cubes (product terms) and covers (sums of products) over named inputs."""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

from .table import Space

if TYPE_CHECKING:  # sympy is loaded only where an expression is built or read
    import sympy


@dataclass(frozen=True, order=True)
class Cube:
    """A product term: assignment ``x`` is inside when ``x & mask == value``.

    ``mask`` bit ``p`` set means input ``names[n - 1 - p]`` appears as a literal,
    positive when ``value`` bit ``p`` is set.  ``Cube(0, 0)`` is the constant 1.

    >>> Cube(0b11, 0b10).literals
    2
    """

    mask: int
    value: int

    def __post_init__(self) -> None:
        if self.mask < 0 or self.value & ~self.mask:
            raise ValueError(f"cube value {self.value:#b} sets bits outside its mask {self.mask:#b}")

    @property
    def literals(self) -> int:
        return self.mask.bit_count()

    def sort_key(self, n: int) -> tuple[int, ...]:
        """Per input in name order: 0 positive literal, 1 negative literal, 2 absent."""
        key = []
        for p in range(n - 1, -1, -1):
            bit = 1 << p
            key.append(2 if not self.mask & bit else (0 if self.value & bit else 1))
        return tuple(key)


@dataclass(frozen=True)
class Cover:
    """A sum of products over ``names``; ``exact`` is True only when proven minimum.

    A cover not proven minimum may carry ``literal_bound``, a proven lower bound on
    the literals of every cover (an exact cover stopped by its budget does).

    Cubes are kept in a canonical order (see :meth:`Cube.sort_key`), so equal
    covers print identically.

    >>> c = Cover(("a", "b"), (Cube(0b11, 0b01), Cube(0b11, 0b10)), exact=True)
    >>> c.text(), c.literals, c.terms
    ('a & ~b | ~a & b', 4, 2)
    """

    names: tuple[str, ...]
    cubes: tuple[Cube, ...]
    exact: bool
    #: A proven lower bound on the literals of any cover of the function (None: none known).
    literal_bound: int | None = None

    def __post_init__(self) -> None:
        n = len(self.names)
        object.__setattr__(self, "names", tuple(self.names))
        limit = (1 << n) - 1
        for cube in self.cubes:
            if cube.mask & ~limit:
                raise ValueError(f"cube mask {cube.mask:#b} names inputs beyond the {n} of this cover")
        object.__setattr__(self, "cubes", tuple(sorted(set(self.cubes), key=lambda c: c.sort_key(n))))

    @property
    def literals(self) -> int:
        return sum(c.literals for c in self.cubes)

    @property
    def terms(self) -> int:
        return len(self.cubes)

    @property
    def gap(self) -> float | None:
        """(literals - literal_bound) / literals: 0 when proven minimum, None when no bound is known."""
        if self.exact:
            return 0.0
        if self.literal_bound is None:
            return None
        return max(0, self.literals - self.literal_bound) / max(self.literals, 1)

    def bits(self) -> int:
        """Truth table (bitset, as :class:`TruthTable`) of the cover."""
        space = Space(len(self.names))
        out = 0
        for c in self.cubes:
            out |= space.cube_bits(c.mask, c.value)
        return out

    def _literals_of(self, cube: Cube) -> list[tuple[str, bool]]:
        n = len(self.names)
        return [(name, bool(cube.value >> (n - 1 - k) & 1))
                for k, name in enumerate(self.names) if cube.mask >> (n - 1 - k) & 1]

    def to_expr(self) -> sympy.Boolean:
        """The cover as a sympy expression (Or of And of literals)."""
        import sympy

        terms = []
        for cube in self.cubes:
            lits = [sympy.Symbol(name) if positive else sympy.Not(sympy.Symbol(name))
                    for name, positive in self._literals_of(cube)]
            terms.append(sympy.And(*lits))
        return sympy.Or(*terms)

    def text(self) -> str:
        """Design-file syntax: ``a & ~b | ~a & b``; "0" when empty, "1" for the constant-1 cube."""
        if not self.cubes:
            return "0"
        products = []
        for cube in self.cubes:
            lits = [name if positive else "~" + name for name, positive in self._literals_of(cube)]
            products.append(" & ".join(lits) if lits else "1")
        return " | ".join(products)
