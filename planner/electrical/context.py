"""Per-type facts a design needs: the tolerance box, cut-off voltages, screen feeds.

Private to ``planner.electrical``.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

from planner.catalogue import TubeType, cutoff_grid_volts

from .circuit import ScreenFeed, SectionState, has_screen, section_amps
from .eseries import resistor_rating_watts, series_values
from .rules import DesignRules, Rails

GRID_ROLES = ("grid", "grid3", "diode")
"""Receiver roles: g1 from a divider, g3 from a divider, g1 behind an AND-gate diode."""


class Box:
    """The tolerance box: every resistor within nominal * (1 +- t), every supply within +- s.

    ``sign`` arguments are -1 (low end), 0 (nominal) or +1 (high end).
    For the bias supply, +1 is the most negative end.
    """

    def __init__(self, rails: Rails, rules: DesignRules):
        self.rails, self.rules = rails, rules
        self.t, self.s = rules.resistor_tolerance, rules.supply_tolerance
        self._all = series_values(rules.series, rules.min_ohms, rules.max_ohms)

    def r(self, ohms: float, sign: int) -> float:
        """A resistor at one end of its tolerance."""
        return ohms * (1 + sign * self.t)

    def vb(self, sign: int) -> float:
        """The plate supply at one end of its tolerance."""
        return self.rails.plate_volts * (1 + sign * self.s)

    def vc(self, sign: int) -> float:
        """The bias supply (negative) at one end; +1 is the most negative."""
        return self.rails.bias_volts * (1 + sign * self.s)

    def values(self, lo_ohms: float | None = None, hi_ohms: float | None = None) -> tuple[float, ...]:
        """Preferred values of the rules' series within the rules' range (and [lo, hi])."""
        if lo_ohms is None and hi_ohms is None:
            return self._all
        lo, hi = lo_ohms or 0.0, hi_ohms or float("inf")
        return tuple(v for v in self._all if lo * (1 - 1e-12) <= v <= hi * (1 + 1e-12))


@dataclass(frozen=True)
class ScreenOption:
    """A screen feed (nominal values) that passes the screen checks, with its worst figures."""

    feed: ScreenFeed
    series_watts: float
    shunt_watts: float | None
    screen_watts_worst: float
    open_volts_max: float


def _coarse(box: Box, lo: float, hi: float) -> tuple[float, ...]:
    """E6 values in [lo, hi] within the rules' range."""
    lo, hi = max(lo, box.rules.min_ohms), min(hi, box.rules.max_ohms)
    return series_values("E6", lo, hi) if lo <= hi else ()


