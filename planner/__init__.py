"""tubeplan: plan digital logic built from vacuum tubes.

Two branches meet in ``pipeline``: the logic branch ``spec`` -> ``logic`` ->
``stages`` (proven stage networks, knowing nothing of tubes) and the electrical
branch ``catalogue`` -> ``electrical`` (the logic family and its templates,
knowing nothing of the design).  ``pipeline.plan_design`` tries the candidate
networks, each through ``mapping``'s integer program that chooses tube types,
and returns the best ``Plan``; ``report`` writes it out; ``prove`` checks a
written plan in ngspice.  ``cli`` holds arguments and printing.  A module reaches another package only
through its ``__init__``.  See docs/architecture.md.
"""

from planner.errors import BadInput, InternalError, PlanningFailure, StockShort, ToolError, TubeplanError

__version__ = "0.1.0"

__all__ = ["BadInput", "InternalError", "PlanningFailure", "StockShort", "ToolError", "TubeplanError", "__version__"]
