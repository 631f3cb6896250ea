"""One exception family tree (planner/errors.py), and each user-facing family's exit status through tubeplan.

Fixtures here are invented for these tests.
"""

from __future__ import annotations

import importlib
import json
import os
import pkgutil
import subprocess
import sys
from pathlib import Path

import pytest

import planner
from conftest import SMALL_DESIGN, SMALL_STOCK
from planner.cli import EXIT_INPUT, EXIT_INTERNAL, EXIT_SHORT, exit_status
from planner.errors import BadInput, InternalError, PlanningFailure, StockShort, ToolError, TubeplanError

ROOT = Path(__file__).resolve().parent.parent


def _exception_classes() -> dict[str, type]:
    """Every exception class a module of the planner package defines: class name -> class."""
    found = {}
    for info in pkgutil.walk_packages(planner.__path__, "planner."):
        if info.name == "planner.__main__":  # runs the command when imported
            continue
        module = importlib.import_module(info.name)
        for value in vars(module).values():
            if isinstance(value, type) and issubclass(value, BaseException) and value.__module__ == module.__name__:
                found[value.__qualname__] = value
    return found


#: Each class named in docs/architecture.md ("Errors and exit statuses"): its family, and the built-in
#: base its callers catch (kept so ``except ValueError`` and the like still work).
FAMILIES = {
    "InputError": (BadInput, Exception),
    "CatalogueDataError": (BadInput, ValueError),
    "BlockTooLarge": (BadInput, ValueError),
    "NgspiceMissing": (ToolError, Exception),
    "NgspiceFailed": (ToolError, Exception),
    "EngineMissing": (ToolError, RuntimeError),
    "Shortage": (StockShort, Exception),
    "Infeasible": (PlanningFailure, Exception),
    "NoTemplate": (PlanningFailure, Exception),
    "FanoutError": (PlanningFailure, ValueError),
    "EngineError": (PlanningFailure, RuntimeError),
    "NoBracket": (PlanningFailure, ValueError),
    "NoConvergence": (PlanningFailure, ArithmeticError),
    "ProofError": (InternalError, Exception),
}


def test_every_exception_class_of_the_package_is_a_tubeplan_error():
    classes = _exception_classes()
    assert set(FAMILIES) <= set(classes), sorted(set(FAMILIES) - set(classes))
    outside = sorted(name for name, cls in classes.items() if not issubclass(cls, TubeplanError))
    assert outside == []
    for name, (family, builtin) in FAMILIES.items():
        assert issubclass(classes[name], family) and issubclass(classes[name], builtin), name
    # One family each, so one exit status; EngineMissing is also an EngineError, so that a caller
    # catching engine failures sees it too (the cli's table puts ToolError first).
    families = (BadInput, ToolError, StockShort, PlanningFailure, InternalError)
    for name, cls in classes.items():
        if cls is not TubeplanError:
            mine = [f.__name__ for f in families if issubclass(cls, f)]
            assert len(mine) == (2 if name == "EngineMissing" else 1), (name, mine)


@pytest.mark.parametrize("name, status", [
    ("InputError", EXIT_INPUT), ("CatalogueDataError", EXIT_INPUT), ("BlockTooLarge", EXIT_INPUT),
    ("NgspiceMissing", EXIT_INPUT), ("NgspiceFailed", EXIT_INPUT), ("EngineMissing", EXIT_INPUT),
    ("Shortage", EXIT_SHORT),
    ("Infeasible", EXIT_INTERNAL), ("NoTemplate", EXIT_INTERNAL), ("FanoutError", EXIT_INTERNAL),
    ("EngineError", EXIT_INTERNAL), ("NoBracket", EXIT_INTERNAL), ("NoConvergence", EXIT_INTERNAL),
    ("ProofError", EXIT_INTERNAL),
])
def test_each_class_has_its_documented_exit_status(name, status):
    """The table of docs/limits.md and planner/cli.py: 2 input or tool, 3 short, else 1 (a defect)."""
    cls = _exception_classes()[name]
    problem = cls.__new__(cls)  # the status depends on the class alone, not on its arguments
    assert exit_status(problem) == status
    assert exit_status(ValueError("a misused argument")) == EXIT_INTERNAL


