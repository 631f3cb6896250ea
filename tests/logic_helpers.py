"""Shared helpers for the logic tests (seeded random functions, literal counts)."""

from __future__ import annotations

import random

import sympy

from planner.logic import TruthTable


def random_table(n: int, seed: int, p_on: float = 0.4, p_dc: float = 0.1) -> TruthTable:
    """A seeded random function of ``n`` inputs x0..x{n-1} with don't-cares."""
    rng = random.Random(seed)
    on = dc = 0
    for i in range(1 << n):
        u = rng.random()
        if u < p_on:
            on |= 1 << i
        elif u < p_on + p_dc:
            dc |= 1 << i
    return TruthTable(tuple(f"x{k}" for k in range(n)), on, dc)


def literal_count(expr: sympy.Basic) -> int:
    """Occurrences of input symbols in a two-level sympy expression (each is one literal)."""
    count = 0
    stack = [expr]
    while stack:
        node = stack.pop()
        if isinstance(node, sympy.Symbol):
            count += 1
        else:
            stack.extend(node.args)
    return count


def minterms(bits: int) -> list[int]:
    return [i for i in range(bits.bit_length()) if bits >> i & 1]


def eval_design_text(text: str, values: dict[str, bool]) -> bool:
    """Evaluate design-syntax text by shunting-yard (independent of planner code).

    Precedence as the design syntax states it: ~ binds tightest, then &, ^, |.
    """
    import re

    tokens = re.findall(r"[A-Za-z_][A-Za-z0-9_]*|[01]|[~&^|()]", text)
    assert "".join(tokens) == re.sub(r"\s+", "", text), f"unexpected characters in {text!r}"
    prec = {"|": 1, "^": 2, "&": 3}
    out: list[bool] = []
    ops: list[str] = []

    def apply(op: str) -> None:
        if op == "~":
            out.append(not out.pop())
            return
        y, x = out.pop(), out.pop()
        out.append({"&": x and y, "|": x or y, "^": x != y}[op])

    for tok in tokens:
        if tok == "(" or tok == "~":
            ops.append(tok)
        elif tok == ")":
            while ops[-1] != "(":
                apply(ops.pop())
            ops.pop()
            while ops and ops[-1] == "~":
                apply(ops.pop())
        elif tok in prec:
            while ops and ops[-1] != "(" and (ops[-1] == "~" or prec[ops[-1]] >= prec[tok]):
                apply(ops.pop())
            ops.append(tok)
        else:
            out.append(tok == "1" if tok in "01" else values[tok])
            while ops and ops[-1] == "~":
                apply(ops.pop())
    while ops:
        apply(ops.pop())
    assert len(out) == 1
    return out[0]
