"""Designs that reuse signals heavily never hang the tool (invented fixtures)."""

from __future__ import annotations

import pytest

from planner.logic import design_table
from planner.formula import Formula
from planner.spec import InputError, load_design


def _chain(tmp_path, links: int, inputs=("a", "b", "c")):
    """Each signal uses the previous one twice: written out, the last doubles in size per link."""
    lines = ["design: chain", f"inputs: [{', '.join(inputs)}]", "signals:", "  s0: a & b | c"]
    lines += [f"  s{i}: (s{i - 1} & a | ~s{i - 1} & b) ^ c" for i in range(1, links)]
    lines += ["outputs:", f"  y: s{links - 1} | a"]
    path = tmp_path / "chain.yaml"
    path.write_text("\n".join(lines) + "\n")
    return load_design(path)


def reference(a: int, b: int, c: int, links: int) -> int:
    """The chain evaluated step by step with Python integers (independent of the tool)."""
    s = (a & b) | c
    for _ in range(1, links):
        s = ((s & a) | ((1 - s) & b)) ^ c
    return s | a


def test_signal_tables_are_linear_in_chain_length(tmp_path, run_cli):
    design = _chain(tmp_path, 70)
    table = design_table(design, design.outputs[0].expr)
    for index in range(8):
        a, b, c = (index >> 2) & 1, (index >> 1) & 1, index & 1
        assert (table.on >> index) & 1 == reference(a, b, c, 70)
    status, out, _ = run_cli("check", tmp_path / "chain.yaml")
    assert status == 0 and "8 of 8" in out
    status, out, _ = run_cli("logic", tmp_path / "chain.yaml", "--json")
    assert status == 0 and '"y"' in out


def test_writing_out_an_exponential_expression_is_refused(tmp_path):
    design = _chain(tmp_path, 40)
    nodes, depth = design.flattened_shape(design.outputs[0].expr)
    assert nodes > 2 ** 40  # counted, not built
    with pytest.raises(InputError, match="grows to"):
        design.flatten(design.outputs[0].expr, line=7)
    small = _chain(tmp_path, 3)
    assert isinstance(small.flatten(small.outputs[0].expr), Formula)
