"""Design-file syntax for sympy boolean expressions."""

from __future__ import annotations

from typing import TYPE_CHECKING

from .table import fold

if TYPE_CHECKING:  # sympy is loaded only where an expression is built or read
    import sympy

# Binding strength in the design syntax: not > and > xor > or.
_OR, _XOR, _AND, _NOT, _ATOM = 1, 2, 3, 4, 5


def format_expr(expr: sympy.Basic) -> str:
    """``expr`` in design-file syntax (names, ``~ & ^ |``, parentheses, 0 and 1).

    Parentheses only where the precedence not > and > xor > or needs them.
    Iterative, so any nesting depth prints.  Arguments keep sympy's canonical
    order, so the text is deterministic.

    >>> import sympy
    >>> a, b, c = sympy.symbols("a b c")
    >>> format_expr((a & ~b) | (c ^ (a | b)))
    'a & ~b | c ^ (a | b)'
    >>> format_expr(~(a & b)), format_expr(sympy.true)
    ('~(a & b)', '1')
    """
    from sympy.logic.boolalg import And, Not, Or, Xor

    def combine(node: sympy.Basic, args: list[tuple[str, int]]) -> tuple[str, int]:
        if isinstance(node, Not):
            text, prec = args[0]
            return "~" + (text if prec >= _NOT else f"({text})"), _NOT
        prec, sep = {And: (_AND, " & "), Xor: (_XOR, " ^ "), Or: (_OR, " | ")}[type(node)]
        return sep.join(text if p > prec else f"({text})" for text, p in args), prec

    return fold(expr, lambda name: (name, _ATOM), ("1", _ATOM), ("0", _ATOM), combine)[0]
