"""Boolean formulas: the expression type that ``spec`` parses and ``logic`` and ``stages`` read.

A :class:`Formula` is a name, a constant, or a NOT, AND, OR or XOR of formulas.
The constructors keep every formula in one canonical form, the one sympy's
``Not``, ``And``, ``Or`` and ``Xor`` give symbols and Boolean constants:
nested ANDs (ORs, XORs) flattened into one, repeated arguments merged (XOR:
cancelled in pairs), constants absorbed, ``~~x`` is ``x``, and ``x ^ 1`` is
``~x``. So a formula names the same structure sympy would build, without
importing sympy (about 0.3 s, which a warm plan need not pay); :func:`to_sympy`
and :func:`from_sympy` convert where sympy's algebra or order is wanted.

Arguments of AND, OR and XOR are held sorted by their text, so the canonical
text (design-file syntax, parentheses only where the precedence
not > and > xor > or needs them) describes a formula exactly and is its
identity: two formulas are equal when their texts are.

>>> a, b = symbol("a"), symbol("b")
>>> a & ~b | b & ~a
Formula('a & ~b | b & ~a')
>>> (a ^ b ^ a, a & TRUE, ~~a, a ^ TRUE)
(Formula('b'), Formula('a'), Formula('a'), Formula('~a'))
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property
from typing import TYPE_CHECKING, Callable, Iterable, Mapping, TypeVar

if TYPE_CHECKING:  # sympy is loaded only by the two conversions
    import sympy

T = TypeVar("T")

# Binding strength in the design syntax: not > and > xor > or.
_PRECEDENCE = {"or": 1, "xor": 2, "and": 3, "not": 4, "name": 5, "true": 5, "false": 5}
_SEPARATOR = {"and": " & ", "xor": " ^ ", "or": " | "}


@dataclass(frozen=True)
class Formula:
    """One node of a canonical Boolean formula; build it with the module's constructors.

    ``op`` is "name", "true", "false", "not", "and", "or" or "xor"; ``args`` the
    operands (sorted by text); ``name`` the name of a "name" node. ``text`` is the
    canonical design-file text and the formula's identity.
    """

    text: str
    op: str = field(compare=False)
    args: tuple[Formula, ...] = field(default=(), compare=False, repr=False)
    name: str = field(default="", compare=False, repr=False)

    def __repr__(self) -> str:
        return f"Formula({self.text!r})"

    def __str__(self) -> str:
        return self.text

    @cached_property
    def names(self) -> frozenset[str]:
        """The names the formula uses.

        >>> sorted((symbol("b") | ~symbol("a")).names)
        ['a', 'b']
        """
        return fold(self, lambda name: frozenset((name,)), frozenset(), frozenset(),
                    lambda op, values: frozenset().union(*values))

    def _sympy_(self) -> sympy.Boolean:
        """sympy's conversion protocol: ``sympy.sympify`` and sympy's functions take a formula."""
        return to_sympy(self)

    def __invert__(self) -> Formula:
        return negate(self)

    # With any other operand the operator is left to it (a sympy expression converts the formula).
    def __and__(self, other):
        return conjoin(self, other) if isinstance(other, Formula) else NotImplemented

    def __or__(self, other):
        return disjoin(self, other) if isinstance(other, Formula) else NotImplemented

    def __xor__(self, other):
        return exclusive(self, other) if isinstance(other, Formula) else NotImplemented


TRUE = Formula("1", "true")
FALSE = Formula("0", "false")


def symbol(name: str) -> Formula:
    """The formula of one name: an identifier, so that no name reads as a formula's text.

    >>> symbol("a & b")
    Traceback (most recent call last):
    ...
    ValueError: a formula's names are identifiers, not 'a & b'
    """
    if not name.isidentifier():
        raise ValueError(f"a formula's names are identifiers, not {name!r}")
    return Formula(name, "name", name=name)


def constant(value: bool) -> Formula:
    """:data:`TRUE` or :data:`FALSE`."""
    return TRUE if value else FALSE


def _node(op: str, args: Iterable[Formula]) -> Formula:
    """An AND, OR, XOR or NOT node over canonical, already-simplified ``args``."""
    ordered = tuple(sorted(args, key=lambda f: f.text))
    strength = _PRECEDENCE[op]
    parts = [f.text if _PRECEDENCE[f.op] > strength else f"({f.text})" for f in ordered]
    text = "~" + parts[0] if op == "not" else _SEPARATOR[op].join(parts)
    return Formula(text, op, ordered)


def negate(f: Formula) -> Formula:
    """NOT ``f``: a constant flips, a double negation cancels."""
    if f.op == "true":
        return FALSE
    if f.op == "false":
        return TRUE
    if f.op == "not":
        return f.args[0]
    return _node("not", (f,))


def _lattice(op: str, zero: Formula, identity: Formula, args: Iterable[Formula]) -> Formula:
    """AND (zero FALSE, identity TRUE) or OR (zero TRUE, identity FALSE) of ``args``, as sympy forms it."""
    kept: dict[str, Formula] = {}
    for arg in args:
        if arg == zero:
            return zero
        if arg == identity:
            continue
        for part in arg.args if arg.op == op else (arg,):
            kept[part.text] = part
    if not kept:
        return identity
    if len(kept) == 1:
        return next(iter(kept.values()))
    return _node(op, kept.values())


def conjoin(*args: Formula) -> Formula:
    """AND of ``args`` (none: TRUE)."""
    return _lattice("and", FALSE, TRUE, args)


def disjoin(*args: Formula) -> Formula:
    """OR of ``args`` (none: FALSE)."""
    return _lattice("or", TRUE, FALSE, args)


def exclusive(*args: Formula) -> Formula:
    """XOR of ``args`` (none: FALSE): pairs cancel, nested XORs merge, a TRUE negates the rest."""
    odd: dict[str, Formula] = {}
    for arg in args:
        if arg.op == "false":
            continue
        for part in arg.args if arg.op == "xor" else (arg,):
            if part.text in odd:
                del odd[part.text]
            else:
                odd[part.text] = part
    if not odd:
        return FALSE
    if len(odd) == 1:
        return next(iter(odd.values()))
    if TRUE.text in odd:
        del odd[TRUE.text]
        return negate(exclusive(*odd.values()))
    return _node("xor", odd.values())


_COMBINE = {"not": lambda values: negate(values[0]), "and": lambda values: conjoin(*values),
            "or": lambda values: disjoin(*values), "xor": lambda values: exclusive(*values)}


def fold(formula: Formula, at_name: Callable[[str], T], true: T, false: T,
         combine: Callable[[str, list[T]], T]) -> T:
    """Bottom-up value of ``formula``: ``at_name(name)`` at a name, ``true`` and ``false``
    at the constants, ``combine(op, argument values)`` at each "not", "and", "or" or
    "xor" node.

    Iterative post-order walk with a memo by node identity, so shared
    subformulas are combined once and nesting depth is unlimited. Cost: one
    ``combine`` call per distinct node.

    >>> fold(symbol("a") & ~symbol("b"), str, "1", "0", lambda op, v: f"{op}({', '.join(v)})")
    'and(a, not(b))'
    """
    def value(node: Formula, values: list[T]) -> T:
        if node.op == "name":
            return at_name(node.name)
        if node.op == "true":
            return true
        if node.op == "false":
            return false
        return combine(node.op, values)

    return _post_order(formula, lambda node: node.args, value)


def _post_order(root, children: Callable, value: Callable):
    """``value(node, values of its children)`` at ``root``, children first: an iterative walk with a
    memo by node identity (shared nodes once, any depth). ``children`` must give the same nodes
    each time it is asked about a node."""
    memo: dict[int, object] = {}
    stack = [root]
    while stack:
        node = stack[-1]
        key = id(node)
        if key in memo:
            stack.pop()
            continue
        below = children(node)
        pending = [c for c in below if id(c) not in memo]
        if pending:
            stack.extend(pending)
            continue
        memo[key] = value(node, [memo[id(c)] for c in below])
        stack.pop()
    return memo[id(root)]


def substitute(formula: Formula, definitions: Mapping[str, Formula]) -> Formula:
    """``formula`` with each name in ``definitions`` replaced by its formula, simplified as built.

    >>> substitute(symbol("s") | ~symbol("a"), {"s": symbol("a") & symbol("b")})
    Formula('a & b | ~a')
    """
    return fold(formula, lambda name: definitions.get(name) or symbol(name), TRUE, FALSE,
                lambda op, values: _COMBINE[op](values))


def shape(formula: Formula, leaves: Mapping[str, tuple[int, int]] | None = None) -> tuple[int, int]:
    """(nodes, depth) of ``formula`` as a tree, where a name in ``leaves`` stands for that shape.

    >>> shape(symbol("a") & ~symbol("b"))
    (4, 2)
    """
    leaves = leaves or {}
    return fold(formula, lambda name: leaves.get(name, (1, 0)), (1, 0), (1, 0),
                lambda op, values: (1 + sum(n for n, _ in values), 1 + max(d for _, d in values)))


def to_sympy(formula: Formula) -> sympy.Boolean:
    """The same formula as a sympy expression (sympy's constructors build the same canonical form).

    >>> to_sympy(symbol("b") & ~symbol("a"))
    b & ~a
    """
    import sympy

    ops = {"not": lambda values: sympy.Not(values[0]), "and": lambda values: sympy.And(*values),
           "or": lambda values: sympy.Or(*values), "xor": lambda values: sympy.Xor(*values)}
    return fold(formula, sympy.Symbol, sympy.true, sympy.false, lambda op, values: ops[op](values))


def from_sympy(expr: sympy.Basic) -> Formula:
    """A sympy Boolean expression as a formula; NAND, NOR, XNOR, implication, equivalence and
    if-then-else are written with NOT, AND, OR and XOR.

    Iterative walk with a memo by node identity. Raises TypeError for anything else.

    >>> import sympy
    >>> from_sympy(sympy.Implies(sympy.Symbol("a"), sympy.Symbol("b")))
    Formula('b | ~a')
    """
    import sympy
    from sympy.logic.boolalg import (ITE, And, BooleanFalse, BooleanTrue, Equivalent, Implies, Nand, Nor, Not, Or,
                                     Xnor, Xor)

    core = {Not: "not", And: "and", Or: "or", Xor: "xor"}

    def rewritten(node):
        """``node`` rewritten one level into NOT/AND/OR/XOR, or None when it already is."""
        args = node.args
        for kind, rewrite in ((Nand, lambda: Not(And(*args))), (Nor, lambda: Not(Or(*args))),
                              (Xnor, lambda: Not(Xor(*args))), (Implies, lambda: Or(Not(args[0]), args[1])),
                              (Equivalent, lambda: Or(And(*args), And(*[Not(a) for a in args]))),
                              (ITE, lambda: Or(And(args[0], args[1]), And(Not(args[0]), args[2])))):
            if isinstance(node, kind):
                return rewrite()
        raise TypeError(f"not a boolean expression sympy can hand to the logic layer: {node!r}")

    rewrites: dict[int, sympy.Basic] = {}  # also keeps rewritten nodes alive while their ids are in use

    def children(node) -> tuple:
        if isinstance(node, (sympy.Symbol, BooleanTrue, BooleanFalse)) or node is True or node is False:
            return ()
        if not isinstance(node, sympy.Basic):
            raise TypeError(f"not a sympy boolean expression: {node!r}")
        if type(node) in core:
            return node.args
        if id(node) not in rewrites:
            rewrites[id(node)] = rewritten(node)
        return (rewrites[id(node)],)

    def value(node, values: list[Formula]) -> Formula:
        if isinstance(node, sympy.Symbol):
            return symbol(node.name)
        if isinstance(node, (BooleanTrue, BooleanFalse)) or node is True or node is False:
            return constant(bool(node))
        if type(node) in core:
            return _COMBINE[core[type(node)]](values)
        return values[0]

    return _post_order(expr, children, value)


def as_formula(expr) -> Formula:
    """``expr`` as a :class:`Formula`: a formula as it is, a sympy expression converted.

    The logic layer's functions take either, so callers holding sympy expressions
    need not convert.
    """
    return expr if isinstance(expr, Formula) else from_sympy(expr)
