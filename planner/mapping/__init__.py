"""The integer program over tube types, envelopes, windings and supplies, and the placement of its answer.

Public API
----------
- :func:`build_problem` (one network's aggregated problem, with :func:`stage_ways` and
  :func:`tube_kinds`), :func:`solve_problem` (the optimum, or :class:`Infeasible`) and
  :func:`diagnose` (the fewest envelopes to buy and the overloads when it does not fit)
- :func:`place` (stages and registers onto sockets), :func:`build_plan` (the :class:`Plan`),
  :func:`plan_timing` (its timing estimate)
- registers: :func:`register_view`, :func:`register_classes`, :func:`clock_nets`,
  :class:`RegisterSetting`, :data:`COMPLEMENT`
- :class:`MappingOptions`, :data:`DEFAULT_TIME_LIMIT_S`
- the plan value types of :mod:`planner.mapping.plan` (the contract with the report layer)

Which networks are tried and which plan wins is the pipeline's work (:mod:`planner.pipeline`).
See docs/mapping.md.
"""

from .assemble import place
from .build import build_plan
from .model import Counts, Infeasible, Problem, Weights, diagnose, solve_problem
from .options import DEFAULT_TIME_LIMIT_S, MappingOptions
from .plan import (BIAS_RAIL, GROUND, PLATE_RAIL, Budget, Clock, Envelope, NetworkTried, Part, PlacedBranch,
                   PlacedRegister, PlacedStage, Plan, SectionUse, Solution, StageTiming, StockUse, Timing, WindingLoad)
from .problem import DIODE_FANIN, build_problem, stage_ways, tube_kinds
from .registers import COMPLEMENT, RegisterSetting, clock_nets, register_classes, register_view
from .timing import plan_timing

__all__ = ["BIAS_RAIL", "COMPLEMENT", "DEFAULT_TIME_LIMIT_S", "DIODE_FANIN", "GROUND", "PLATE_RAIL", "Budget", "Clock",
           "Counts", "Envelope", "Infeasible", "MappingOptions", "NetworkTried", "Part", "PlacedBranch",
           "PlacedRegister", "PlacedStage", "Plan", "Problem", "RegisterSetting", "SectionUse", "Solution",
           "StageTiming", "StockUse", "Timing", "Weights", "WindingLoad", "build_plan", "build_problem", "clock_nets",
           "diagnose", "place", "plan_timing", "register_classes", "register_view", "solve_problem", "stage_ways",
           "tube_kinds"]
