"""The one family tree of tubeplan's exceptions, grouped by what the user sees.

Every exception class tubeplan defines derives from :class:`TubeplanError`
through one of the families below; the concrete classes live beside the code
that raises them (``planner.spec.InputError``, ``planner.pipeline.Shortage``,
...) and keep any built-in base their callers catch (``ValueError``,
``RuntimeError``, ``ArithmeticError``). ``planner.cli`` maps the families to
exit statuses in one table:

- :class:`BadInput`: a mistake in the user's files, options or output path,
  or a design beyond the limits: exit 2.
- :class:`ToolError`: an outside program tubeplan runs is missing or failed
  (ngspice, the synthesis engine, a solver): exit 2, saying how to install it.
- :class:`StockShort`: the stock or the supplies cannot carry the design:
  exit 3, with what is short.
- :class:`PlanningFailure`: one way of building something does not work (no
  template, an infeasible model, a fan-out that cannot be spread, a root that
  is not bracketed); the planner catches these and tries another way or notes
  it. One that escapes is a defect: exit 1.
- :class:`InternalError`: tubeplan found its own result wrong by a check that
  runs always (a network that does not compute the design): exit 1, report it.

A family is raised directly where no finer class is needed (a missing
``highspy``).

Exit 4 (a wrong vector or a negative margin) is a result of ``tubeplan
prove``, printed as its proof table, not an exception.

Other mistakes follow one rule (docs/architecture.md, "Errors"): a public
function or value type given an argument it does not accept raises
``ValueError`` (the caller's mistake; the spec and the cli validate user data
first or convert it into a :class:`BadInput` with its location); a condition
only a defect in tubeplan's own code can break is an ``assert``.

This module imports nothing, so ``tubeplan --help`` stays light.

>>> issubclass(StockShort, TubeplanError), issubclass(BadInput, StockShort)
(True, False)
"""


class TubeplanError(Exception):
    """Base of every exception tubeplan defines; catch it to catch them all."""


class BadInput(TubeplanError):
    """A mistake in what the user gave (files, options, output path) or a design beyond the limits: exit 2."""


class ToolError(TubeplanError):
    """An outside program tubeplan runs is missing or failed; the message says how to install it: exit 2."""


class StockShort(TubeplanError):
    """The stock or the supplies cannot carry the design; the message says what is short: exit 3."""


class PlanningFailure(TubeplanError):
    """One way of building something does not work; callers catch it and try another way or note it."""


class InternalError(TubeplanError):
    """tubeplan found its own result wrong by a check that always runs: a defect to report (exit 1)."""
