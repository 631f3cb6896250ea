"""The corners a plan is proven at, from the corner parameters its deck carries.

Private to ``planner.prove``. The deck (``planner.report.spice_deck``) carries
``supply_bplus``, ``supply_bias`` (fractions of nominal), ``supply_tol``,
``rdir`` (resistors: 0 nominal, +1 against highs, -1 against lows) and per
tube type ``wear_TYPE`` (fraction of nominal current, 1 new) with
``worn_TYPE`` (the wear the plan was designed for).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

CORNER_PARAMS = ("supply_bplus", "supply_bias", "rdir")
"""Parameters every corner sets (with the tubes' ``wear_TYPE``)."""


@dataclass(frozen=True)
class Corner:
    """One corner: its ``name``, the parameter values it sets, and the level it is meant to hurt
    (``against``: "highs", "lows" or "both" for a corner that is not one-sided)."""

    name: str
    settings: tuple[tuple[str, float], ...]
    against: str = "both"


def deck_params(deck: str) -> dict[str, float]:
    """Every numeric ``.param NAME=VALUE`` of a deck (names lower case; later lines win).

    >>> deck_params(".param a=1 B=-2.5e3\\n.param c={a+1}")
    {'a': 1.0, 'b': -2500.0}
    """
    params = {}
    for line in re.findall(r"(?mi)^\s*\.param\s+(.*)$", deck):
        number = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:e[-+]?\d+)?"
        for name, value in re.findall(rf"(\w+)\s*=\s*({number})(?=\s|$)", line, re.IGNORECASE):
            params[name.lower()] = float(value)
    return params


def plan_corners(params: dict[str, float]) -> tuple[Corner, ...]:
    """The corners for a deck's parameters (``deck_params``); () when it has no corner parameters.

    Nominal (the deck as written); the tubes worn to the wear the plan was
    designed for; the four combinations of the supplies at their tolerance
    extremes; the resistors at the end of their tolerance against highs and
    against lows; and the combined worst case for each level: highs with new
    tubes (most cut-off leakage), B+ low and the resistors against highs,
    lows with worn tubes, B+ high and the resistors against lows, each with
    the bias supply at both ends. Cost O(tube types).

    >>> [c.name for c in plan_corners({"supply_tol": 0.05, "rdir": 0, "worn_12au7": 0.7})][:3]
    ['nominal', 'tubes worn', 'B+ 95 %, bias 95 %']
    """
    if "supply_tol" not in params or "rdir" not in params:
        return ()
    tol = params["supply_tol"]
    worn = {f"wear_{name[5:]}": value for name, value in sorted(params.items()) if name.startswith("worn_")}
    new = {name: 1.0 for name in worn}
    lo, hi = 1 - tol, 1 + tol

    def pct(x: float) -> str:
        return f"{x * 100:.4g} %"

    corners = [Corner("nominal", ()), Corner("tubes worn", tuple(worn.items()), "lows")]
    for bplus in (lo, hi):
        for bias in (lo, hi):
            corners.append(Corner(f"B+ {pct(bplus)}, bias {pct(bias)}",
                                  (("supply_bplus", bplus), ("supply_bias", bias))))
    corners += [Corner("resistors against highs", (("rdir", 1.0),), "highs"),
                Corner("resistors against lows", (("rdir", -1.0),), "lows")]
    for bias in (lo, hi):
        corners.append(Corner(f"worst for highs, bias {pct(bias)}",
                              (*new.items(), ("supply_bplus", lo), ("supply_bias", bias), ("rdir", 1.0)), "highs"))
    for bias in (lo, hi):
        corners.append(Corner(f"worst for lows, bias {pct(bias)}",
                              (*worn.items(), ("supply_bplus", hi), ("supply_bias", bias), ("rdir", -1.0)), "lows"))
    return tuple(corners)


def corner_values(corner: Corner, params: dict[str, float]) -> tuple[tuple[str, float], ...]:
    """Every corner parameter's value at ``corner``: the deck's own value unless the corner sets it."""
    names = [n for n in CORNER_PARAMS if n in params] + sorted(n for n in params if n.startswith("wear_"))
    values = {n: params[n] for n in names}
    values.update(corner.settings)
    return tuple(sorted(values.items()))
