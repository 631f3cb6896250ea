"""Bit-parallel simulation of a stage network, and its proof against the design."""

from __future__ import annotations

from typing import Mapping

from planner.errors import InternalError
from planner.formula import Formula, conjoin, disjoin, negate, symbol
from planner.logic import EXHAUSTIVE_LIMIT, counterexample, output_table

from .network import Network


class ProofError(InternalError):
    """The network does not compute the design: an internal error, never a plan."""


def input_patterns(names: tuple[str, ...]) -> tuple[dict[str, int], int]:
    """Bitsets of every input over all ``2**n`` assignments (``names[0]`` most significant), and the full mask.

    >>> pats, full = input_patterns(("a", "b"))
    >>> bin(pats["a"]), bin(pats["b"]), bin(full)
    ('0b1100', '0b1010', '0b1111')
    """
    n = len(names)
    full = (1 << (1 << n)) - 1
    patterns = {}
    for k, name in enumerate(names):
        p = n - 1 - k
        # Ones in the upper half of every period of 2**(p+1) assignments, doubled until full.
        bits, length = ((1 << (1 << p)) - 1) << (1 << p), 1 << (p + 1)
        while length < (1 << n):
            bits |= bits << length
            length *= 2
        patterns[name] = bits & full
    return patterns, full


def simulate(network: Network, assignment_bits: Mapping[str, int] | None = None,
             width: int | None = None) -> Mapping[str, int]:
    """Value of every net as a bitset, one bit per input assignment.

    With no ``assignment_bits``: all ``2**n`` assignments of ``network.inputs``
    (``names[0]`` most significant).  Otherwise each input's bits over ``width``
    assignments.  Cost: one big-integer operation per branch input.

    >>> from .network import Branch, Stage
    >>> net = Network(("a", "b"), (Stage("S1", "n1", "inverting", (Branch(("a", "b"), "dual"),)),),
    ...               {"y": "n1"})
    >>> bin(simulate(net)["n1"])
    '0b111'
    """
    if assignment_bits is None:
        values, full = input_patterns(network.inputs)
    else:
        if width is None:
            raise ValueError("width (the number of assignments) is needed with assignment_bits")
        full = (1 << width) - 1
        missing = [name for name in network.inputs if name not in assignment_bits]
        if missing:
            raise ValueError(f"no bits given for inputs {missing}")
        values = {name: assignment_bits[name] & full for name in network.inputs}
    for name in network.complements:
        values["~" + name] = full & ~values[name]
    for stage in network.stages:
        if stage.kind == "follower":
            values[stage.output] = values[stage.input]
            continue
        conducting = 0
        for branch in stage.branches:
            on = full
            for net in branch.inputs:
                on &= values[net]
            conducting |= on
        values[stage.output] = full & ~conducting
    return values


def network_exprs(network: Network) -> dict[str, Formula]:
    """Every net as a formula over the inputs (shared subformulas, iterative)."""
    exprs: dict[str, Formula] = {name: symbol(name) for name in network.inputs}
    for name in network.complements:
        exprs["~" + name] = negate(symbol(name))
    for stage in network.stages:
        if stage.kind == "follower":
            exprs[stage.output] = exprs[stage.input]
        else:
            exprs[stage.output] = negate(disjoin(*[conjoin(*[exprs[x] for x in b.inputs])
                                                   for b in stage.branches]))
    return exprs


def _describe(assign: Mapping[str, bool], names: tuple[str, ...]) -> str:
    return ", ".join(f"{name}={int(assign[name])}" for name in names)


def prove(network: Network, design) -> None:
    """Check that every design output's net equals the design on its care set, or raise ProofError.

    Up to 20 inputs (``planner.logic.EXHAUSTIVE_LIMIT``) by simulating all
    assignments at once; above, by SAT through :func:`planner.logic.equivalent`.
    """
    names = design.input_names
    if network.inputs != names:
        raise ProofError(f"internal error: the network's inputs {network.inputs} are not the design's {names}")
    declared = tuple(spec.name for spec in design.inputs if spec.complement)
    if not set(network.complements) <= set(declared):
        raise ProofError(f"internal error: the network uses complements {network.complements} "
                         f"but the design declares only {declared}")
    missing = [o.name for o in design.outputs if o.name not in network.outputs]
    if missing:
        raise ProofError(f"internal error: outputs {missing} have no net in the network")
    if len(names) <= EXHAUSTIVE_LIMIT:
        values = simulate(network)
        for out in design.outputs:
            table = output_table(design, out, names)
            wrong = (values[network.outputs[out.name]] ^ table.on) & table.care
            if wrong:
                index = (wrong & -wrong).bit_length() - 1
                n = len(names)
                assign = {name: bool(index >> (n - 1 - k) & 1) for k, name in enumerate(names)}
                raise ProofError(f"internal error: output {out.name!r} on net {network.outputs[out.name]} is "
                                 f"{int(not table.on >> index & 1)} but the design needs "
                                 f"{table.on >> index & 1} at {_describe(assign, names)}")
        return
    exprs = network_exprs(network)
    for out in design.outputs:
        line = design.lines.get("outputs", {}).get(out.name, 0)
        spec = design.flatten(out.expr, line=line)
        care = negate(design.flatten(out.dont_care, line=line))
        got = exprs[network.outputs[out.name]]
        witness = counterexample(got, spec, names, care=care)
        if witness is not None:
            raise ProofError(f"internal error: output {out.name!r} on net {network.outputs[out.name]} "
                             f"differs from the design at {_describe(witness, names)}")
