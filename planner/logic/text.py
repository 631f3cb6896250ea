"""Design-file syntax for Boolean expressions."""

from __future__ import annotations

from typing import TYPE_CHECKING

from planner.formula import Formula, as_formula

if TYPE_CHECKING:  # sympy expressions are accepted and converted
    import sympy


def format_expr(expr: Formula | sympy.Basic) -> str:
    """``expr`` in design-file syntax (names, ``~ & ^ |``, parentheses, 0 and 1).

    Parentheses only where the precedence not > and > xor > or needs them; the
    arguments of each operator in the order of their own text, so the text is
    deterministic and is the formula's canonical text (:mod:`planner.formula`).

    >>> import sympy
    >>> a, b, c = sympy.symbols("a b c")
    >>> format_expr((a & ~b) | (c ^ (a | b)))
    '(a | b) ^ c | a & ~b'
    >>> format_expr(~(a & b)), format_expr(sympy.true)
    ('~(a & b)', '1')
    """
    return as_formula(expr).text
