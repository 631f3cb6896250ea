"""Stock-aware planning: the integer program over tube types, envelopes, windings and supplies.

Public API
----------
- :func:`plan_design` ``(design, stock, options=MappingOptions()) -> Plan``, raising :class:`Shortage`
- :class:`MappingOptions`, :data:`DEFAULT_TIME_LIMIT_S`
- the plan value types of :mod:`planner.mapping.plan` (the contract with the report layer)

See docs/mapping.md.
"""

from .options import DEFAULT_TIME_LIMIT_S, MappingOptions
from .plan import (BIAS_RAIL, GROUND, PLATE_RAIL, Budget, Clock, Envelope, Part, PlacedBranch, PlacedRegister,
                   PlacedStage, Plan, NetworkTried, SectionUse, Solution, StageTiming, StockUse, Timing, WindingLoad)
from .planning import Shortage, plan_design

__all__ = ["BIAS_RAIL", "DEFAULT_TIME_LIMIT_S", "GROUND", "PLATE_RAIL", "Budget", "Clock", "Envelope",
           "MappingOptions", "Part", "PlacedBranch", "PlacedRegister", "PlacedStage", "Plan", "SectionUse", "Shortage",
           "NetworkTried", "Solution", "StageTiming", "StockUse", "Timing", "WindingLoad", "plan_design"]
