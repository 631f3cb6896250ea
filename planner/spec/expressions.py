"""The safe expression parser: design-file text to formulas (:class:`planner.formula.Formula`).

Syntax (our own): names, the operators ``~ & ^ |`` or the words
``not and xor or``, parentheses, and the constants ``0`` and ``1``.
Precedence, tightest first: not, and, xor, or; binary operators group left.

No user text ever reaches ``eval``, ``exec``, ``sympify`` or ``parse_expr``:
tokens are matched by one regular expression and the tree is built with an
explicit operator stack (the shunting-yard method of E. W. Dijkstra, 1961),
so deep nesting can never exhaust Python's recursion limit.
"""

from __future__ import annotations

import re
from planner.formula import FALSE, TRUE, Formula, conjoin, disjoin, exclusive, negate, symbol

from .errors import InputError

#: Longest expression text accepted; longer blocks belong in named signals.
MAX_EXPRESSION_CHARS = 20_000
#: Deepest operator nesting accepted (after parentheses are resolved).
MAX_EXPRESSION_DEPTH = 100

NAME_PATTERN = r"[A-Za-z_][A-Za-z0-9_]*"
KEYWORDS = frozenset({"not", "and", "or", "xor"})

_TOKEN = re.compile(
    rf"\s*(?:(?P<name>{NAME_PATTERN})|(?P<const>[01])(?![0-9A-Za-z_])|(?P<op>[~&|^()]))"
)
_WORD_OPS = {"not": "~", "and": "&", "xor": "^", "or": "|"}
_BINARY_PRECEDENCE = {"&": 3, "^": 2, "|": 1}
_UNARY_PRECEDENCE = 4


def is_valid_name(text: str) -> bool:
    """True when ``text`` can name an input, signal or output.

    >>> is_valid_name("carry_in"), is_valid_name("and"), is_valid_name("2a")
    (True, False, False)
    """
    return re.fullmatch(NAME_PATTERN, text) is not None and text not in KEYWORDS


def _tokens(text: str, path: str, line: int):
    """Yield ``(kind, value, column, raw)``; kind is "name", "const" or "op"."""
    position = 0
    end = len(text.rstrip())
    while position < end:
        match = _TOKEN.match(text, position)
        if match is None:
            column = position + len(text[position:]) - len(text[position:].lstrip()) + 1
            bad = text[column - 1]
            raise InputError(
                path, line,
                f"unexpected character {bad!r} at column {column} of expression {text!r}; "
                "expected a name, 0, 1, ~ & ^ | not and xor or, or parentheses")
        column = match.start(match.lastgroup) + 1
        kind, value = match.lastgroup, match.group(match.lastgroup)
        raw = value
        if kind == "name" and value in _WORD_OPS:
            kind, value = "op", _WORD_OPS[value]
        yield kind, value, column, raw
        position = match.end()


def _apply(op: str, operands: list, depths: list) -> None:
    """Pop the operands of ``op`` and push the formula it builds."""
    if op == "~":
        arg = operands.pop()
        depth = depths.pop() + 1
        node = negate(arg)
    else:
        right, left = operands.pop(), operands.pop()
        depth = max(depths.pop(), depths.pop()) + 1
        node = {"&": conjoin, "^": exclusive, "|": disjoin}[op](left, right)
    operands.append(node)
    depths.append(depth)


def parse_expression(text: str, *, path: str = "<expression>", line: int = 1) -> Formula:
    """Parse design-file expression ``text`` into a Boolean formula.

    Cost: O(len(text)) tokens, each pushed and popped once, and the canonical
    text of each node built (see :mod:`planner.formula`).

    >>> parse_expression("a & ~b | not a and b")
    Formula('a & ~b | b & ~a')
    >>> parse_expression("a ^ b & c")
    Formula('a ^ b & c')
    >>> parse_expression("1")
    Formula('1')
    """
    if not isinstance(text, str):
        raise InputError(path, line, f"expected an expression as text, found {text!r}")
    if len(text) > MAX_EXPRESSION_CHARS:
        raise InputError(
            path, line,
            f"expression is {len(text)} characters long; the limit is {MAX_EXPRESSION_CHARS}: "
            "split it into named signals")
    operands: list = []
    depths: list[int] = []
    # Operator stack entries: (op, column); "(" marks an open parenthesis.
    pending: list[tuple[str, int]] = []
    expect_operand = True
    last_column = 1

    def fail(what: str, column: int):
        raise InputError(path, line, f"{what} at column {column} of expression {text!r}")

    for kind, value, column, raw in _tokens(text, path, line):
        last_column = column
        if expect_operand:
            if kind == "name":
                operands.append(symbol(value))
                depths.append(0)
                expect_operand = False
            elif kind == "const":
                operands.append(TRUE if value == "1" else FALSE)
                depths.append(0)
                expect_operand = False
            elif value in ("~", "("):
                pending.append((value, column))
            else:
                fail(f"expected a name, 0, 1, 'not' or '(' but found {raw!r}", column)
        else:
            if kind != "op" or value in ("~", "("):
                fail(f"expected an operator or ')' but found {raw!r}", column)
            if value == ")":
                while pending and pending[-1][0] != "(":
                    _apply(pending.pop()[0], operands, depths)
                if not pending:
                    fail("')' without a matching '('", column)
                pending.pop()
            else:
                precedence = _BINARY_PRECEDENCE[value]
                while pending and pending[-1][0] != "(":
                    top = pending[-1][0]
                    top_precedence = _UNARY_PRECEDENCE if top == "~" else _BINARY_PRECEDENCE[top]
                    if top_precedence < precedence:
                        break
                    _apply(pending.pop()[0], operands, depths)
                pending.append((value, column))
                expect_operand = True
        if depths and depths[-1] > MAX_EXPRESSION_DEPTH:
            raise InputError(
                path, line,
                f"expression nests operators more than {MAX_EXPRESSION_DEPTH} deep; "
                "split it into named signals")
    if expect_operand:
        if not operands and not pending:
            raise InputError(path, line, "expression is empty; expected a name, 0, 1 or a formula")
        fail("expression ends where a name, 0, 1 or '(' was expected", last_column)
    while pending:
        op, column = pending.pop()
        if op == "(":
            fail("'(' is never closed", column)
        _apply(op, operands, depths)
        if depths[-1] > MAX_EXPRESSION_DEPTH:
            raise InputError(
                path, line,
                f"expression nests operators more than {MAX_EXPRESSION_DEPTH} deep; "
                "split it into named signals")
    return operands[0]


def expression_names(expr: Formula) -> frozenset[str]:
    """The names a parsed expression uses.

    >>> sorted(expression_names(parse_expression("a & (b | ~c)")))
    ['a', 'b', 'c']
    """
    return expr.names
