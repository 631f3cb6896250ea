"""Fit Koren model parameters: triodes to published plate curves, others to datasheet points.

Run: ``python benchmarks/fit_koren.py [TYPE ...]`` (``--curves``: only the
curve fits). Prints, per tube type, the fitted parameters (to paste into
planner/catalogue/builtin.py) and the model's error at every point used.

Curve fits (``CURVE_FITS``: 12AT7, 12AU7, 12AX7) use the digitized plate
curves of ECC81, ECC82 and ECC83 in ``../shared/reference/
plate-curves-digitized.csv`` (andmarti1424/loadline_plotter@6e7038f,
valves_data.csv, digitized from manufacturers' datasheets), all curves but
the held-out ones in ``HELD_OUT`` (kept for the tests as points the fit did
not use). Least squares (scipy ``least_squares``, trust-region reflective,
deterministic) over the log-parameters mu, ex, kg1, kp, kvb and tail_volts
of residuals: log(model / curve) at every point of 0.5 mA and more; (model -
curve) / 0.5 mA times 0.3 at the smaller non-zero points; and the model's
10 uA cut-off minus the curves' (``curve_cutoff_volts``) times 0.3 per volt
at every 25 V from 100 V to 400 V where the curves show it. Starts from the
published Koren Tube.lib set of the type (``../shared/reference/
tube-data-published.json``) with tail_volts 0.5 V. Cost: some 10^4 model
evaluations per type (a few seconds).

Point fits (``DATA``): least squares on log ratios (model / datasheet) of
plate current (weight 1), screen current (0.5), transconductance (0.4),
plate resistance (0.25) and the current at a stated cut-off voltage (0.3),
with a weak pull (0.02; 0.05 for the exponent ex) of every log-parameter
towards its starting value so that types with few published points stay
well posed and the exponent stays near the three-halves law. Minimised by
Nelder-Mead (J. A. Nelder and R. Mead, "A simplex method for function
minimization", Computer Journal 7, 1965) in log-parameter space from the
starting values and from +-0.5 along each log-parameter (and, for triodes,
with kvb times 10 and 30), keeping the best; pure Python. Cost: some 10^5
model evaluations per type (seconds). The operating points are the
"typical operation" rows of the datasheets named per type. Where the
datasheet gives a cathode resistor instead of a grid voltage, the grid
voltage is -Rk times the datasheet's cathode current.
"""

from __future__ import annotations

import json
import math
import os
import sys
from dataclasses import replace
from pathlib import Path

from planner.catalogue import ModelParams, builtin_catalogue, plate_current_amps, screen_current_amps

REFERENCE = Path(os.environ.get("TUBEPLAN_REFERENCE",
                               Path(__file__).resolve().parent.parent.parent / "shared" / "reference"))
"""``<repo>/../shared/reference`` (or $TUBEPLAN_REFERENCE): the published data (see its README)."""

CURVE_FITS = {"12AT7": "ECC81", "12AU7": "ECC82", "12AX7": "ECC83"}
"""Catalogue type -> the name of its curves in plate-curves-digitized.csv."""

HELD_OUT = {"12AT7": (-1.0, -5.0), "12AU7": (-6.0, -14.0), "12AX7": (-0.5, -1.5)}
"""Grid voltages of the curves the fit leaves out (interior curves, away
from the cut-off region): the tests check the model on them."""

FIT_MIN_MA = 0.5
"""Curve points of this current and more carry the relative-error residuals."""

CUTOFF_MA = 0.01
"""Current (10 uA, the catalogue's CUTOFF_AMPS) that marks the curves' cut-off."""

CUTOFF_PLATE_VOLTS = tuple(range(100, 401, 25))
"""Plate voltages where the fit matches the curves' cut-off."""

LOW_WEIGHT, CUTOFF_WEIGHT = 0.3, 0.3


