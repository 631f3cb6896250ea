"""Synthesis: polarity, literal inverters, fan-in and branch limits, signals, proof."""

from __future__ import annotations

import os
import subprocess
import sys

import pytest
import sympy

from planner.spec import Design, InputSpec, OutputSpec, SignalSpec, parse_expression
from planner.stages import (Branch, Network, ProofError, Stage, SynthesisOptions, prove, simulate,
                            synthesise)


def design(inputs, outputs, signals=(), complements=""):
    outs = []
    for name, expr in outputs:
        expr, dc = (expr, "0") if isinstance(expr, str) else expr
        outs.append(OutputSpec(name, parse_expression(expr), parse_expression(dc), expr))
    return Design("t", "<test>", tuple(InputSpec(i, i in complements) for i in inputs),
                  tuple(SignalSpec(n, parse_expression(e)) for n, e in signals), tuple(outs))


def test_and_takes_the_inverted_candidate_without_complements():
    """a & b: NOT(~a | ~b) needs two literal inverters (4 sections); NAND then inverter needs 2."""
    result = synthesise(design("ab", [("y", "a & b")]))
    assert result.network.cost().sections == 2
    assert [s.view for s in result.network.stages] == ["NAND-2", "inverter"]
    chosen = [c for c in result.candidates["y"] if c.chosen]
    assert len(chosen) == 1 and chosen[0].sections == 2


def test_declared_complements_need_no_inverters():
    """With ~a and ~b available from outside, a & b = NOT(~a | ~b) is one NOR-2 stage."""
    result = synthesise(design("ab", [("y", "a & b")], complements="ab"))
    network = result.network
    assert [s.view for s in network.stages] == ["NOR-2"]
    assert network.stages[0].input_nets == ("~a", "~b")
    assert network.forms["y"] == "~(~a | ~b)"


def test_candidates_expose_both_polarities_with_costs():
    result = synthesise(design("abc", [("y", "a & b | c")]))
    cands = result.candidates["y"]
    assert [c.polarity for c in cands] == ["true", "inverted"]
    assert sum(c.chosen for c in cands) == 1
    true, inverted = cands
    assert true.form == "~(~a & ~c | ~b & ~c)" and set(true.literals) == {"~a", "~b", "~c"}
    assert inverted.form == "a & b | c" and inverted.sections_by_means["dual"] == 1
    assert inverted.sections == 3 and inverted.stages == 2          # AOI 2-1, then the inverter back to y


def test_literal_inverters_are_shared():
    result = synthesise(design("abc", [("x", "~a & b"), ("y", "~a & c")]))
    inverters_of_a = [s for s in result.network.stages if s.view == "inverter" and s.input_nets == ("a",)]
    assert len(inverters_of_a) <= 1


def test_wide_nand_uses_fanin_decomposition_or_diodes():
    d = design("abcd", [("y", "~(a & b & c & d)")])
    dual = synthesise(d).network
    assert dual.cost().sections == 5                       # the minimum, see test_stages_decompose
    diodes = synthesise(d, SynthesisOptions(allow_dual=False, diode_fanin=4)).network
    assert [(s.view, [b.means for b in s.branches]) for s in diodes.stages] == [("NAND-4", ["diode"])]
    assert diodes.cost().diodes == 4


def test_single_sections_only():
    network = synthesise(design("ab", [("y", "~(a & b)")]), SynthesisOptions(allow_dual=False)).network
    assert all(b.means == "single" for s in network.stages for b in s.branches)
    prove(network, design("ab", [("y", "~(a & b)")]))


def test_branch_limit_splits_wide_sums():
    d = design("abcdefgh", [("y", "~(a | b | c | d | e | f | g | h)")])
    for limit in (2, 3, 6):
        network = synthesise(d, SynthesisOptions(max_branches=limit)).network
        assert max(len(s.branches) for s in network.stages) <= limit
        prove(network, d)
    # The default six branches (common practice): eight terms need one OR-net (2 sections) or an AND of two
    # parts (NAND + inverter, 2 sections).
    assert synthesise(d).network.cost().sections == 10


def test_named_signals_and_flatten_limit():
    d = design("abc", [("y", "s | c"), ("z", "s & c")], signals=[("s", "a & b")])
    structured = synthesise(d).network
    assert set(structured.signals) | set(structured.inverted_signals) == {"s"}
    flat = synthesise(d, SynthesisOptions(flatten_limit=3)).network
    assert not flat.signals and not flat.inverted_signals
    assert flat.forms["y"] in ("~(~a & ~c | ~b & ~c)", "a & b | c")
    prove(flat, d)


