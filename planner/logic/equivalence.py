"""Equivalence checking: bit-parallel truth tables, or SAT above 20 inputs."""

from __future__ import annotations

from typing import TYPE_CHECKING, Iterable

from planner.formula import TRUE, Formula, as_formula, fold

from .table import Space, assignment, evaluate

if TYPE_CHECKING:  # sympy expressions are accepted and converted
    import sympy

EXHAUSTIVE_LIMIT = 20
"""Up to this many inputs equivalence is decided by full truth tables."""


def _names(names: Iterable[str] | None, *exprs: Formula) -> tuple[str, ...]:
    used: set[str] = set()
    for e in exprs:
        used |= e.names
    if names is None:
        return tuple(sorted(used))
    names = tuple(names)
    unknown = sorted(used - set(names))
    if unknown:
        raise ValueError(f"the expressions use {unknown}, which are not among the inputs {names}")
    return names


class _Tseitin:
    """Tseitin encoding (G. S. Tseitin, "On the complexity of derivation in
    propositional calculus", 1968) with structural hashing: one fresh variable
    per distinct connective, so the clause count is linear in the expression
    size and subexpressions that are the same on both sides of the miter get
    the same variable (as in and-inverter-graph equivalence checkers).  Literals
    are DIMACS-style integers; inputs are variables 1..n in name order.
    """

    def __init__(self, names: tuple[str, ...]) -> None:
        self.variables = len(names)
        self.index = {n: k + 1 for k, n in enumerate(names)}
        self.clauses: list[set[int]] = []
        self.gates: dict[tuple, int] = {}
        self.true = self._fresh()
        self.clauses.append({self.true})

    def _fresh(self) -> int:
        self.variables += 1
        return self.variables

    def encode(self, expr: Formula) -> int:
        """The literal equal to ``expr`` (a :func:`fold`: iterative, memo by node identity)."""
        return fold(expr, self.index.__getitem__, self.true, -self.true, self._gate)

    def _gate(self, op: str, lits: list[int]) -> int:
        """The literal of one not/and/or/xor node over its arguments' literals."""
        if op == "not":
            return -lits[0]
        if op == "and":
            return self._and(lits)
        if op == "or":
            return -self._and([-x for x in lits])
        return self._xor(lits)

    def _and(self, lits: list[int]) -> int:
        if -self.true in lits:
            return -self.true
        args = sorted({x for x in lits if x != self.true})
        if any(-x in args for x in args):
            return -self.true
        if not args:
            return self.true
        if len(args) == 1:
            return args[0]
        gate = ("and", *args)
        if gate not in self.gates:
            t = self.gates[gate] = self._fresh()
            for x in args:
                self.clauses.append({-t, x})
            self.clauses.append({t, *[-x for x in args]})
        return self.gates[gate]

    def _xor(self, lits: list[int]) -> int:
        parity = False
        odd: set[int] = set()
        for x in lits:
            if abs(x) == self.true:
                parity ^= x > 0
                continue
            parity ^= x < 0
            odd ^= {abs(x)}  # x ^ x = 0
        acc = None
        for x in sorted(odd):
            if acc is None:
                acc = x
                continue
            gate = ("xor", acc, x)
            if gate not in self.gates:
                t = self.gates[gate] = self._fresh()
                self.clauses += [{-t, acc, x}, {-t, -acc, -x}, {t, -acc, x}, {t, acc, -x}]
            acc = self.gates[gate]
        if acc is None:
            return self.true if parity else -self.true
        return -acc if parity else acc


#: SAT solvers :func:`counterexample` can use above the exhaustive limit: CaDiCaL through
#: python-sat (the default), or sympy's DPLL (kept for comparison, benchmarks/prove.py).
SAT_SOLVERS = ("cadical", "sympy-dpll")


def _model_cadical(clauses: list[set[int]], variables: int) -> dict[int, bool] | None:
    """A satisfying assignment of the CNF ``clauses`` by CaDiCaL 1.5.3 (A. Biere et al.;
    python-sat, A. Ignatiev, A. Morgado and J. Marques-Silva, SAT 2018), or None."""
    from pysat.solvers import Solver

    with Solver(name="cadical153", bootstrap_with=[sorted(c) for c in clauses]) as solver:
        if not solver.solve():
            return None
        return {abs(v): v > 0 for v in solver.get_model()}


