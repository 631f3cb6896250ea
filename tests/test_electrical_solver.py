"""The 1-D solvers against sympy's nsolve on the same equations."""

import dataclasses
import math

import pytest
import sympy

from planner.catalogue import ModelParams, builtin_catalogue
from planner.electrical import brent_root
from planner.electrical.circuit import Load, SectionState, clamp_grid_volts, load_amps, solve_plate
from planner.electrical.roots import NoBracket, NoConvergence

CAT = builtin_catalogue()


def test_brent_root_simple_functions():
    # The classic cubic of Wallis; its root from memory.
    assert brent_root(lambda x: x**3 - 2 * x - 5, 2.0, 3.0) == pytest.approx(2.0945514815, abs=1e-7)
    assert brent_root(math.cos, 0.0, 3.0) == pytest.approx(math.pi / 2, abs=1e-7)
    assert brent_root(lambda x: x - 1.0, 1.0, 4.0) == 1.0
    with pytest.raises(NoBracket, match=r"^no sign change on \[-1.0, 1.0\]"):
        brent_root(lambda x: x * x + 1, -1.0, 1.0)


def test_brent_root_raises_when_it_does_not_converge():
    # Two steps cannot shrink [0, 2] to 1e-7 around sqrt(2): the finder says so instead of guessing.
    with pytest.raises(NoConvergence, match=r"^no root within 1e-07 on \[0.0, 2.0\] after 2 steps"):
        brent_root(lambda x: x * x - 2.0, 0.0, 2.0, max_iter=2)


def test_plate_node_matches_sympy_child_langmuir():
    # Test fixture (invented model): a 12AU7 with the three-halves-law model in place of Koren's.
    tube = dataclasses.replace(CAT.get("12AU7"), model=ModelParams("child-langmuir", mu=20.0, perveance=2e-4))
    vb, rl, vg = 250.0, 47e3, -2.0
    v = solve_plate(vb, rl, ((1, SectionState(tube, vg, 0.0, 1.0, None)),), ())
    x = sympy.Symbol("x", positive=True)
    ref = sympy.nsolve((vb - x) / rl - 2e-4 * (vg + x / 20) ** sympy.Rational(3, 2), x, 100)  # sympy nsolve
    assert v == pytest.approx(float(ref), abs=1e-5)


def test_plate_node_with_loads_matches_sympy_koren():
    tube = CAT.get("12AT7")
    m = tube.model
    vb, rl, bias, r1, r2 = 250.0, 82e3, -100.0, 910e3, 750e3
    wear, n = 0.7, 3
    v = solve_plate(vb, rl, ((1, SectionState(tube, 0.0, 0.0, wear, None)),), ((n, Load(r1, r2, bias, tube)),))
    # Koren 1996 triode with his grid offset vct and our tail knee, written out again in sympy; the grid
    # at 0 V; loads unclamped (their taps are negative).
    x = sympy.Symbol("x")
    e1 = x / m.kp * sympy.log(1 + sympy.exp(m.kp * (1 / m.mu + m.vct / sympy.sqrt(m.kvb + x**2))))
    ip = wear * 2 * e1**m.ex / m.kg1 * e1**2 / (e1**2 + m.tail_volts**2)
    loads = n * (x - bias) / (r1 + r2)
    ref = float(sympy.nsolve((vb - x) / rl - ip - loads, x, 40))  # sympy nsolve
    assert v == pytest.approx(ref, abs=1e-5)
    assert (ref * r2 + bias * r1) / (r1 + r2) < 0  # the taps were indeed below the clamp


@pytest.mark.parametrize("name", ["12AT7", "12AU7", "6AU6"])
@pytest.mark.parametrize("open_volts, source_ohms", [(30.0, 400e3), (0.05, 1e6), (250.0, 10e3), (120.0, 5e6)])
def test_grid_clamp_matches_sympy(name, open_volts, source_ohms):
    tube = CAT.get(name)
    k = tube.model.grid_perveance
    vg = clamp_grid_volts(tube, open_volts, source_ohms)
    x = sympy.Symbol("x", positive=True)
    balance = (sympy.Float(open_volts) - x) / source_ohms - k * x ** sympy.Rational(3, 2)
    ref = float(sympy.nsolve(balance, x, (0, open_volts), solver="bisect", prec=30))  # sympy nsolve
    assert vg == pytest.approx(ref, abs=1e-8)
    assert clamp_grid_volts(tube, -5.0, source_ohms) == -5.0  # a negative grid draws nothing


def test_diode_input_pushes_current_into_a_low_node():
    tube = CAT.get("12AT7")
    diode = Load(820e3, 910e3, -100.0, tube, 0.6, 1e6, 250.0)
    # Low node: the pull-up current not taken by the divider flows back through the diode.
    x = 40.0 + 0.6
    div = (x - (x * 910e3 - 100.0 * 820e3) / (820e3 + 910e3)) / 820e3
    assert load_amps(diode, 40.0) == pytest.approx(-((250.0 - x) / 1e6 - div), rel=1e-9)
    # A node far above the gate's own level: the diode is off and draws nothing.
    assert load_amps(diode, 240.0) == 0.0