def test_signal_combinations_that_cannot_occur_are_dont_cares():
    """y = s & a with s = a & b: (s=1, a=0) never occurs, so y = s (no stage beyond s's)."""
    d = design("ab", [("y", "s & a")], signals=[("s", "a & b")])
    network = synthesise(d).network
    assert network.forms["y"] == "s"


def test_constants_and_plain_inputs():
    d = design("ab", [("zero", "a & ~a"), ("one", "a | ~a"), ("same", "a"), ("neg", "~b")], complements="b")
    network = synthesise(d).network
    assert network.outputs["same"] == "a" and network.outputs["neg"] == "~b"
    values = simulate(network)
    assert values[network.outputs["zero"]] == 0 and values[network.outputs["one"]] == 0b1111
    assert network.forms["zero"] == "0" and network.forms["one"] == "1"


def test_dont_cares_are_used():
    """With minterm 3 free, a ^ b may be built as a | b (Source: the definition of a don't-care)."""
    d = design("ab", [("y", ("a ^ b", "a & b"))])
    network = synthesise(d).network
    assert network.forms["y"] in ("a | b", "~(~a & ~b)")


def test_net_names_and_stage_ids_are_topological():
    network = synthesise(design("abcd", [("y", "a & b | c & ~d"), ("z", "a ^ d")])).network
    assert [s.output for s in network.stages] == [f"n{i}" for i in range(1, len(network.stages) + 1)]
    assert [s.id for s in network.stages] == [f"S{i}" for i in range(1, len(network.stages) + 1)]
    seen = set(network.primary_nets)
    for s in network.stages:
        assert set(s.input_nets) <= seen
        seen.add(s.output)


def test_deterministic_across_hash_seeds():
    """Same design and options give an identical network, whatever PYTHONHASHSEED is."""
    code = ("from planner.spec import *; from planner.stages import *; import sympy\n"
            "p = parse_expression\n"
            "d = Design('d', '-', tuple(InputSpec(x) for x in 'abcde'), (SignalSpec('s', p('a ^ b')),),\n"
            "  (OutputSpec('y', p('s & c | ~d & e | s & ~e'), sympy.false, ''), OutputSpec('z', p('~s | a & e'),\n"
            "   sympy.false, '')))\n"
            "n = synthesise(d).network\n"
            "print([(s.id, s.output, s.branches, s.view) for s in n.stages], dict(n.outputs), dict(n.forms))\n")
    outs = set()
    for seed in ("0", "1", "12345"):
        env = dict(os.environ, PYTHONHASHSEED=seed)
        outs.add(subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True,
                                check=True).stdout)
    assert len(outs) == 1


def test_a_wrong_network_fails_the_proof():
    d = design("ab", [("y", "a & b")])
    wrong = Network(("a", "b"), (Stage("S1", "n1", "inverting", (Branch(("a", "b"), "dual"),)),), {"y": "n1"})
    with pytest.raises(ProofError, match="output 'y' on net n1 is 1 but the design needs 0 at a=0, b=0"):
        prove(wrong, d)


def test_proof_by_sat_above_twenty_inputs():
    """21 inputs: the proof goes through planner.logic's SAT check (CaDiCaL)."""
    names = [f"x{i}" for i in range(21)]
    d = Design("wide", "<test>", tuple(InputSpec(n) for n in names), (),
               (OutputSpec("y", parse_expression("x0 & x1 | x20"), sympy.false, ""),))
    network = synthesise(d).network
    prove(network, d)
    wrong = Network(tuple(names), (Stage("S1", "n1", "inverting", (Branch(("x0", "x1"), "dual"),)),),
                    {"y": "n1"})
    with pytest.raises(ProofError, match="differs from the design"):
        prove(wrong, d)


def test_option_checks():
    with pytest.raises(ValueError, match="inverters only"):
        SynthesisOptions(mode="nand", allow_dual=False)
    with pytest.raises(ValueError, match="mode"):
        SynthesisOptions(mode="xor")
    with pytest.raises(ValueError, match="diode_fanin"):
        SynthesisOptions(diode_fanin=1)
