"""Start-up and reading cost: what a command imports, and minterm lists read as tables."""

import itertools
import os
import subprocess
import sys
from pathlib import Path

import pytest
import sympy
from sympy.logic import SOPform

from planner.logic import output_support, output_table
from planner.spec import load_design

ROOT = Path(__file__).resolve().parent.parent
HEAVY = ("sympy", "pulp", "schemdraw", "matplotlib", "numpy", "scipy")


def _imported_after(code: str) -> list[str]:
    """The heavy modules loaded in a fresh interpreter after ``code`` runs."""
    probe = (f"import sys\n{code}\n"
             f"print('loaded:' + ','.join(m for m in {HEAVY!r} if m in sys.modules))")
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    done = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, env=env,
                          cwd=ROOT, timeout=120)
    assert done.returncode == 0, done.stderr
    line = [text for text in done.stdout.splitlines() if text.startswith("loaded:")][-1]
    return [m for m in line[len("loaded:"):].split(",") if m]


@pytest.mark.parametrize("argv", [["--help"], ["tubes"], ["tubes", "--json"]])
def test_light_commands_import_neither_sympy_nor_pulp(argv):
    code = ("from planner import cli\n"
            "try:\n"
            f"    cli.main({argv!r})\n"
            "except SystemExit:\n"
            "    pass")
    assert _imported_after(code) == []


def test_reading_the_spec_package_imports_no_sympy():
    assert "sympy" not in _imported_after("import planner.spec.design, planner.spec")


# Invented data: a minterm list over two inputs, out of input order, in a design of four.
DESIGN = """\
design: minterm-reading
inputs: [a, b, c, d]
outputs:
  f:
    over: [d, b, c]
    minterms: [0, 3, 5, 6]
    dont_care: [7]
"""


def test_reading_a_minterm_list_loads_no_sympy(tmp_path):
    path = tmp_path / "design.yaml"
    path.write_text(DESIGN)
    assert _imported_after(f"from planner.spec import load_design\nload_design({str(path)!r})") == []


def test_minterm_table_matches_sympy_sop_on_every_assignment(tmp_path):
    """Source: sympy's SOPform of the same minterm list, evaluated by sympy's subs."""
    path = tmp_path / "design.yaml"
    path.write_text(DESIGN)
    design = load_design(path)
    output = design.outputs[0]
    assert output.given_expr is None  # no sympy expression was built while reading
    assert output_support(design, output) == ("b", "c", "d")
    over = sympy.symbols("d b c")
    sop = SOPform(over, [0, 3, 5, 6])
    dc = SOPform(over, [7])
    for names in (("b", "c", "d"), ("a", "b", "c", "d"), ("d", "c", "b", "a")):
        table = output_table(design, output, names)
        for index, values in enumerate(itertools.product((0, 1), repeat=len(names))):
            point = {sympy.Symbol(n): bool(v) for n, v in zip(names, values)}
            bit = index  # names[0] is the most significant bit of the assignment number
            assert bool(table.on >> bit & 1) == bool(sop.subs(point) and not dc.subs(point)), (names, values)
            assert bool(table.dc >> bit & 1) == bool(dc.subs(point)), (names, values)
    # The lazily built expression is the OR of the minterms (sympy decides the equivalence).
    assert sympy.simplify_logic(output.expr ^ SOPform(over, [0, 3, 5, 6])) == sympy.false


def test_reading_expressions_loads_no_sympy():
    design = ROOT / "inventory_demo" / "design.yaml"
    assert _imported_after(f"from planner.spec import load_design\nload_design({str(design)!r})") == []


@pytest.mark.parametrize("design", [ROOT / "benchmarks" / "designs" / "seven_segment.yaml",
                                    ROOT / "inventory_demo" / "design.yaml"], ids=["minterm lists", "expressions"])
def test_a_warm_plan_loads_no_sympy(tmp_path, design):
    """With its networks and family in the cache, a design plans without sympy (minterm lists and
    expressions alike: expressions are formulas, not sympy objects)."""
    stock = ROOT / "inventory_demo" / "stock.yaml"
    env = dict(os.environ, PYTHONPATH=str(ROOT), TUBEPLAN_CACHE_DIR=str(tmp_path / "cache"))
    plan = [sys.executable, "-m", "planner.cli", "plan", str(design), "--stock", str(stock), "--quiet", "--out"]
    cold = subprocess.run(plan + [str(tmp_path / "cold")], capture_output=True, text=True, env=env, timeout=600)
    assert cold.returncode == 0, cold.stderr
    probe = ("import sys\nfrom planner import cli\n"
             f"cli.main(['plan', {str(design)!r}, '--stock', {str(stock)!r}, '--quiet', '--out', "
             f"{str(tmp_path / 'warm')!r}])\n"
             "print('loaded:' + ','.join(m for m in ('sympy', 'matplotlib') if m in sys.modules))")
    warm = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, env=env, timeout=600)
    assert warm.returncode == 0, warm.stderr
    assert warm.stdout.splitlines()[-1] == "loaded:"
    assert (tmp_path / "warm" / "plan.json").read_bytes() == (tmp_path / "cold" / "plan.json").read_bytes()
