"""Options of the stock-aware mapping (``plan_design``)."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable

SOLVERS = ("cbc", "highs")
OBJECTIVE_MODES = ("weighted", "lexicographic")

#: Default wall-clock budget of all integer solves of one plan, in seconds.  The
#: aggregated model is small (a few hundred variables even for thousands of
#: branches), so it is usually solved to optimum in well under a second; the limit
#: only matters for unusual stocks.  When it is hit, the best plan found so far is
#: returned and ``Solution.gap`` says how far from optimum it may be.
DEFAULT_TIME_LIMIT_S = 60.0


@dataclass(frozen=True)
class MappingOptions:
    """How :func:`planner.mapping.plan_design` solves.

    ``time_limit_s``: budget of all integer solves together (seconds, default
    60); ``solver``: "cbc" (the CBC that ships with pulp) or "highs" (needs the
    highspy package); ``gap``: relative optimality gap at which a solve may stop
    (0.0: prove the optimum); ``mode``: override of the stock file's objective
    mode ("weighted" or "lexicographic"); ``rules``: electrical design rules
    (``planner.electrical.DesignRules``; None: its defaults); ``synthesis_mode``
    ("aoi", "nand", "nor") and ``flatten_limit``: overrides passed to the stage
    layer; ``progress``: called with one line of text per step (for stderr).
    """

    time_limit_s: float = DEFAULT_TIME_LIMIT_S
    solver: str = "cbc"
    gap: float = 0.0
    mode: str | None = None
    rules: object | None = None
    synthesis_mode: str | None = None
    flatten_limit: int | None = None
    progress: Callable[[str], None] | None = field(default=None, compare=False)

    def __post_init__(self) -> None:
        if self.solver not in SOLVERS:
            raise ValueError(f"solver {self.solver!r}; expected one of {', '.join(SOLVERS)}")
        if self.mode is not None and self.mode not in OBJECTIVE_MODES:
            raise ValueError(f"objective mode {self.mode!r}; expected one of {', '.join(OBJECTIVE_MODES)}")
        if not self.time_limit_s > 0:
            raise ValueError(f"time_limit_s {self.time_limit_s}; expected a positive number of seconds")
        if not 0 <= self.gap < 1:
            raise ValueError(f"gap {self.gap}; expected a fraction from 0 up to (not including) 1")

    def say(self, text: str) -> None:
        """Report one step to the progress callback, if any."""
        if self.progress is not None:
            self.progress(text)
