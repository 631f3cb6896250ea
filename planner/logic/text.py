"""Design-file syntax for sympy boolean expressions."""

from __future__ import annotations

import sympy
from sympy.logic.boolalg import And, BooleanFalse, BooleanTrue, Not, Or, Xor

from .table import _core_form

# Binding strength in the design syntax: not > and > xor > or.
_OR, _XOR, _AND, _NOT, _ATOM = 1, 2, 3, 4, 5


def format_expr(expr: sympy.Basic) -> str:
    """``expr`` in design-file syntax (names, ``~ & ^ |``, parentheses, 0 and 1).

    Parentheses only where the precedence not > and > xor > or needs them.
    Iterative, so any nesting depth prints.  Arguments keep sympy's canonical
    order, so the text is deterministic.

    >>> a, b, c = sympy.symbols("a b c")
    >>> format_expr((a & ~b) | (c ^ (a | b)))
    'a & ~b | c ^ (a | b)'
    >>> format_expr(~(a & b)), format_expr(sympy.true)
    ('~(a & b)', '1')
    """
    done: dict[int, tuple[str, int]] = {}
    rewritten: dict[int, sympy.Basic] = {}
    stack = [expr]
    while stack:
        node = stack[-1]
        key = id(node)
        if key in done:
            stack.pop()
            continue
        if isinstance(node, sympy.Symbol):
            done[key] = (node.name, _ATOM)
            stack.pop()
            continue
        if isinstance(node, BooleanTrue):
            done[key] = ("1", _ATOM)
            stack.pop()
            continue
        if isinstance(node, BooleanFalse):
            done[key] = ("0", _ATOM)
            stack.pop()
            continue
        if key not in rewritten:
            core = _core_form(node)
            rewritten[key] = node if core is None else core
        core = rewritten[key]
        args = core.args if core is node else (core,)
        pending = [a for a in args if id(a) not in done]
        if pending:
            stack.extend(pending)
            continue
        stack.pop()
        if core is not node:
            done[key] = done[id(core)]
            continue
        if isinstance(node, Not):
            text, prec = done[id(args[0])]
            done[key] = ("~" + (text if prec >= _NOT else f"({text})"), _NOT)
            continue
        prec, sep = {And: (_AND, " & "), Xor: (_XOR, " ^ "), Or: (_OR, " | ")}[type(node)]
        parts = []
        for a in args:
            text, p = done[id(a)]
            parts.append(text if p > prec else f"({text})")
        done[key] = (sep.join(parts), prec)
    return done[id(expr)][0]
