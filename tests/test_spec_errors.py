"""Every kind of mistake in a design or stock file gives one FILE:LINE message and exit 2.

All files here are invented fixtures.
"""

from __future__ import annotations

import subprocess
import sys

import pytest

from conftest import GOOD_DESIGN, GOOD_STOCK

# (name, design text, line expected, words the message must contain)
DESIGN_MISTAKES = [
    ("not a mapping", "- a\n- b\n", 1, "must be a mapping"),
    ("missing outputs", "design: d\ninputs: [a]\n", 1, "no outputs and no registers"),
    ("unknown top key", "design: d\ninputs: [a]\noutput:\n  y: a\n", 3, "did you mean 'outputs'"),
    ("duplicate input", "design: d\ninputs: [a, b, a]\noutputs:\n  y: a\n", 2, "listed twice"),
    ("bad input name", "design: d\ninputs: [a, 2b]\noutputs:\n  y: a\n", 2, "not a valid name"),
    ("keyword input name", "design: d\ninputs: [a, xor]\noutputs:\n  y: a\n", 2, "not a valid name"),
    ("reserved net name", "design: d\ninputs: [a, n3]\noutputs:\n  y: a\n", 2, "reserved"),
    ("complement not bool", "design: d\ninputs:\n  - {name: a, complement: maybe}\noutputs:\n  y: a\n",
     3, "true or false"),
    ("undefined name", "design: d\ninputs: [a]\noutputs:\n  y: a & q\n", 4, "'q', which is not an input"),
    ("syntax error", "design: d\ninputs: [a, b]\noutputs:\n  y: a & | b\n", 4, "column 5"),
    ("unbalanced parenthesis", "design: d\ninputs: [a, b]\noutputs:\n  y: (a & b\n", 4, "never closed"),
    ("bad character", "design: d\ninputs: [a, b]\noutputs:\n  y: a + b\n", 4, "unexpected character '+'"),
    ("signal cycle", "design: d\ninputs: [a]\nsignals:\n  s: t & a\n  t: s | a\noutputs:\n  y: s\n",
     None, "cycle: s -> t -> s"),
    ("signal named like input", "design: d\ninputs: [a]\nsignals:\n  a: 1\noutputs:\n  y: a\n", 4,
     "same name as an input"),
    ("output uses output", "design: d\ninputs: [a]\noutputs:\n  y: a\n  z: ~y\n", 5, "outputs cannot feed"),
    ("minterm out of range",
     "design: d\ninputs: [a, b]\noutputs:\n  y:\n    over: [a, b]\n    minterms: [1, 4]\n", 6, "out of range"),
    ("minterm also dont-care",
     "design: d\ninputs: [a, b]\noutputs:\n  y:\n    over: [a, b]\n    minterms: [1]\n    dont_care: [1]\n",
     7, "both as a minterm and as a don't-care"),
    ("over names a non-input",
     "design: d\ninputs: [a, b]\nsignals:\n  s: a\noutputs:\n  y:\n    over: [a, s]\n    minterms: [1]\n",
     7, "not an input"),
    ("minterm not a number",
     "design: d\ninputs: [a, b]\noutputs:\n  y:\n    over: [a, b]\n    minterms: [1, two]\n", 6, "whole numbers"),
    ("duplicate key", "design: d\ninputs: [a]\noutputs:\n  y: a\n  y: ~a\n", 5, "appears twice"),
    ("broken yaml", "design: d\ninputs: [a\noutputs:\n  y: a\n", None, "not valid YAML"),
    ("empty file", "", 1, "empty"),
    ("python tag injection",
     "design: !!python/object/apply:os.system ['echo INJECTED > injected.txt']\ninputs: [a]\noutputs:\n  y: a\n",
     1, "not allowed"),
    ("expression injection", "design: d\ninputs: [a]\noutputs:\n  y: __import__('os').system('echo INJECTED')\n",
     4, "expected an operator"),
    ("sympify-style injection", "design: d\ninputs: [a]\noutputs:\n  y: a & eval('1')\n", 4, "expected an operator"),
    ("expression is a list", "design: d\ninputs: [a]\noutputs:\n  y: [a]\n", 4, "must be an expression"),
    ("register reset not 0 or 1", "design: d\ninputs: [a]\nregisters:\n  q: {next: a, reset: 2}\n", 4,
     "reset must be 0 or 1"),
    ("register next undefined", "design: d\ninputs: [a]\nregisters:\n  q: {next: a & z}\n", 4,
     "'z', which is not an input"),
    ("register next-state name taken", "design: d\ninputs: [a]\nregisters:\n  q: {next: a}\noutputs:\n  q_next: a\n",
     6, "taken by the next state"),
    ("block too wide", "design: d\ninputs: [" + ", ".join(f"x{i}" for i in range(17)) + "]\noutputs:\n  y: "
     + " & ".join(f"x{i}" for i in range(17)) + "\n", 4, "split it into named signals"),
    ("no inputs", "design: d\ninputs: []\noutputs:\n  y: 1\n", 2, "inputs is empty"),
    ("alias bomb", "design: d\ninputs: [a]\n" + "".join(
        f"x{i}: &x{i} [" + ", ".join([f"*x{i - 1}"] * 10 if i else ["1"] * 10) + "]\n" for i in range(7))
     + "outputs:\n  y: a\n", None, "aliases"),
]

