"""tubeplan: plan digital logic built from vacuum tubes.

Two branches meet in ``mapping``: the logic branch ``spec`` -> ``logic`` ->
``stages`` (proven stage networks, knowing nothing of tubes) and the electrical
branch ``catalogue`` -> ``electrical`` (the logic family and its templates,
knowing nothing of the design).  ``mapping.plan_design`` chooses tube types with
an integer program and returns a ``Plan``; ``report`` writes it out; ``prove``
checks a written plan in ngspice.  ``pipeline`` composes ``tubeplan plan``;
``cli`` holds arguments and printing.  A module reaches another package only
through its ``__init__``.  See docs/architecture.md.
"""

from planner.errors import BadInput, InternalError, PlanningFailure, StockShort, ToolError, TubeplanError

__version__ = "0.1.0"

__all__ = ["BadInput", "InternalError", "PlanningFailure", "StockShort", "ToolError", "TubeplanError", "__version__"]
