"""``tubeplan logic DESIGN [--json]``: both polarities per output, checked by equivalence."""

import json

from planner.logic import equivalent
from planner.spec import load_design, parse_expression

# Invented data: a small design with a signal, a don't-care set and a minterm list.
DESIGN = """\
design: logic-cli-fixture
inputs: [a, b, c, d]
signals:
  ab: a & b
outputs:
  y: ab | ~a & ~b & c
  half: {expr: a ^ b, dont_care: a & b}
  table:
    over: [d, c]
    minterms: [0, 3]
    dont_care: [1]
  one: a | ~a
"""


def test_json_forms_equal_each_output_on_its_care_set(write, run_cli):
    path = write("design.yaml", DESIGN)
    status, out, err = run_cli("logic", path, "--json")
    assert status == 0, err
    document = json.loads(out)  # exactly one JSON document
    design = load_design(path)
    assert set(document["outputs"]) == {o.name for o in design.outputs}
    for output in design.outputs:
        entry = document["outputs"][output.name]
        expr, dc = design.flatten(output.expr), design.flatten(output.dont_care)
        for key in ("sop", "inverted"):
            assert equivalent(parse_expression(entry[key]), expr, care=~dc), (output.name, key)
        assert entry["exact"] is True
    half = document["outputs"]["half"]
    assert (half["sop"], half["inverted"]) == ("a | b", "~(~a & ~b)")
    assert half["literals"] == {"sop": 2, "inverted": 2}
    table = document["outputs"]["table"]  # d, c in design order is c, d: on at c=d
    assert table["sop"] == "c | ~d" and table["literals"]["sop"] == 2
    assert document["outputs"]["one"] == {"sop": "1", "inverted": "1", "literals": {"sop": 0, "inverted": 0},
                                          "exact": True, "gap": {"sop": 0.0, "inverted": 0.0}}


def test_text_table_shows_both_polarities(write, run_cli):
    status, out, _ = run_cli("logic", write("design.yaml", DESIGN))
    assert status == 0
    lines = out.splitlines()
    assert lines[0].split() == ["output", "inputs", "polarity", "form", "literals", "minimum"]
    y = next(i for i, line in enumerate(lines) if line.startswith("y "))
    assert "sum" in lines[y] and "a & b" in lines[y] and "proven" in lines[y]
    assert "inverted" in lines[y + 1] and "~(" in lines[y + 1]
    assert "can kill" in out  # the safety caution


def test_progress_on_stderr_past_the_exact_range(write, run_cli):
    names = [f"x{k}" for k in range(12)]
    parity = " ^ ".join(names)
    design = f"design: wide\ninputs: [{', '.join(names)}]\noutputs:\n  p: {parity}\n"
    status, out, err = run_cli("logic", write("wide.yaml", design), "--json")
    assert status == 0
    assert "minimising p over 12 inputs" in err
    entry = json.loads(out)["outputs"]["p"]
    # Parity: all 2**11 minterms are essential primes, so even the heuristic is proven.
    assert entry["literals"] == {"sop": 12 * 2 ** 11, "inverted": 12 * 2 ** 11} and entry["exact"]
    # Too long for the design parser: check the text directly.  2**11 distinct full
    # products, each with an odd number of positive literals, is exactly odd parity.
    products = entry["sop"].split(" | ")
    assert len(set(products)) == 2 ** 11
    for product in products:
        literals = product.split(" & ")
        assert sorted(lit.lstrip("~") for lit in literals) == sorted(names)
        assert sum(not lit.startswith("~") for lit in literals) % 2 == 1


def test_bad_design_is_one_message_and_status_2(write, run_cli):
    status, out, err = run_cli("logic", write("bad.yaml", "design: x\ninputs: [a]\noutputs:\n  y: a &\n"))
    assert status == 2 and out == ""
    assert "bad.yaml:" in err and "Traceback" not in err
