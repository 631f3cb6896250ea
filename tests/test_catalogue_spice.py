"""SPICE subcircuits: ngspice's DC operating point equals the Python model within 1 %.

Reference: ngspice (Debian package), run as ``ngspice -b``.
"""

import pytest

from planner.catalogue import (
    builtin_catalogue,
    grid_current_amps,
    plate_current_amps,
    screen_current_amps,
    spice_nodes,
    spice_subcircuit,
    subcircuit_name,
)

CAT = builtin_catalogue()
pytestmark = pytest.mark.ngspice

SHORT = {"plate": "p", "screen": "s", "grid": "g", "grid3": "g3", "cathode": "k"}


def operating_points(tube, kind):
    """A few (plate, screen, grid, grid3) points per section kind, on and near cut-off."""
    if kind == "diode":
        return [(0.5, None, 0.0, 0.0), (3.0, None, 0.0, 0.0), (10.0, None, 0.0, 0.0)]
    if kind == "triode":
        return [(250.0, None, -2.0, 0.0), (150.0, None, 0.0, 0.0), (100.0, None, -3.0, 0.0),
                (120.0, None, 0.6, 0.0)]
    es = {"6CS6": 30.0, "5915": 75.0}.get(tube.name, 120.0)
    if kind == "pentode":
        return [(250.0, es, -1.0, 0.0), (60.0, es, 0.0, 0.0), (150.0, es, -3.0, 0.0)]
    return [(150.0, es, 0.0, 0.0), (150.0, es, -1.0, -2.0), (100.0, es, 0.3, 1.0)]


CASES = [(t.name, kind) for t in (CAT.get(n) for n in CAT.names())
         for kind in sorted({s.kind for s in t.sections})]


@pytest.mark.parametrize("name, kind", CASES)
def test_ngspice_operating_point_matches_python_model(name, kind, ngspice):
    tube = CAT.get(name)
    sub = subcircuit_name(tube, kind)
    lines = ["* tubeplan catalogue check", spice_subcircuit(tube, kind)]
    prints = []
    points = operating_points(tube, kind)
    for i, (ep, es, eg, eg3) in enumerate(points):
        volts = {"plate": ep, "screen": es, "grid": eg, "grid3": eg3}
        nodes = []
        for role in spice_nodes(tube, kind):
            if role == "cathode":
                nodes.append("0")
                continue
            node = f"{SHORT[role]}{i}"
            lines.append(f"V{node} {node} 0 DC {volts[role]}")
            nodes.append(node)
        lines.append(f"X{i} {' '.join(nodes)} {sub}")
        prints += [f"ip{i}=-i(vp{i})"] + ([f"is{i}=-i(vs{i})"] if es is not None else []) + \
                  ([f"ig{i}=-i(vg{i})"] if kind != "diode" else [])
    lines += [".control", "op"] + [f"let {p}" for p in prints] + \
             ["print " + " ".join(p.split("=")[0] for p in prints), ".endc", ".end"]
    got = ngspice("\n".join(lines) + "\n", timeout_s=60)
    for i, (ep, es, eg, eg3) in enumerate(points):
        args = dict(plate_volts=ep, grid_volts=eg, grid3_volts=eg3, screen_volts=es)
        want = plate_current_amps(tube, **args)
        assert got[f"ip{i}"] == pytest.approx(want, rel=0.01, abs=1e-9), f"{name} plate, point {i} (ngspice)"
        if es is not None:
            want_s = screen_current_amps(tube, **args)
            assert got[f"is{i}"] == pytest.approx(want_s, rel=0.01, abs=1e-9), f"{name} screen (ngspice)"
        if kind != "diode":
            want_g = grid_current_amps(tube, grid_volts=eg)
            assert got[f"ig{i}"] == pytest.approx(want_g, rel=0.01, abs=1e-9), f"{name} grid (ngspice)"


def test_subcircuit_names_are_deterministic_and_distinct():
    names = [subcircuit_name(CAT.get(n), k) for n, k in CASES]
    assert len(set(names)) == len(names)
    assert spice_subcircuit(CAT.get("5915"), "dual") == spice_subcircuit(CAT.get("5915"), "dual-control")
    assert subcircuit_name(CAT.get("12AU7"), "single") == "TP_12AU7_TRIODE"
    with pytest.raises(ValueError, match=r"^12AU7 has no dual section$"):
        subcircuit_name(CAT.get("12AU7"), "dual")
