"""Unit conversions at the edges: SI inside the package, datasheet units in files and reports.

Inside, every quantity is in SI units and its name says which (``supply_amps_worst``,
``c_in_farads``, ``max_plate_amps``). Stock and catalogue files give currents in
mA and capacitances in pF, and the reports print them so; these functions are
the only places the two meet.

A value read from a file and printed back passes through binary floating point
twice (0.46 pF -> 4.6e-13 F -> 0.4600000000000001 pF); :func:`as_written` rounds
it to 15 significant digits, which recovers any value written with 15 digits or
fewer (each conversion is off by at most half an ulp, about 1e-16 relative).
Computed values need no such rounding: the report formats them.
"""

from __future__ import annotations


def amps_from_milliamps(milliamps: float) -> float:
    """A current read in mA, in amperes.

    >>> amps_from_milliamps(60)
    0.06
    """
    return milliamps / 1e3


def milliamps(amps: float) -> float:
    """A current in amperes, in mA for a report or file.

    >>> round(milliamps(0.0125), 9)
    12.5
    """
    return amps * 1e3


def farads_from_picofarads(picofarads: float) -> float:
    """A capacitance read in pF, in farads.

    >>> farads_from_picofarads(10.0)
    1e-11
    """
    return picofarads * 1e-12


def picofarads(farads: float) -> float:
    """A capacitance in farads, in pF for a report or file.

    >>> round(picofarads(4.7e-11), 9)
    47.0
    """
    return farads * 1e12


def as_written(value: float) -> float:
    """``value`` rounded to 15 significant digits: a figure read from a file, converted and back, as written.

    >>> picofarads(farads_from_picofarads(0.46)), as_written(picofarads(farads_from_picofarads(0.46)))
    (0.4600000000000001, 0.46)
    """
    return float(f"{value:.15g}")
