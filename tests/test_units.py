"""SI units inside, mA and pF at the edges (planner/units.py): names say the unit, file values round-trip."""

import ast
import re
from decimal import Decimal
from pathlib import Path

from hypothesis import given
from hypothesis import strategies as st

import planner
from planner.units import amps_from_milliamps, as_written, farads_from_picofarads, milliamps, picofarads

ROOT = Path(planner.__file__).parent

#: The reports' rail figures, made from the plan's amperes where the report is written, are in mA as printed.
REPORT_FIGURES = {("report/budgets.py", "RailBudget")}


def _file_number(digits: int, exponent: int) -> float:
    """A number as a file writes it: up to 15 significant digits, parsed as Python parses YAML floats."""
    return float(Decimal(digits).scaleb(exponent))


@given(st.integers(1, 10**15 - 1), st.integers(-20, 0))
def test_a_file_value_in_ma_reads_to_amperes_and_writes_back_as_written(digits, exponent):
    value = _file_number(digits, exponent)
    assert as_written(milliamps(amps_from_milliamps(value))) == value


@given(st.integers(1, 10**15 - 1), st.integers(-20, 0))
def test_a_file_value_in_pf_reads_to_farads_and_writes_back_as_written(digits, exponent):
    value = _file_number(digits, exponent)
    assert as_written(picofarads(farads_from_picofarads(value))) == value


def test_no_dataclass_field_is_named_in_ma_or_pf():
    # A field named *_ma or *_pf inside the package would hold mA or pF: SI units inside (issue 18).
    found = []
    for path in sorted(ROOT.rglob("*.py")):
        rel = path.relative_to(ROOT).as_posix()
        for node in ast.walk(ast.parse(path.read_text(), str(path))):
            if not isinstance(node, ast.ClassDef) or (rel, node.name) in REPORT_FIGURES:
                continue
            for item in node.body:
                if (isinstance(item, ast.AnnAssign) and isinstance(item.target, ast.Name)
                        and re.search(r"_(ma|pf)(_|$)", item.target.id)):
                    found.append(f"{rel}: {node.name}.{item.target.id}")
    assert found == []
