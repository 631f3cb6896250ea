"""Preferred resistor values (IEC 60063 E series) and resistor power ratings.

The E series give the mantissas of preferred values within one decade; a value
is a mantissa times a power of ten. Mantissas are kept as integers in tenths
so that values such as 470 kOhm are exact (47 * 10**4).
"""

from __future__ import annotations

import bisect
import math

_MANTISSAS_TENTHS = {
    "E6": (10, 15, 22, 33, 47, 68),
    "E12": (10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82),
    "E24": (10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30,
            33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91),
}
"""IEC 60063 mantissas in tenths (the standard's two-digit table)."""

RESISTOR_RATINGS_WATTS = (0.25, 0.5, 1.0, 2.0)
"""Power ratings offered, smallest first (common composition and film sizes)."""

RESISTOR_DERATING = 2.0
"""A resistor's rating must be at least this multiple of its dissipation (common practice)."""


def e_series(name: str) -> tuple[float, ...]:
    """The mantissas of series ``name`` ("E6", "E12" or "E24") in [1, 10), ascending.

    Cost O(n). Reference: IEC 60063, table of the E6, E12 and E24 series.

    >>> e_series("E6")
    (1.0, 1.5, 2.2, 3.3, 4.7, 6.8)
    >>> len(e_series("E24")), e_series("E24")[-1]
    (24, 9.1)
    """
    return tuple(m / 10 for m in _tenths(name))


def _tenths(name: str) -> tuple[int, ...]:
    try:
        return _MANTISSAS_TENTHS[name.upper()]
    except KeyError:
        raise ValueError(f"unknown E series {name!r}; expected one of E6, E12, E24") from None


def _value(tenths: int, exponent: int) -> float:
    """tenths * 10**(exponent - 1) computed exactly where it is an integer."""
    e = exponent - 1
    return float(tenths * 10**e) if e >= 0 else tenths / 10**-e


def series_values(name: str, lo_ohms: float, hi_ohms: float) -> tuple[float, ...]:
    """All values of series ``name`` in the closed range [lo_ohms, hi_ohms], ascending.

    Cost O(n * decades).

    >>> series_values("E12", 1e3, 2.2e3)
    (1000.0, 1200.0, 1500.0, 1800.0, 2200.0)
    """
    if lo_ohms <= 0 or hi_ohms < lo_ohms:
        raise ValueError("need 0 < lo_ohms <= hi_ohms")
    tenths = _tenths(name)
    out = []
    for exponent in range(math.floor(math.log10(lo_ohms)) - 1, math.floor(math.log10(hi_ohms)) + 2):
        for t in tenths:
            v = _value(t, exponent)
            if lo_ohms * (1 - 1e-12) <= v <= hi_ohms * (1 + 1e-12):
                out.append(v)
    return tuple(out)


def nearest_values(r_ohms: float, series: str = "E24") -> tuple[float, float]:
    """The series values just at-or-below and at-or-above ``r_ohms``.

    Both are equal when ``r_ohms`` is itself a preferred value. Cost O(n).

    >>> nearest_values(50e3)
    (47000.0, 51000.0)
    >>> nearest_values(4.7e5, "E12")
    (470000.0, 470000.0)
    """
    if r_ohms <= 0:
        raise ValueError("r_ohms must be positive")
    values = series_values(series, r_ohms / 20, r_ohms * 20)
    i = bisect.bisect_left(values, r_ohms * (1 - 1e-12))
    above = values[i]
    below = above if above <= r_ohms * (1 + 1e-12) else values[i - 1]
    return below, above


def nearest_log_value(value: float, series: str = "E12") -> float:
    """The series value nearest ``value`` on a log scale (the lower one on a tie).

    For a capacitor chosen by a ratio, as a compensated divider's R1*C1 = R2*Cin. Cost O(n).

    >>> nearest_log_value(33e-12), nearest_log_value(40e-12), nearest_log_value(37e-12)
    (3.3e-11, 3.9e-11, 3.9e-11)
    """
    below, above = nearest_values(value, series)
    return below if value * value <= below * above else above


def resistor_rating_watts(dissipation_watts: float) -> float | None:
    """The smallest offered rating at least twice ``dissipation_watts`` (None if over 2 W).

    Twice the dissipation is the usual derating (common practice). Cost O(1).

    >>> resistor_rating_watts(0.1), resistor_rating_watts(0.3), resistor_rating_watts(1.2)
    (0.25, 1.0, None)
    """
    need = RESISTOR_DERATING * dissipation_watts
    for w in RESISTOR_RATINGS_WATTS:
        if need <= w:
            return w
    return None
