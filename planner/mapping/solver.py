"""Running one pulp model on CBC or HiGHS, with the bound and gap the solver reached."""

from __future__ import annotations

import contextlib
import inspect
import os
import re
import sys
import tempfile
import time
from dataclasses import dataclass

import pulp

from planner.errors import ToolError

#: Fixed seeds and CBC's serial search: the same model always takes the same path.  No ``threads``
#: option: ``-threads 1`` starts CBC's parallel search with one worker, which sometimes sits idle
#: for 10 s waiting on the main thread (benchmarks/solver_stalls.py); serial CBC never does.
_CBC_OPTIONS = ("randomSeed 1", "randomCbcSeed 1")
# pulp 3 warns that its bundled CBC will move to an extra in pulp 4; the warning is for pulp's
# own users, not ours, and older pulp has no such switch.
_CBC_QUIET = ({"_skip_v4_deprecation": True}
              if "_skip_v4_deprecation" in inspect.signature(pulp.PULP_CBC_CMD.__init__).parameters else {})
_BOUND_RE = re.compile(r"^Lower bound:\s*(-?[0-9.eE+-]+)", re.MULTILINE)


@dataclass(frozen=True)
class Outcome:
    """What one solve gave: ``status`` "optimal", "feasible" (a solution, optimum not
    proven), "infeasible" or "no solution"; ``objective`` of the model as solved;
    ``bound`` the best proven lower bound (equal to ``objective`` at optimum)."""

    status: str
    objective: float | None
    bound: float | None
    seconds: float

    @property
    def solved(self) -> bool:
        return self.status in ("optimal", "feasible")

    @property
    def gap(self) -> float:
        """Relative gap (objective - bound) / |objective|; 0 at a proven optimum."""
        if self.objective is None or self.bound is None:
            return 0.0
        return max(0.0, self.objective - self.bound) / max(abs(self.objective), 1e-9)


@contextlib.contextmanager
def _quiet_stdout():
    """Silence file descriptor 1 (HiGHS prints its banner from C before any option applies)."""
    sys.stdout.flush()
    saved = os.dup(1)
    try:
        with open(os.devnull, "wb") as null:
            os.dup2(null.fileno(), 1)
            yield
    finally:
        os.dup2(saved, 1)
        os.close(saved)


def highs_available() -> bool:
    """Whether pulp can reach HiGHS through the highspy package."""
    return pulp.HiGHS().available()


def solve(model: pulp.LpProblem, *, solver: str, time_limit_s: float, gap: float, relax: bool = False) -> Outcome:
    """Solve ``model`` (minimise) with CBC or HiGHS; ``relax``: its LP relaxation.

    CBC runs its serial search with fixed seeds; its proven bound is read from its
    log.  HiGHS's bound comes from its info record (``mip_dual_bound``).
    """
    start = time.perf_counter()
    limit = max(1.0, float(time_limit_s))
    if solver == "highs":
        if not highs_available():
            raise ToolError("solver 'highs' needs the highspy package (pip install highspy); "
                             "or use the default solver 'cbc'")
        engine = pulp.HiGHS(mip=not relax, msg=False, timeLimit=limit, gapRel=gap, threads=1,
                            random_seed=1)
        with _quiet_stdout():
            model.solve(engine)
        bound = None
        if not relax and model.sol_status in (pulp.LpSolutionOptimal, pulp.LpSolutionIntegerFeasible):
            bound = float(model.solverModel.getInfo().mip_dual_bound)
    else:
        handle, log = tempfile.mkstemp(prefix="tubeplan-cbc-", suffix=".log")
        os.close(handle)
        try:
            engine = pulp.PULP_CBC_CMD(mip=not relax, msg=False, timeLimit=limit, gapRel=gap,
                                       logPath=log, options=list(_CBC_OPTIONS), **_CBC_QUIET)
            model.solve(engine)
            with open(log, encoding="utf-8", errors="replace") as handle_log:
                found = _BOUND_RE.search(handle_log.read())
            bound = float(found.group(1)) if found else None
        finally:
            os.unlink(log)
    seconds = time.perf_counter() - start
    status = {pulp.LpSolutionOptimal: "optimal", pulp.LpSolutionIntegerFeasible: "feasible",
              pulp.LpSolutionInfeasible: "infeasible"}.get(model.sol_status, "no solution")
    if model.status == pulp.LpStatusInfeasible:
        status = "infeasible"
    objective = pulp.value(model.objective) if status in ("optimal", "feasible") else None
    if objective is not None:
        objective = float(objective)
        if bound is None and status == "optimal":
            bound = objective
        elif bound is not None:
            bound = min(bound, objective)
    return Outcome(status, objective, bound, seconds)