def _model_sympy_dpll(clauses: list[set[int]], variables: int) -> dict[int, bool] | None:
    """The same by sympy's ``satisfiable`` (DPLL with clause learning, pure Python)."""
    import sympy
    from sympy.assumptions.cnf import EncodedCNF
    from sympy.logic.inference import satisfiable

    symbols = [sympy.Dummy(f"v{k}") for k in range(1, variables + 1)]
    model = satisfiable(EncodedCNF(clauses, {s: k + 1 for k, s in enumerate(symbols)}), algorithm="dpll2")
    if model is False:
        return None
    by_symbol = {s: bool(v) for s, v in model.items()}
    return {k + 1: by_symbol.get(s, False) for k, s in enumerate(symbols)}


def counterexample(a: Formula | sympy.Basic, b: Formula | sympy.Basic, names: Iterable[str] | None = None,
                   care: Formula | sympy.Basic | None = None, *,
                   sat_solver: str = "cadical") -> dict[str, bool] | None:
    """An assignment where ``care`` holds (None: everywhere) and ``a`` differs from ``b``, or None.

    The expressions are formulas or sympy expressions (converted).

    ``names`` defaults to the sorted symbol names of the three expressions.
    Up to 20 inputs: exhaustive, one big-integer XOR over all 2**n
    assignments (the lowest-numbered difference is returned).  Above: the
    Tseitin-encoded miter ``care & (a ^ b)`` goes to a SAT solver
    (``sat_solver``, one of :data:`SAT_SOLVERS`: CaDiCaL by default), and the
    model found is checked by evaluation before it is returned.

    >>> import sympy
    >>> x, y = sympy.symbols("x y")
    >>> counterexample(x | y, x ^ y)
    {'x': True, 'y': True}
    >>> counterexample(x | y, x ^ y, care=~(x & y)) is None
    True
    """
    if sat_solver not in SAT_SOLVERS:
        raise ValueError(f"unknown SAT solver {sat_solver!r}; expected one of {SAT_SOLVERS}")
    a, b, care = as_formula(a), as_formula(b), TRUE if care is None else as_formula(care)
    names = _names(names, a, b, care)
    n = len(names)
    if n <= EXHAUSTIVE_LIMIT:
        space = Space(n)
        variables = {name: space.one[n - 1 - k] for k, name in enumerate(names)}
        diff = (evaluate(a, variables, space.full) ^ evaluate(b, variables, space.full)) \
            & evaluate(care, variables, space.full)
        if not diff:
            return None
        return assignment(names, (diff & -diff).bit_length() - 1)
    enc = _Tseitin(names)
    la, lb, lc = enc.encode(a), enc.encode(b), enc.encode(care)
    enc.clauses += [{lc}, {la, lb}, {-la, -lb}]
    solve = _model_cadical if sat_solver == "cadical" else _model_sympy_dpll
    model = solve(enc.clauses, enc.variables)
    if model is None:
        return None
    values = {name: model.get(k + 1, False) for k, name in enumerate(names)}
    point = {name: int(v) for name, v in values.items()}
    if not (evaluate(a, point, 1) ^ evaluate(b, point, 1)) & evaluate(care, point, 1):
        raise AssertionError("internal error: SAT model is not a counterexample")
    return values


def equivalent(a: Formula | sympy.Basic, b: Formula | sympy.Basic, names: Iterable[str] | None = None,
               care: Formula | sympy.Basic | None = None, *, sat_solver: str = "cadical") -> bool:
    """True when ``a`` and ``b`` agree wherever ``care`` holds (see :func:`counterexample`).

    >>> import sympy
    >>> x, y = sympy.symbols("x y")
    >>> equivalent(~(x & y), ~x | ~y)
    True
    """
    return counterexample(a, b, names, care, sat_solver=sat_solver) is None