def read_plate_curves(path: Path = REFERENCE / "plate-curves-digitized.csv") -> dict:
    """{valve: {grid volts: ((plate V, plate mA), ...)}} from the digitized curves file.

    Rows ``VALVE, GRID_VOLTS, Va1, Ia1_mA, Va2, Ia2_mA, ...``; comment rows
    (``#``) and the maximum-dissipation rows (``Pmax``) are skipped.
    """
    out: dict = {}
    for line in path.read_text().splitlines():
        fields = [f.strip() for f in line.split(",")]
        if not line.strip() or line.startswith("#") or fields[1] == "Pmax":
            continue
        values = [float(f) for f in fields[2:] if f]
        out.setdefault(fields[0], {})[float(fields[1])] = tuple(zip(values[::2], values[1::2]))
    return out


def curve_current_ma(points, plate_volts: float) -> float | None:
    """A curve's current at ``plate_volts`` by linear interpolation; 0 left of its foot, None past its end."""
    if plate_volts < points[0][0]:
        return 0.0
    for (v0, i0), (v1, i1) in zip(points, points[1:]):
        if v0 <= plate_volts <= v1:
            return i0 + (i1 - i0) * (plate_volts - v0) / (v1 - v0)
    return None


def curve_cutoff_volts(curves: dict, plate_volts: float, threshold_ma: float = CUTOFF_MA) -> float | None:
    """The curves' last visible current: grid voltage where their current at ``plate_volts`` falls to the threshold.

    Linear interpolation between the last curve above the threshold and the
    next (more negative) one at or below it; None if the curves do not
    bracket it at that plate voltage.
    """
    at = [(g, curve_current_ma(curves[g], plate_volts)) for g in sorted(curves, reverse=True)]
    at = [(g, i) for g, i in at if i is not None]
    for (g0, i0), (g1, i1) in zip(at, at[1:]):
        if i0 > threshold_ma >= i1:
            return g0 + (g1 - g0) * (i0 - threshold_ma) / (i0 - i1)
    return None


def published_koren(name: str, set_name: str = "Koren Tube.lib") -> dict:
    """One published Koren set of ``name`` from tube-data-published.json."""
    data = json.loads((REFERENCE / "tube-data-published.json").read_text())
    return data[name]["koren_params"]["value"][set_name]

