"""Fit Koren model parameters to datasheet operating points.

Run: ``python benchmarks/fit_koren.py [TYPE ...]``. Prints, per tube type,
the fitted parameters (to paste into planner/catalogue/builtin.py) and the
model's error at every datasheet point.

Method: least squares on log ratios (model / datasheet) of plate current
(weight 1), screen current (0.5), transconductance (0.4), plate resistance
(0.25) and the current at a stated cut-off voltage (0.3), with a weak pull
(0.02; 0.05 for the exponent ex) of every log-parameter towards
its starting value so that types with few published points stay well posed
and the exponent stays near the three-halves law. Minimised by Nelder-Mead (J. A. Nelder
and R. Mead, "A simplex method for function minimization", Computer
Journal 7, 1965) in log-parameter space from the starting values and from
+-0.5 along each log-parameter (and, for triodes, with kvb times 10 and
30), keeping the best; pure Python, no
dependencies. Cost: some 10^5 model evaluations per type (seconds).

The operating points are the "typical operation" rows of the datasheets
named per type. Where the datasheet gives a cathode resistor instead of a
grid voltage, the grid voltage is -Rk times the datasheet's cathode current.
"""

from __future__ import annotations

import math
import sys
from dataclasses import replace

from planner.catalogue import ModelParams, builtin_catalogue, plate_current_amps, screen_current_amps

# Each point: plate V, screen V (pentodes), grid V or cathode resistor, grid3 V,
# and the datasheet's plate mA, screen mA, gm mA/V, rp kilohm where given.
# A "cut" entry: at these voltages the plate current is about cut_ua microamperes.
DATA = {
    "12AU7": [
        dict(ep=100, eg=0.0, ip=11.8, gm=3.1, rp=6.25),
        dict(ep=250, eg=-8.5, ip=10.5, gm=2.2, rp=7.7),
        dict(ep=250, eg=-24.0, cut_ua=10.0),
    ],
    "12AX7": [
        dict(ep=100, eg=-1.0, ip=0.5, gm=1.25, rp=80.0),
        dict(ep=250, eg=-2.0, ip=1.2, gm=1.6, rp=62.5),
    ],
    "12AT7": [
        dict(ep=100, rk=270, ip=3.7, gm=4.0, rp=15.0),
        dict(ep=250, rk=200, ip=10.0, gm=5.5, rp=10.9),
        dict(ep=250, eg=-12.0, cut_ua=10.0),
    ],
    "6SN7": [
        dict(ep=90, eg=0.0, ip=10.0, gm=3.0, rp=6.7),
        dict(ep=250, eg=-8.0, ip=9.0, gm=2.6, rp=7.7),
        dict(ep=250, eg=-18.0, cut_ua=10.0),
    ],
    "5965": [
        dict(ep=150, rk=220, ip=8.5, gm=6.7, rp=6.3),
    ],
    "6J6": [
        dict(ep=100, rk=100, ip=8.5, gm=5.3, rp=7.1),
    ],
    "6AU6": [
        dict(ep=100, es=100, rk=150, ip=5.0, ig2=2.1, gm=3.9, rp=500.0),
        dict(ep=250, es=125, rk=100, ip=7.6, ig2=3.0, gm=4.45, rp=1500.0),
        dict(ep=250, es=150, rk=68, ip=10.6, ig2=4.3, gm=5.2, rp=1000.0),
    ],
    "6AK5": [
        dict(ep=120, es=120, rk=200, ip=7.5, ig2=2.5, gm=5.0, rp=340.0),
        dict(ep=180, es=120, rk=200, ip=7.7, ig2=2.4, gm=5.1, rp=690.0),
    ],
    "6AS6": [
        dict(ep=120, es=120, eg=-2.0, eg3=0.0, ip=5.2, ig2=3.5, gm=3.2),
        dict(ep=120, es=120, eg=-2.0, eg3=-15.0, cut_ua=10.0),
    ],
    "6CS6": [
        dict(ep=100, es=30, eg=-1.0, eg3=0.0, ip=1.1, ig2=3.0, gm=1.0),
        dict(ep=100, es=30, eg=-1.0, eg3=-3.0, cut_ua=10.0),
        dict(ep=100, es=30, eg=-3.0, eg3=0.0, cut_ua=10.0),
    ],
    "5915": [
        dict(ep=150, es=75, eg=0.0, eg3=0.0, ip=5.6, ig2=6.0),
        dict(ep=150, es=75, eg=0.0, eg3=-4.0, cut_ua=10.0),
        dict(ep=150, es=75, eg=-4.0, eg3=0.0, cut_ua=10.0),
    ],
}

FREE = {
    "koren-triode": ("mu", "ex", "kg1", "kp", "kvb"),
    "koren-pentode": ("mu", "ex", "kg1", "kp", "kvb", "kg2"),
}
DUAL_FREE = ("g3_zero_volts", "g3_ex")


def grid_volts(point: dict) -> float:
    """The point's grid voltage; for a cathode-resistor point -Rk * datasheet cathode current."""
    if "eg" in point:
        return point["eg"]
    return -point["rk"] * (point["ip"] + point.get("ig2", 0.0)) / 1000.0


def currents(model: ModelParams, point: dict, *, dv: float = 0.0, dp: float = 0.0):
    """(plate A, screen A) at the point, grid shifted by dv and plate by dp."""
    args = dict(plate_volts=point["ep"] + dp, grid_volts=grid_volts(point) + dv,
                grid3_volts=point.get("eg3", 0.0), screen_volts=point.get("es"))
    return plate_current_amps(model, **args), screen_current_amps(model, **args)