def test_bad_custom_type_field_is_exit_2_with_file_line_and_field(write, run_cli):
    # A CatalogueDataError inside a stock file, located by the spec reader.
    stock = write("stock.yaml", SMALL_STOCK + """\
custom_types:
  MY-TRIODE:
    kind: triode
    base: 7-pin miniature
    sections:
      - pins: {plate: 1, grid: 6, cathode: 7}
    heater: {volts: -6.3, amps: 0.15, pins: [3, 4]}
    ratings: {max_plate_volts: 250, max_plate_watts: 1.0}
    model: {equation: child-langmuir, mu: 20, perveance: 0.001}
    sources: {default: invented for this test}
""")
    status, out, err = run_cli("check", write("design.yaml", SMALL_DESIGN), "--stock", stock)
    assert (status, out) == (2, "")
    assert err == (f"{stock}:16: custom type 'MY-TRIODE', field 'heater.volts': expected a number greater "
                   "than zero, got -6.3\n")


def test_short_stock_is_exit_3_saying_what_is_short(write, run_cli):
    short = write("short.yaml", SMALL_STOCK.replace("12AT7: {count: 6}", "12AT7: {count: 0}")
                  .replace("6AU6: {count: 4}", "6AU6: {count: 1}"))
    status, out, err = run_cli("logic", write("design.yaml", SMALL_DESIGN), "--networks", "--stock", short)
    assert (status, out) == (3, "")
    assert err.splitlines()[-1] == ("tubeplan logic: the stock cannot carry the design: needs 4 more triode "
                                    "sections: 2 x 12AT7 or 3 x 6AU6")


def _hiding(tmp_path: Path, package: str, body: str) -> dict:
    """An environment whose first path entry holds a stand-in ``package`` (the installed one hidden)."""
    stand_in = tmp_path / "hide" / package
    stand_in.mkdir(parents=True)
    (stand_in / "__init__.py").write_text(body)
    path = os.pathsep.join([str(tmp_path / "hide"), str(ROOT)])
    return dict(os.environ, PYTHONPATH=path, TUBEPLAN_CACHE_DIR="")


@pytest.mark.parametrize("package, body, extra, message", [
    # pyosys without its yosys-abc binary: the multi-level synthesis engine is missing.
    ("pyosys", "", (), "tubeplan: the multi-level synthesis engine (yosys-abc from the 'pyosys' package) is not "
                       "installed; run: python3 -m pip install pyosys"),
    # highspy that cannot be imported: pulp has no HiGHS.
    ("highspy", "raise ImportError('hidden for this test')", ("--solver", "highs"),
     "tubeplan: solver 'highs' needs the highspy package (pip install highspy); or use the default solver 'cbc'"),
])
def test_a_missing_tool_is_exit_2_saying_how_to_install_it(tmp_path, write, package, body, extra, message):
    design, stock = write("design.yaml", SMALL_DESIGN), write("stock.yaml", SMALL_STOCK)
    out = tmp_path / "plan"
    done = subprocess.run([sys.executable, "-m", "planner.cli", "plan", str(design), "--stock", str(stock),
                           "--out", str(out), "--quiet", *extra], capture_output=True, text=True, cwd=tmp_path,
                          env=_hiding(tmp_path, package, body), timeout=600)
    assert (done.returncode, done.stdout, done.stderr) == (2, "", message + "\n")
    assert not out.exists()


@pytest.mark.ngspice
def test_a_plan_json_whose_stages_read_an_undriven_net_is_exit_2(tmp_path, write, run_cli):
    # Once an internal error (a KeyError): a hand-edited plan.json is the user's file.
    out = tmp_path / "plan"
    status, _, err = run_cli("plan", write("design.yaml", SMALL_DESIGN), "--stock", write("stock.yaml", SMALL_STOCK),
                             "--out", out, "--quiet")
    assert status == 0, err
    document = json.loads((out / "plan.json").read_text())
    stage = next(s for s in document["stages"] if s["kind"] == "inverting")
    stage["branches"][0]["inputs"][0] = "nowhere"
    (out / "plan.json").write_text(json.dumps(document))
    status, out_text, err = run_cli("prove", out, "--quiet")
    assert (status, out_text) == (2, "")
    assert err == (f"{out / 'plan.json'}:0: the plan's stages read nets nothing drives: {stage['output']}, nowhere; "
                   "re-plan\n")
