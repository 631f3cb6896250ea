"""A bracketing root finder for the one-dimensional node equations."""

from __future__ import annotations

from collections.abc import Callable

from planner.errors import PlanningFailure


class NoBracket(PlanningFailure, ValueError):
    """The function does not change sign over the interval."""


class NoConvergence(PlanningFailure, ArithmeticError):
    """The iteration limit was reached before the bracket shrank to the tolerance."""


def brent_root(f: Callable[[float], float], lo: float, hi: float, *, xtol: float = 1e-7,
               max_iter: int = 200) -> float:
    """A root of ``f`` in [lo, hi], where f(lo) and f(hi) differ in sign.

    Brent's method (R. P. Brent, "Algorithms for Minimization without
    Derivatives", 1973, ch. 4, procedure zero): inverse quadratic
    interpolation and secant steps, falling back to bisection, so it never
    leaves the bracket and converges at least as fast as bisection. Cost:
    typically 8-15 evaluations of ``f`` for smooth functions, at most about
    log2((hi - lo) / xtol) + ``max_iter``.  Raises :class:`NoConvergence`
    rather than return an unconverged value.

    >>> round(brent_root(lambda x: x * x - 2.0, 0.0, 2.0), 6)
    1.414214
    """
    a, b = lo, hi
    fa, fb = f(a), f(b)
    if fa == 0.0:
        return a
    if fb == 0.0:
        return b
    if (fa > 0) == (fb > 0):
        raise NoBracket(f"no sign change on [{lo}, {hi}]: f = {fa}, {fb}")
    c, fc = a, fa
    d = e = b - a
    for _ in range(max_iter):
        if (fb > 0) == (fc > 0):
            c, fc = a, fa
            d = e = b - a
        if abs(fc) < abs(fb):
            a, b, c = b, c, b
            fa, fb, fc = fb, fc, fb
        tol = 2.0 * 2.2e-16 * abs(b) + 0.5 * xtol
        m = 0.5 * (c - b)
        if abs(m) <= tol or fb == 0.0:
            return b
        if abs(e) >= tol and abs(fa) > abs(fb):
            s = fb / fa
            if a == c:
                p, q = 2.0 * m * s, 1.0 - s
            else:
                q, r = fa / fc, fb / fc
                p = s * (2.0 * m * q * (q - r) - (b - a) * (r - 1.0))
                q = (q - 1.0) * (r - 1.0) * (s - 1.0)
            if p > 0:
                q = -q
            else:
                p = -p
            if 2.0 * p < min(3.0 * m * q - abs(tol * q), abs(e * q)):
                e, d = d, p / q
            else:
                d = e = m
        else:
            d = e = m
        a, fa = b, fb
        b += d if abs(d) > tol else (tol if m > 0 else -tol)
        fb = f(b)
    raise NoConvergence(f"no root within {xtol} on [{lo}, {hi}] after {max_iter} steps; last {b} gives {fb}")