class TubeContext:
    """One tube type under given rails and rules: its checks that do not depend on levels."""

    def __init__(self, tube: TubeType, wear: float, rails: Rails, rules: DesignRules):
        if not 0 < wear <= 1:
            raise ValueError(f"{tube.name}: condition must be in (0, 1], got {wear}")
        # Types whose model rests on recalled figures get the rules' wider allowance.
        self.allowance = rules.unsourced_allowance if tube.model_from_memory else 0.0
        self.tube, self.wear, self.rules = tube, wear * (1.0 - self.allowance), rules
        self.strong = 1.0 + self.allowance
        """Current of the strongest tube, as a fraction of the model's."""
        self.box = Box(rails, rules)
        self.screened = has_screen(tube)
        self.dual = tube.model.g3_zero_volts is not None
        means = sorted({m for s in tube.amplifying_sections for m in s.means})
        if rules.diodes != "none" and "single" in means:
            means.append("diode")
        self.means = tuple(means)
        self.follower_capable = tube.model.equation in ("koren-triode", "child-langmuir") and any(
            s.kind == "triode" for s in tube.sections)
        self.max_grid_amps = tube.max_grid_amps if tube.max_grid_amps is not None else rules.max_grid_amps

    @property
    def name(self) -> str:
        return self.tube.name

    def roles(self, means: str) -> tuple[str, ...]:
        """Receiver roles a branch of ``means`` needs."""
        return {"single": ("grid",), "dual": ("grid", "grid3"), "diode": ("diode",)}[means]

    @cached_property
    def grid_high_max_volts(self) -> float:
        """Highest voltage a clamping grid reaches: the three-halves law at the grid-current cap."""
        k = self.tube.model.grid_perveance
        return 0.0 if k is None else (self.max_grid_amps / k) ** (2.0 / 3.0)

    @cached_property
    def plate_rating_problem(self) -> tuple[str, float, str] | None:
        """(limit, excess, unit) if the worst-case plate supply exceeds the plate rating."""
        excess = self.box.vb(+1) - self.tube.max_plate_volts
        return ("max plate voltage", excess, "V") if excess > 0 else None

    # --- screens ----------------------------------------------------------------

    def section(self, grid: float, grid3: float, wear: float, feed: ScreenFeed | None,
                sign: int) -> SectionState:
        """A section state; ``sign`` -1 is the weakest screen feed end, +1 the strongest."""
        if feed is None or not self.screened:
            return SectionState(self.tube, grid, grid3, wear, None)
        shunt = None if feed.shunt_ohms is None else self.box.r(feed.shunt_ohms, sign)
        return SectionState(self.tube, grid, grid3, wear, ScreenFeed(self.box.r(feed.series_ohms, -sign), shunt))

    def _screen_stress(self, feed: ScreenFeed) -> tuple[float, float]:
        """(screen watts, series-resistor volts), worst over the screen's hardest states.

        Strongest tube and feed, grids at their highest, plate at the highest
        supply (screen current never falls as the plate rises); for a
        dual-control section also g3 cut off hard, when the whole cathode
        current lands on the screen.
        """
        vb, vg = self.box.vb(+1), self.grid_high_max_volts
        g3_states = (vg, self.box.vc(+1)) if self.dual else (0.0,)
        watts = drop = 0.0
        for g3 in g3_states:
            s = self.section(vg, g3, self.strong, feed, +1)
            _, i_s, vs = section_amps(s, vb, vb)
            watts, drop = max(watts, vs * i_s), max(drop, vb - vs)
        return watts, drop

    @cached_property
    def screen_options(self) -> tuple[ScreenOption, ...]:
        """Screen feeds that keep screen voltage, screen dissipation and resistor watts in ratings.

        Scheme: the screen is fed from B+ through a series resistor (and
        bypassed for signals). When B+ can exceed the type's screen voltage
        rating (a cut-off section draws no screen current, so its screen
        rises to the open-circuit voltage), a shunt resistor to ground makes
        a bleeder whose open-circuit voltage stays within the rating. For
        each shunt value the series value is the smallest that keeps that
        rating. Candidate series (or shunt) values are the E6 values (a
        subset of every series allowed) from 10 kOhm up, which keeps the
        driver search small. Cost: a few screen solves per candidate.
        """
        if not self.screened:
            return ()
        box, tube = self.box, self.tube
        vb = box.vb(+1)
        limit = tube.max_screen_volts
        feeds = []
        if limit is None or vb <= limit:
            feeds = [ScreenFeed(r) for r in _coarse(box, 10e3, box.rules.max_ohms)]
        else:
            ratio = vb / limit - 1.0
            for rb in _coarse(box, 10e3, 2.2e6):
                need = rb * (1 + box.t) * ratio / (1 - box.t)
                ra = next(iter(box.values(need)), None)
                if ra is not None:
                    feeds.append(ScreenFeed(ra, rb))
        options = []
        for feed in feeds:
            strong = ScreenFeed(box.r(feed.series_ohms, -1),
                                None if feed.shunt_ohms is None else box.r(feed.shunt_ohms, +1))
            open_max = strong.open_volts(vb)
            if limit is not None and open_max > limit:
                continue
            watts, drop = self._screen_stress(feed)
            if tube.max_screen_watts is not None and watts > tube.max_screen_watts:
                continue
            series_w = resistor_rating_watts(drop**2 / strong.series_ohms)
            shunt_w = None if feed.shunt_ohms is None else resistor_rating_watts(
                open_max**2 / box.r(feed.shunt_ohms, -1))
            if series_w is None or (feed.shunt_ohms is not None and shunt_w is None):
                continue
            options.append(ScreenOption(feed, series_w, shunt_w, watts, open_max))
        return tuple(options)

    @cached_property
    def screen_cutoff_volts(self) -> float | None:
        """Screen voltage for cut-off figures: the highest any screen option lets a cut-off screen reach."""
        if not self.screened:
            return None
        return max((o.open_volts_max for o in self.screen_options), default=self.box.vb(+1))

    # --- cut-off ----------------------------------------------------------------

    def cutoff_volts(self, role: str) -> float:
        """Cut-off voltage of the grid in ``role`` for a new tube, worst case.

        Plate at the highest supply, screen at its highest cut-off voltage,
        the other control grid (dual-control types) at its highest high
        level: all make cut-off deeper. Cut-off is where the plate current
        falls to the catalogue's ``CUTOFF_AMPS`` (``cutoff_grid_volts``, a
        bisection to 1 mV), taken (1 + allowance) times deeper for a type
        whose model is from memory. KeyError for a role the type does not have.
        """
        return self._cutoffs[role]

    @cached_property
    def _cutoffs(self) -> dict[str, float]:
        out = {}
        for role in GRID_ROLES:
            try:
                out[role] = self._cutoff(role)
            except ValueError:
                continue
        return out

    def _cutoff(self, role: str) -> float:
        other = self.grid_high_max_volts if self.dual else 0.0
        volts = cutoff_grid_volts(self.tube, plate_volts=self.box.vb(+1), screen_volts=self.screen_cutoff_volts,
                                  grid3=role == "grid3", other_grid_volts=other)
        return volts * (1.0 + self.allowance)

    def has_role(self, role: str) -> bool:
        """True when the grid in ``role`` exists and can be cut off."""
        return role in self._cutoffs
