"""What the stock lets a stage be built from: branch fan-in, branches per stage, mode."""

from __future__ import annotations

from dataclasses import dataclass

#: Default most branches on one plate node.  Every section hanging on the node
#: adds its plate-to-cathode capacitance (slowing the rising edge through the
#: plate load) and its cut-off leakage current (pulling the high level down);
#: six is a common practice limit for wired-OR plate nodes.  A stock file
#: overrides it with ``limits.max_branches_per_stage``.
DEFAULT_MAX_BRANCHES = 6

MODES = ("aoi", "nand", "nor")


@dataclass(frozen=True)
class SynthesisOptions:
    """Limits for :func:`planner.stages.synthesise`.

    ``allow_dual``: two-input branches from dual-control sections; ``diode_fanin``:
    most inputs of a diode AND on one grid (0: no diodes); ``allow_series``:
    two-input branches from two triode sections in series; ``max_branches``:
    branches per stage.  ``mode``: ``"aoi"`` any AND-OR-INVERT stage;
    ``"nand"`` every stage one branch (NAND or inverter); ``"nor"`` every branch
    one input (NOR or inverter).  ``flatten_limit``: a block whose function,
    with signals substituted, has at most this many inputs is minimised flat.
    """

    allow_dual: bool = True
    diode_fanin: int = 0
    max_branches: int = DEFAULT_MAX_BRANCHES
    mode: str = "aoi"
    flatten_limit: int | None = None
    allow_series: bool = False

    def __post_init__(self) -> None:
        if self.mode not in MODES:
            raise ValueError(f"mode {self.mode!r}; expected one of {', '.join(MODES)}")
        if self.diode_fanin < 0 or self.diode_fanin == 1:
            raise ValueError(f"diode_fanin {self.diode_fanin}; expected 0 (no diodes) or at least 2")
        if self.max_branches < 1:
            raise ValueError(f"max_branches {self.max_branches}; expected at least 1")
        if self.flatten_limit is not None and self.flatten_limit < 0:
            raise ValueError(f"flatten_limit {self.flatten_limit}; expected a count of inputs")
        if self.fanin == 1 and self.branch_limit == 1:
            raise ValueError("stages of one single-input branch are inverters only: no AND or OR "
                             "can be built; allow dual-control sections, diodes or more branches")

    @property
    def fanin(self) -> int:
        """Most inputs of one branch."""
        if self.mode == "nor":
            return 1
        two = 2 if (self.allow_dual or self.allow_series) else 1
        return max(two, self.diode_fanin)

    @property
    def branch_limit(self) -> int:
        """Most branches of one stage."""
        return 1 if self.mode == "nand" else self.max_branches

    def means_for(self, n_inputs: int) -> str:
        """The branch means used for ``n_inputs`` inputs: the fewest sections, then no diodes.

        >>> SynthesisOptions().means_for(2), SynthesisOptions(allow_dual=False, diode_fanin=4).means_for(2)
        ('dual', 'diode')
        """
        if n_inputs == 1:
            return "single"
        if n_inputs > self.fanin:
            raise ValueError(f"a branch of {n_inputs} inputs exceeds the fan-in {self.fanin}")
        if n_inputs == 2 and self.allow_dual:
            return "dual"
        if self.diode_fanin >= n_inputs:
            return "diode"
        return "series"
