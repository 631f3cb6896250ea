"""Benchmark: equivalence proofs above the exhaustive limit, old SAT path against new (not a test).

Two forms of a k-bit adder's carry out and top sum bit (2k inputs, 22 to 32):
ripple carry (c' = a & b | c & (a ^ b)) against carry lookahead written out
(c_k = g_{k-1} | p_{k-1} & g_{k-2} | ...).  Each pair goes through
:func:`planner.logic.counterexample` with ``sat_solver="sympy-dpll"`` (the old
path, sympy's DPLL) and ``"cadical"`` (now: CaDiCaL through python-sat), side
by side in this process; both must find the forms equal, and a deliberately
broken form (one generate term dropped) must give a counterexample that the
check re-evaluates.  The old path is skipped at larger sizes once one of its
runs passes OLD_LIMIT_S.  The machine may be shared: compare ratios.

Run:  python3 benchmarks/prove.py
"""

from __future__ import annotations

import time

import sympy

from planner.logic import counterexample

SIZES = (22, 24, 26, 28, 30, 32)
OLD_LIMIT_S = 60.0


def adder_forms(bits: int, broken: bool = False):
    """(ripple, lookahead) expressions of the carry out and top sum bit of a ``bits``-bit adder."""
    a = sympy.symbols(f"a0:{bits}")
    b = sympy.symbols(f"b0:{bits}")
    carry = sympy.false
    carries = [carry]
    for i in range(bits):
        carry = (a[i] & b[i]) | (carry & (a[i] ^ b[i]))
        carries.append(carry)
    ripple = (carries[bits], a[bits - 1] ^ b[bits - 1] ^ carries[bits - 1])
    g = [a[i] & b[i] for i in range(bits)]
    p = [a[i] | b[i] for i in range(bits)]

    def lookahead(k: int):
        terms = []
        for j in range(k):
            if broken and k == bits and j == 0:
                continue
            terms.append(sympy.And(g[j], *p[j + 1:k]))
        return sympy.Or(*terms)

    look = (lookahead(bits), a[bits - 1] ^ b[bits - 1] ^ lookahead(bits - 1))
    names = tuple(str(s) for pair in zip(a, b) for s in pair)
    return ripple, look, names


def timed(solver: str, left, right, names) -> tuple[float, bool]:
    start = time.perf_counter()
    same = all(counterexample(x, y, names, sat_solver=solver) is None for x, y in zip(left, right))
    return time.perf_counter() - start, same


def main() -> None:
    print("| inputs | sympy DPLL (before) | CaDiCaL (now) | ratio | broken form: counterexample found |")
    print("|---:|---:|---:|---:|---|")
    old_on = True
    for n in SIZES:
        ripple, look, names = adder_forms(n // 2)
        new_s, new_same = timed("cadical", ripple, look, names)
        assert new_same, n
        if old_on:
            old_s, old_same = timed("sympy-dpll", ripple, look, names)
            assert old_same, n
            old_on = old_s < OLD_LIMIT_S
            old_text, ratio = f"{old_s:.2f} s", f"{old_s / new_s:,.0f}x"
        else:
            old_text, ratio = "skipped", ""
        _, broken, _ = adder_forms(n // 2, broken=True)
        found = counterexample(ripple[0], broken[0], names) is not None
        print(f"| {n} | {old_text} | {new_s * 1000:.1f} ms | {ratio} | {'yes' if found else 'NO'} |", flush=True)


if __name__ == "__main__":
    main()
