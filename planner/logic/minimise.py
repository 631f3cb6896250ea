"""Two-level minimisation of a function and of its complement."""

from __future__ import annotations

import time
from dataclasses import dataclass
from typing import TYPE_CHECKING, Iterable

from planner.formula import FALSE, Formula

from .cover import Cover, Cube
from .exact import DEFAULT_COVER_BUDGET_S, minimum_cover
from .heuristic import heuristic_cover
from .primes import prime_implicants
from .table import TruthTable, symbol_names, table_from_expr

if TYPE_CHECKING:  # sympy expressions are accepted and converted
    import sympy


def _check(table: TruthTable, cover: Cover) -> Cover:
    """Verify by truth table that ``cover`` is 1 on the on-set and 0 on the off-set."""
    bits = cover.bits()
    if table.on & ~bits or bits & table.off:
        raise AssertionError(f"internal error: cover {cover.text()!r} disagrees with its truth table")
    return cover


def minimise(table: TruthTable, *, exact_limit: int = 10, time_limit_s: float | None = None,
             cover_budget_s: float | None = DEFAULT_COVER_BUDGET_S) -> Cover:
    """Minimum sum of products of ``table`` on its care set: fewest literals, then fewest terms.

    Up to ``exact_limit`` inputs: every prime implicant (:func:`prime_implicants`),
    then an exact minimum cover (:func:`minimum_cover`: essentials, dominance,
    then a 0-1 integer program for CBC, within ``cover_budget_s`` seconds of the start
    of this call, or ``time_limit_s`` if smaller); ``exact`` is True when CBC proved the optimum.
    Past the budget the cover is the better of the budget-stopped one and the
    heuristic's, with ``literal_bound`` (and so ``gap``) from the LP relaxation.
    Above the limit: the
    expand / irredundant / reduce heuristic of Brayton et al. 1984
    (:func:`heuristic_cover`); ``exact`` is then True only if every cube of
    the result is an essential prime, which makes the cover the unique
    minimum.  The result is always checked against the truth table.

    >>> from .table import table_from_minterms
    >>> minimise(table_from_minterms(("a", "b"), [1, 2])).text()
    'a & ~b | ~a & b'
    """
    names = table.names
    if not table.on:
        return Cover(names, (), exact=True)
    if not table.off:
        return Cover(names, (Cube(0, 0),), exact=True)
    if table.n <= exact_limit:
        entered = time.perf_counter()
        primes = prime_implicants(table, useful_only=True)
        budget = cover_budget_s if time_limit_s is None else min(time_limit_s, cover_budget_s or time_limit_s)
        if budget is not None:  # the budget counts from here: the primes' time is spent from it
            budget -= time.perf_counter() - entered
        solution = minimum_cover(table, primes, budget_s=budget)
        cover = Cover(names, solution.cubes, solution.proven, solution.literal_bound)
        if not solution.proven:
            result = heuristic_cover(table)
            other = Cover(names, result.cubes + result.essential, False, solution.literal_bound)
            cover = min((cover, other), key=lambda c: (c.literals, c.terms))
        return _check(table, cover)
    result = heuristic_cover(table, time_limit_s=time_limit_s)
    return _check(table, Cover(names, result.cubes + result.essential, exact=not result.cubes))


def minimise_complement(table: TruthTable, *, exact_limit: int = 10, time_limit_s: float | None = None,
                        cover_budget_s: float | None = DEFAULT_COVER_BUDGET_S) -> Cover:
    """Minimum sum of products of ``~f`` on the care set (see :func:`minimise`).

    >>> from .table import table_from_minterms
    >>> minimise_complement(table_from_minterms(("a", "b"), [0, 1, 2])).text()
    'a & b'
    """
    return minimise(table.complement(), exact_limit=exact_limit, time_limit_s=time_limit_s,
                    cover_budget_s=cover_budget_s)


@dataclass(frozen=True)
class Forms:
    """Both polarities of a function: ``f = sop`` and ``f = ~(inverted)``.

    ``inverted`` is the minimum sum of products of ``~f``; a single NOT (one
    inverting stage) turns it into ``f``.
    """

    sop: Cover
    inverted: Cover

    @property
    def exact(self) -> bool:
        """True when both covers are proven minimum."""
        return self.sop.exact and self.inverted.exact

    @property
    def sop_text(self) -> str:
        return self.sop.text()

    @property
    def inverted_text(self) -> str:
        """``~( ... )`` around the complement's SOP; "1" / "0" for constant functions."""
        if not self.inverted.cubes:
            return "1"
        if any(c.mask == 0 for c in self.inverted.cubes):
            return "0"
        return f"~({self.inverted.text()})"


def forms(table: TruthTable, *, exact_limit: int = 10, time_limit_s: float | None = None,
          cover_budget_s: float | None = DEFAULT_COVER_BUDGET_S) -> Forms:
    """Minimised SOP of f and of ~f (see :func:`minimise`).

    >>> from .table import table_from_minterms
    >>> fm = forms(table_from_minterms(("a", "b"), [0, 1, 2]))
    >>> fm.sop_text, fm.inverted_text
    ('~a | ~b', '~(a & b)')
    """
    limits = dict(exact_limit=exact_limit, time_limit_s=time_limit_s, cover_budget_s=cover_budget_s)
    return Forms(minimise(table, **limits), minimise_complement(table, **limits))


def used_inputs(order: Iterable[str], *exprs: Formula | sympy.Basic) -> tuple[str, ...]:
    """The names of ``order`` that occur in any of ``exprs``, in ``order``'s order.

    Raises ValueError if an expression uses a name that is not in ``order``.

    >>> import sympy
    >>> a, b, c = sympy.symbols("a b c")
    >>> used_inputs(("c", "b", "a"), a & c)
    ('c', 'a')
    """
    order = tuple(order)
    used: set[str] = set()
    for e in exprs:
        used |= symbol_names(e)
    unknown = sorted(used - set(order))
    if unknown:
        raise ValueError(f"the expression uses {unknown}, which are not among the inputs {order}")
    return tuple(name for name in order if name in used)


def expr_forms(expr: Formula | sympy.Basic, order: Iterable[str], dont_care: Formula | sympy.Basic | None = None, *,
               exact_limit: int = 10, time_limit_s: float | None = None) -> Forms:
    """:func:`forms` of ``expr`` over the inputs it (or ``dont_care``; None: none) uses, in ``order``.

    >>> import sympy
    >>> a, b, c = sympy.symbols("a b c")
    >>> expr_forms(~(a & b) & ~(a & c), ("a", "b", "c")).inverted_text
    '~(a & b | a & c)'
    """
    if dont_care is None:
        dont_care = FALSE
    names = used_inputs(order, expr, dont_care)
    table = table_from_expr(expr, names, dont_care)
    return forms(table, exact_limit=exact_limit, time_limit_s=time_limit_s)
