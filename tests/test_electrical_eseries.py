"""E series (IEC 60063) and resistor ratings."""

import math

import pytest

from planner.electrical import e_series, nearest_values, resistor_rating_watts, series_values

# IEC 60063, table of preferred values (two significant figures), typed in from the
# standard's table as reproduced in the "Component preferred values" page of
# qsl.net/g4usp; the same figures are also recalled from memory.
IEC_60063_E6 = (1.0, 1.5, 2.2, 3.3, 4.7, 6.8)
IEC_60063_E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)
IEC_60063_E24 = (1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
                 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1)


def test_series_match_iec_60063_table():
    assert e_series("E6") == IEC_60063_E6  # IEC 60063 table
    assert e_series("E12") == IEC_60063_E12  # IEC 60063 table
    assert e_series("E24") == IEC_60063_E24  # IEC 60063 table


def test_series_nest_and_follow_the_geometric_rule():
    # IEC 60063: E6 is every other E12 value, E12 every other E24 value.
    assert e_series("E12")[::2] == e_series("E6")
    assert e_series("E24")[::2] == e_series("E12")
    # IEC 60063: each value is 10**(i/24) rounded to two figures, except eight long-standing
    # values of E24 (rounding would give 2.6, 2.9, 3.2, 3.5, 3.8, 4.2, 4.6, 8.3); from memory.
    exceptions = {2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2}
    for i, v in enumerate(e_series("E24")):
        if v not in exceptions:
            assert v == round(10 ** (i / 24), 1)


def test_values_are_exact_in_ohms():
    vals = series_values("E24", 1e3, 1e6)
    assert 470e3 in vals and 4.7e3 in vals and 1e6 in vals
    assert vals == tuple(sorted(vals))
    assert len(vals) == 3 * 24 + 1
    assert all(float(int(v)) == v for v in vals)  # integers of ohms above 10 ohms


def test_nearest_values():
    assert nearest_values(50e3) == (47e3, 51e3)
    assert nearest_values(50e3, "E12") == (47e3, 56e3)
    assert nearest_values(1e6) == (1e6, 1e6)
    assert nearest_values(9.5e3) == (9.1e3, 10e3)
    for r in (13.7, 999.0, 123456.0):
        lo, hi = nearest_values(r)
        assert lo <= r <= hi and hi / lo <= 1.16  # the widest E24 step is 13 -> 15 (IEC 60063 table)


def test_unknown_series_is_refused():
    with pytest.raises(ValueError, match="E6, E12, E24"):
        e_series("E48")


def test_resistor_rating_is_twice_the_dissipation():
    # Common practice: a resistor's rating at least twice its dissipation.
    assert resistor_rating_watts(0.125) == 0.25
    assert resistor_rating_watts(0.126) == 0.5
    assert resistor_rating_watts(0.5) == 1.0
    assert resistor_rating_watts(1.0) == 2.0
    assert resistor_rating_watts(1.01) is None
    assert math.isclose(resistor_rating_watts(0.0), 0.25)