def errors(model: ModelParams, point: dict) -> dict:
    """Model / datasheet - 1 for every quantity the point gives."""
    out = {}
    ip, ig2 = currents(model, point)
    if "cut_ua" in point:
        out["cut"] = ip / (point["cut_ua"] * 1e-6) - 1.0
        return out
    out["ip"] = ip / (point["ip"] * 1e-3) - 1.0
    if "ig2" in point:
        out["ig2"] = ig2 / (point["ig2"] * 1e-3) - 1.0
    if "gm" in point:
        h = 0.01
        gm = (currents(model, point, dv=h)[0] - currents(model, point, dv=-h)[0]) / (2 * h)
        out["gm"] = gm / (point["gm"] * 1e-3) - 1.0
    if "rp" in point:
        h = 0.5
        g = (currents(model, point, dp=h)[0] - currents(model, point, dp=-h)[0]) / (2 * h)
        out["rp"] = (1.0 / g) / (point["rp"] * 1e3) - 1.0 if g > 0 else 1e6
    return out


WEIGHTS = {"ip": 1.0, "ig2": 0.5, "gm": 0.4, "rp": 0.25, "cut": 0.3}
PULL = {"ex": 0.05}
"""Stronger pull for the exponent, to keep it near the three-halves law."""


def cost(model: ModelParams, points, start: ModelParams, names) -> float:
    total = 0.0
    for point in points:
        for key, err in errors(model, point).items():
            ratio = max(err + 1.0, 1e-12)
            total += (WEIGHTS[key] * math.log(ratio)) ** 2
    for n in names:
        total += (PULL.get(n, 0.02) * math.log(abs(getattr(model, n)) / abs(getattr(start, n)))) ** 2
    return total


def nelder_mead(f, x0, *, step=0.3, iterations=4000, tol=1e-12):
    """Minimise f from x0 (Nelder and Mead 1965); returns the best point."""
    n = len(x0)
    simplex = [list(x0)] + [[x + (step if i == j else 0.0) for j, x in enumerate(x0)] for i in range(n)]
    values = [f(p) for p in simplex]
    for _ in range(iterations):
        order = sorted(range(n + 1), key=lambda i: values[i])
        simplex = [simplex[i] for i in order]
        values = [values[i] for i in order]
        if values[-1] - values[0] < tol:
            break
        centroid = [sum(p[j] for p in simplex[:-1]) / n for j in range(n)]
        worst = simplex[-1]
        reflected = [c + (c - w) for c, w in zip(centroid, worst)]
        fr = f(reflected)
        if fr < values[0]:
            expanded = [c + 2 * (c - w) for c, w in zip(centroid, worst)]
            fe = f(expanded)
            simplex[-1], values[-1] = (expanded, fe) if fe < fr else (reflected, fr)
        elif fr < values[-2]:
            simplex[-1], values[-1] = reflected, fr
        else:
            contracted = [c + 0.5 * (w - c) for c, w in zip(centroid, worst)]
            fc = f(contracted)
            if fc < values[-1]:
                simplex[-1], values[-1] = contracted, fc
            else:
                best = simplex[0]
                simplex = [best] + [[b + 0.5 * (x - b) for b, x in zip(best, p)] for p in simplex[1:]]
                values = [values[0]] + [f(p) for p in simplex[1:]]
    i = min(range(n + 1), key=lambda k: values[k])
    return simplex[i]


def fit(name: str) -> ModelParams:
    start = builtin_catalogue().get(name).model
    names = FREE[start.equation] + (DUAL_FREE if start.g3_zero_volts is not None else ())
    signs = [math.copysign(1.0, getattr(start, n)) for n in names]

    def build(x):
        return replace(start, **{n: s * math.exp(v) for n, s, v in zip(names, signs, x)})

    def f(x):
        try:
            return cost(build(x), DATA[name], start, names)
        except (OverflowError, ValueError, ZeroDivisionError):
            return 1e30

    x0 = [math.log(abs(getattr(start, n))) for n in names]
    # Deterministic multi-start: the start and +-0.5 along each log-parameter.
    starts = [x0] + [[x + (d if i == j else 0.0) for j, x in enumerate(x0)]
                     for i in range(len(x0)) for d in (0.5, -0.5)]
    if start.equation == "koren-triode":  # high-mu triodes may want a much larger kvb
        k = names.index("kvb")
        starts += [[x + (math.log(f) if j == k else 0.0) for j, x in enumerate(x0)] for f in (10, 30)]
    best = None
    for x in starts:
        for _ in range(3):  # restarts escape a collapsed simplex
            x = nelder_mead(f, x)
        if best is None or f(x) < f(best):
            best = x
    return build(best)


def main(argv) -> None:
    for name in argv or sorted(DATA):
        model = fit(name)
        shown = {k: float(f"{v:.4g}") for k, v in vars(model).items()
                 if isinstance(v, float) and k != "grid_perveance"}
        print(f"{name}: {shown}")
        for point in DATA[name]:
            errs = ", ".join(f"{k} {100 * e:+.1f}%" for k, e in errors(model, point).items())
            print(f"    {point}: {errs}")


if __name__ == "__main__":
    main(sys.argv[1:])
