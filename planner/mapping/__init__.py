"""Stock-aware planning: the integer program over tube types, envelopes, windings and supplies."""

from .plan import (BIAS_RAIL, GROUND, PLATE_RAIL, Budget, Envelope, Part, PlacedBranch, PlacedStage, Plan,
                   SectionUse, Solution, StockUse, WindingLoad)

__all__ = ["BIAS_RAIL", "GROUND", "PLATE_RAIL", "Budget", "Envelope", "Part", "PlacedBranch", "PlacedStage",
           "Plan", "SectionUse", "Solution", "StockUse", "WindingLoad"]