# Each point: plate V, screen V (pentodes), grid V or cathode resistor, grid3 V,
# and the datasheet's plate mA, screen mA, gm mA/V, rp kilohm where given.
# A "cut" entry: at these voltages the plate current is about cut_ua microamperes.
DATA = {
    # Sylvania 6SN7 points (Koren's Tuparam file 6SN7Sylv.m, as converted in
    # Muhaarnox/AVT5229_TubeTester_GUI@7c13d3c8): every other point; the rest
    # (SN7_HELD_OUT) are left for the tests. Class A1 point: RCA data via the
    # Russian Wikipedia 6SN7 article.
    "6SN7": [
        dict(ep=250, eg=-8.0, ip=9.0, gm=2.6, rp=7.7),
        dict(ep=80, eg=0.0, ip=8.3),
        dict(ep=250, eg=-4.0, ip=22.0),
        dict(ep=260, eg=-8.0, ip=10.1),
        dict(ep=400, eg=-12.0, ip=19.4),
        dict(ep=450, eg=-24.0, ip=1.3),
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

SN7_HELD_OUT = ((160, 0.0, 21.0), (180, -8.0, 2.0), (300, -16.0, 0.5), (400, -16.0, 7.9), (500, -28.0, 0.9))
"""Sylvania 6SN7 points (plate V, grid V, plate mA) the 6SN7 fit leaves out."""

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


CURVE_FREE = ("mu", "ex", "kg1", "kp", "kvb", "tail_volts", "vct")
"""Fitted parameters: all but vct (a voltage of either sign) through their logarithms."""

ZERO_GRID_WEIGHT = 2.0
"""Weight of the 0 V curve's residuals: a conducting logic stage's grid sits near 0 V."""


def model_cutoff_volts(model: ModelParams, plate_volts: float) -> float:
    """Grid voltage of 10 uA plate current, by Brent's method to 1e-9 V (smooth for the fit)."""
    from scipy.optimize import brentq

    def f(g):
        return plate_current_amps(model, plate_volts=plate_volts, grid_volts=g) - CUTOFF_MA * 1e-3
    lo, hi = -4.0 * plate_volts, 5.0  # far beyond any mu >= 1 section's cut-off; past any offset
    return brentq(f, lo, hi, xtol=1e-9) if f(lo) < 0.0 < f(hi) else lo


def fit_curves(name: str) -> ModelParams:
    """Fit the Koren triode (with tail knee) of ``name`` to its curves, held-out curves left out."""
    from scipy.optimize import least_squares

    curves = read_plate_curves()[CURVE_FITS[name]]
    used = {g: pts for g, pts in curves.items() if g not in HELD_OUT[name]}
    main = [(v, g, i) for g, pts in used.items() for v, i in pts if i >= FIT_MIN_MA]
    low = [(v, g, i) for g, pts in used.items() for v, i in pts if 0.0 < i < FIT_MIN_MA]
    cuts = [(v, c) for v in CUTOFF_PLATE_VOLTS if (c := curve_cutoff_volts(used, v)) is not None]
    start = dict(published_koren(name), tail_volts=0.5, vct=0.0)
    base = builtin_catalogue().get(name).model

    def build(x):
        return replace(base, **{n: v if n == "vct" else math.exp(v) for n, v in zip(CURVE_FREE, x)})

    def residuals(x):
        m = build(x)

        def ma(v, g):
            return plate_current_amps(m, plate_volts=v, grid_volts=g) * 1e3
        out = [(ZERO_GRID_WEIGHT if g == 0.0 else 1.0) * math.log(max(ma(v, g), 1e-12) / i) for v, g, i in main]
        out += [LOW_WEIGHT * (ma(v, g) - i) / FIT_MIN_MA for v, g, i in low]
        out += [CUTOFF_WEIGHT * (model_cutoff_volts(m, v) - c) for v, c in cuts]
        return out

    result = least_squares(residuals, [start[n] if n == "vct" else math.log(start[n]) for n in CURVE_FREE],
                           method="trf")
    fitted = build(result.x)
    return replace(fitted, **{n: float(f"{getattr(fitted, n):.4g}") for n in CURVE_FREE})


def curve_report(name: str, model: ModelParams) -> str:
    """Mean / max relative error (points of 0.5 mA and more), fitted and held out, and cut-offs."""
    curves = read_plate_curves()[CURVE_FITS[name]]
    lines = []
    for label, keep in (("fitted curves", lambda g: g not in HELD_OUT[name]),
                        ("held-out curves", lambda g: g in HELD_OUT[name])):
        errs = [abs(plate_current_amps(model, plate_volts=v, grid_volts=g) * 1e3 / i - 1.0)
                for g, pts in curves.items() if keep(g) for v, i in pts if i >= FIT_MIN_MA]
        lines.append(f"    {label}: {len(errs)} points, mean {100 * sum(errs) / len(errs):.1f} %, "
                     f"max {100 * max(errs):.1f} %")
    for v in (150, 250):
        lines.append(f"    cut-off at {v} V: model {model_cutoff_volts(model, v):.2f} V, "
                     f"curves {curve_cutoff_volts(curves, v):.2f} V")
    return "\n".join(lines)


def main(argv) -> None:
    curves_only = "--curves" in argv
    argv = [a for a in argv if a != "--curves"]
    for name in argv or sorted(CURVE_FITS):
        if name in CURVE_FITS:
            model = fit_curves(name)
            print(f"{name} (curves {CURVE_FITS[name]}, held out {HELD_OUT[name]}): "
                  + ", ".join(f"{n} {getattr(model, n):g}" for n in CURVE_FREE))
            print(curve_report(name, model))
    if curves_only:
        return
    for name in argv or sorted(DATA):
        if name in CURVE_FITS:
            continue
        model = fit(name)
        shown = {k: float(f"{v:.4g}") for k, v in vars(model).items()
                 if isinstance(v, float) and k != "grid_perveance"}
        print(f"{name}: {shown}")
        for point in DATA[name]:
            errs = ", ".join(f"{k} {100 * e:+.1f}%" for k, e in errors(model, point).items())
            print(f"    {point}: {errs}")


if __name__ == "__main__":
    main(sys.argv[1:])