STOCK_MISTAKES = [
    ("bias positive", GOOD_STOCK.replace("volts: -95", "volts: 95"), 3, "must be negative"),
    ("plate negative", GOOD_STOCK.replace("volts: 225", "volts: -225"), 2, "greater than 0"),
    ("unknown tube", GOOD_STOCK.replace("12AU7: {count: 4}", "12AV7: {count: 4}"), 7, "closest known types"),
    ("reserve over count", GOOD_STOCK.replace("{count: 4}", "{count: 4, reserve: 5}"), 7, "reserve is 5"),
    ("negative count", GOOD_STOCK.replace("{count: 4}", "{count: -1}"), 7, "at least 0"),
    ("count not whole", GOOD_STOCK.replace("{count: 4}", "{count: 2.5}"), 7, "whole number"),
    ("bad diodes", GOOD_STOCK + "diodes: germanium\n", 8, "solid-state, vacuum-only, none"),
    ("duplicate winding", GOOD_STOCK.replace("    - {id: H1, volts: 6.3, max_amps: 5}\n",
                                             "    - {id: H1, volts: 6.3, max_amps: 5}\n"
                                             "    - {id: H1, volts: 12.6, max_amps: 2}\n"), 6, "listed twice"),
    ("missing bias", GOOD_STOCK.replace("  bias: {volts: -95, max_ma: 50}\n", ""), 2,
     "missing the required key 'bias'"),
    ("weights all zero", GOOD_STOCK + "objective: {envelopes: 0, heater_watts: 0, scarce: 0}\n", 8, "all 0"),
    ("bad objective mode", GOOD_STOCK + "objective: {mode: fastest}\n", 8, "weighted, lexicographic"),
    ("scarce not bool", GOOD_STOCK.replace("{count: 4}", "{count: 4, scarce: 3}"), 7, "true or false"),
    ("condition out of range", GOOD_STOCK.replace("{count: 4}", "{count: 4, condition: 1.5}"), 7, "at most 1.0"),
    ("max_ma text", GOOD_STOCK.replace("max_ma: 200", "max_ma: lots"), 2, "must be a number"),
    ("branch limit zero", GOOD_STOCK + "limits: {max_branches_per_stage: 0}\n", 8, "at least 1"),
    ("yaml tag in stock", GOOD_STOCK.replace("{count: 4}", "!!python/name:os.system {count: 4}"), 7,
     "not allowed"),
]


@pytest.mark.parametrize("name,text,line,words", DESIGN_MISTAKES, ids=[m[0] for m in DESIGN_MISTAKES])
def test_design_mistake(name, text, line, words, write, run_cli, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    path = write("design.yaml", text)
    status, out, err = run_cli("check", path)
    assert status == 2, (out, err)
    assert "Traceback" not in err and err.count("\n") == 1
    prefix = f"{path}:{line}:" if line is not None else f"{path}:"
    assert err.startswith(prefix), err
    assert words in err, err
    assert not (tmp_path / "injected.txt").exists()


@pytest.mark.parametrize("name,text,line,words", STOCK_MISTAKES, ids=[m[0] for m in STOCK_MISTAKES])
def test_stock_mistake(name, text, line, words, write, run_cli):
    design = write("design.yaml", GOOD_DESIGN)
    path = write("stock.yaml", text)
    status, out, err = run_cli("check", design, "--stock", path)
    assert status == 2, (out, err)
    assert "Traceback" not in err and err.count("\n") == 1
    assert err.startswith(f"{path}:{line}:"), err
    assert words in err, err


def test_missing_file_is_input_error(run_cli, tmp_path):
    status, _, err = run_cli("check", tmp_path / "nowhere.yaml")
    assert status == 2 and "cannot read the file" in err


def test_oversized_file(write, run_cli):
    path = write("design.yaml", GOOD_DESIGN + "# " + "x" * 1_100_000 + "\n")
    status, _, err = run_cli("check", path)
    assert status == 2 and "limit is" in err


def test_deep_yaml_nesting(write, run_cli):
    path = write("design.yaml", "design: d\ninputs: [a]\noutputs:\n  y: a\nz: " + "[" * 5000 + "]" * 5000 + "\n")
    status, _, err = run_cli("check", path)
    assert status == 2 and "nests more than" in err


def test_injection_runs_nothing_in_a_real_process(write, tmp_path):
    """A separate interpreter, as a user would run it: no traceback, exit 2, no file written."""
    text = next(text for label, text, _line, _words in DESIGN_MISTAKES if label == "python tag injection")
    path = write("design.yaml", text)
    result = subprocess.run([sys.executable, "-m", "planner.cli", "check", str(path)], cwd=tmp_path,
                            capture_output=True, text=True)
    assert result.returncode == 2
    assert "Traceback" not in result.stderr
    assert not (tmp_path / "injected.txt").exists()
