"""Fan-out: cathode followers where a net has more loads than its driver allows."""

from __future__ import annotations

from typing import Callable, Mapping, Union

from .network import Network, Stage, renumber
from .simulate import ProofError, simulate

FanoutLimit = Union[int, Callable[[Stage], int]]


def _records(network: Network) -> dict[str, tuple]:
    records = {}
    for stage in network.stages:
        if stage.kind == "follower":
            records[stage.output] = ("follower", stage.input)
        else:
            records[stage.output] = ("inverting", tuple((b.inputs, b.means) for b in stage.branches))
    return records


def insert_followers(network: Network, fanout_limit: FanoutLimit,
                     primary_limits: Mapping[str, int] | None = None) -> Network:
    """``network`` with followers added so that no stage drives more loads than its limit.

    Loads are counted as in :meth:`Network.load_counts` (every grid or diode
    connection, every design output).  Primary inputs are driven from outside
    and taken to drive any number of loads, except the nets in
    ``primary_limits`` (net -> the most loads its driver allows: a register's
    bistable, say).  ``fanout_limit`` is a number for
    every stage, or a function of the stage (followers included).  Where a net
    has ``T`` loads and its driver allows ``L``, with followers allowing ``F``
    each, ``ceil((T - L) / (F - 1))`` followers are added (the fewest: each
    takes one load and gives ``F``), as a tree filled breadth first: the
    driver's own loads first, then the followers' in order.  Nets are then
    renumbered.  The result is checked by simulation against the input network
    (up to 20 inputs).

    >>> from .network import Branch
    >>> inv = Network(("a",), (Stage("S1", "n1", "inverting", (Branch(("a",), "single"),)),),
    ...               {"x": "n1", "y": "n1", "z": "n1"})
    >>> [s.view for s in insert_followers(inv, 2).stages]
    ['inverter', 'follower']
    """
    limit = fanout_limit if callable(fanout_limit) else (lambda _stage, n=fanout_limit: n)
    records = _records(network)
    # Every load as a slot: (consumer net, branch, position) or ("output", name).
    slots: dict[str, list[tuple]] = {stage.output: [] for stage in network.stages}
    for stage in network.stages:
        if stage.kind == "follower":
            slots.setdefault(stage.input, []).append((stage.output, None, 0))
        else:
            for b, branch in enumerate(stage.branches):
                for p, net in enumerate(branch.inputs):
                    slots.setdefault(net, []).append((stage.output, b, p))
    for name, net in network.outputs.items():
        slots.setdefault(net, []).append(("output", name, 0))
    outputs = dict(network.outputs)
    rewire: dict[tuple, str] = {}
    added = 0
    limited = dict(primary_limits or {})
    drivers = [(net, limited[net]) for net in network.primary_nets if net in limited and net in slots]
    drivers += [(stage.output, limit(stage)) for stage in network.stages]
    for driven, own in drivers:
        loads = slots[driven]
        if len(loads) <= own:
            continue
        probe = Stage("F?", "#f?", "follower", input=driven)
        each = limit(probe)
        if own < 1 or each < 2:
            raise ValueError(f"net {driven} has {len(loads)} loads; its driver allows {own} and a "
                             f"follower {each}: followers cannot spread the load")
        count = -(-(len(loads) - own) // (each - 1))
        nodes = [(driven, own)]
        free = [own]
        for _ in range(count):
            added += 1
            net = f"#f{added}"
            parent = next(i for i, f in enumerate(free) if f > 0)
            free[parent] -= 1
            records[net] = ("follower", nodes[parent][0])
            nodes.append((net, each))
            free.append(each)
        fill = 0
        for load in loads:
            while free[fill] == 0:
                fill += 1
            free[fill] -= 1
            if fill:
                rewire[load] = nodes[fill][0]
    for (consumer, b, p), net in rewire.items():
        if consumer == "output":
            outputs[b] = net
            continue
        kind, body = records[consumer]
        if kind == "follower":
            records[consumer] = ("follower", net)
        else:
            branches = [list(inputs) for inputs, _ in body]
            branches[b][p] = net
            records[consumer] = ("inverting", tuple((tuple(x), means) for x, (_, means) in zip(branches, body)))
    result = renumber(network.inputs, network.complements, records, outputs, network.forms,
                      network.signals, network.inverted_signals)
    if len(network.inputs) <= 20:
        before, after = simulate(network), simulate(result)
        for name in network.outputs:
            if before[network.outputs[name]] != after[result.outputs[name]]:
                raise ProofError(f"internal error: inserting followers changed output {name!r}")
    return result
