"""Fan-out repair: buffer trees, duplicated drivers and cathode followers where a net has too many loads."""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass

from planner.errors import PlanningFailure

from .network import Branch, Network, Stage, renumber
from .simulate import ProofError, simulate

#: Ways to repair a net past its driver's limit (see :func:`repair_fanout`).
STRATEGIES = ("buffers", "duplicates", "followers")

#: Most sections of a driving stage that may be duplicated: a copy costs its
#: sections, and a buffer pair costs two, so larger stages are buffered.
DUPLICATE_SECTIONS = 2

#: Stands for "any number of loads" (an ideal source).
_UNLIMITED = 10 ** 9


class FanoutError(PlanningFailure, ValueError):
    """A net's loads cannot be spread within the limits given (the message names the net)."""


def describe_net(network: Network, net: str, names: Mapping[str, str] | None = None) -> str:
    """``net`` in words for a message: the design input, signal or output it carries.

    ``names``: extra words for primary nets (a register's output, say).  An
    inner net with no name of its own is described by the first design output
    that uses it.

    >>> net = Network(("a",), (Stage("S1", "n1", "inverting", (Branch(("a",), "single"),)),), {"y": "n1"})
    >>> describe_net(net, "n1"), describe_net(net, "a"), describe_net(net, "~a", {"~a": "register a's complement"})
    ('net n1 (output y)', 'input a', "register a's complement")
    """
    if names and net in names:
        return names[net]
    if net in network.inputs:
        return f"input {net}"
    if net.startswith("~") and net[1:] in network.inputs:
        return f"the complement of input {net[1:]}"
    words = [f"output {k}" for k, v in network.outputs.items() if v == net]
    words += [f"signal {k}" for k, v in network.signals.items() if v == net]
    words += [f"the complement of signal {k}" for k, v in network.inverted_signals.items() if v == net]
    if not words:
        users = _users(network)
        for name, out in network.outputs.items():
            if net in _cone(out, users):
                words.append(f"inside output {name}")
                break
    if len(words) > 3:
        words = words[:3] + [f"{len(words) - 3} more"]
    return f"net {net} ({', '.join(words)})" if words else f"net {net}"


def _users(network: Network) -> dict[str, tuple[str, ...]]:
    return {s.output: s.input_nets for s in network.stages}


def _cone(net: str, users: Mapping[str, tuple[str, ...]]) -> set[str]:
    seen, stack = set(), [net]
    while stack:
        n = stack.pop()
        if n not in seen:
            seen.add(n)
            stack.extend(users.get(n, ()))
    return seen


def _records(network: Network) -> dict[str, tuple]:
    records = {}
    for stage in network.stages:
        if stage.kind == "follower":
            records[stage.output] = ("follower", stage.input)
        else:
            records[stage.output] = ("inverting", tuple((b.inputs, b.means) for b in stage.branches))
    return records


def _stage(net: str, record: tuple) -> Stage:
    kind, body = record
    if kind == "follower":
        return Stage("S?", net, "follower", input=body)
    return Stage("S?", net, "inverting", tuple(Branch(inputs, means) for inputs, means in body))


def _plain_source(record: tuple) -> str | None:
    """The input of a plain inverter (one branch of one input), else None."""
    kind, body = record
    if kind == "inverting" and len(body) == 1 and len(body[0][0]) == 1:
        return body[0][0][0]
    return None


@dataclass(frozen=True)
class _Shape:
    """How one polarity group is repaired: driver copies, followers on each polarity, inverters."""

    copies: int
    true_followers: int
    complement_followers: int
    odd: int     # inverters giving the complement (hung on true nodes)
    even: int    # inverters giving the true polarity (hung on complement nodes)


class _Nets:
    """The network being repaired: records, every net's load slots, outputs; fresh net names."""

    def __init__(self, network: Network):
        self.records = _records(network)
        self.outputs = dict(network.outputs)
        self.slots: dict[str, set] = {net: set() for net in network.primary_nets}
        self.slots.update((net, set()) for net in self.records)
        for net, record in self.records.items():
            self._add_uses(net, record)
        for name, net in self.outputs.items():
            self.slots[net].add(("output", name, 0))
        self.fresh = 0
        self.moved: dict[str, str] = {}  # removed net -> a net carrying the same value

    def _add_uses(self, net: str, record: tuple) -> None:
        kind, body = record
        if kind == "follower":
            self.slots[body].add((net, 0, 0))
        else:
            for b, (inputs, _means) in enumerate(body):
                for p, used in enumerate(inputs):
                    self.slots[used].add((net, b, p))

    def add(self, net: str, record: tuple) -> None:
        self.records[net] = record
        self.slots[net] = set()
        self._add_uses(net, record)

    def remove(self, net: str) -> None:
        """Take a stage out (its input may be gone already when a chain of them is removed)."""
        kind, body = self.records.pop(net)
        uses = [(body, 0, 0)] if kind == "follower" else [
            (used, b, p) for b, (inputs, _means) in enumerate(body) for p, used in enumerate(inputs)]
        for used, b, p in uses:
            if used in self.slots:
                self.slots[used].discard((net, b, p))
        del self.slots[net]

    def name(self, prefix: str) -> str:
        self.fresh += 1
        return f"#{prefix}{self.fresh}"

    def rewire(self, slot: tuple, old: str, new: str) -> None:
        consumer, b, p = slot
        if old in self.slots:  # a removed inverter's loads are dealt anew
            self.slots[old].discard(slot)
        self.slots[new].add(slot)
        if consumer == "output":
            self.outputs[b] = new
            return
        kind, body = self.records[consumer]
        if kind == "follower":
            self.records[consumer] = ("follower", new)
            return
        branches = [list(inputs) for inputs, _ in body]
        branches[b][p] = new
        self.records[consumer] = ("inverting", tuple((tuple(x), means) for x, (_, means) in zip(branches, body)))


def _slot_key(slot: tuple) -> tuple:
    return (slot[0] == "output", slot[0], str(slot[1]), slot[2])


def _odd_and_even(need_true: int, need_complement: int, true_slots: int, complement_slots: int,
                  buffer_limit: int, first_odd: int) -> tuple[int, int] | None:
    """The fewest inverters (odd, even) that give both polarities their slots, or None.

    An odd inverter takes a true slot and gives ``buffer_limit`` complement
    slots; an even one takes a complement slot and gives ``buffer_limit`` true
    slots.  The even count needed grows by ``1 / buffer_limit`` per odd one
    while the complement slack grows by ``buffer_limit``, so the first odd
    count that balances both sides also gives the fewest inverters.
    """
    odd = first_odd
    ceiling = need_true + need_complement + 2
    while odd <= ceiling:
        short = need_true + odd - true_slots
        even = 0 if short <= 0 else (-(-short // buffer_limit) if buffer_limit > 0 else None)
        if even is not None and complement_slots + odd * buffer_limit >= need_complement + even:
            return odd, even
        odd += 1
    return None


def _shapes(strategy: str, need_true: int, need_complement: int, root_limit: int, complement_limit: int,
            buffer_limit: int, follower_limit: int, can_copy: bool, copy_sections: int, copy_loads: float):
    """Candidate shapes for a group, cheapest first (sections, then fewer copies and followers)."""
    copies_range = [1]
    # Followers and copies both multiply the root's slots: each strategy searches one of them (bounded time).
    if strategy == "duplicates" and can_copy and root_limit > 0:
        copies_range = range(1, -(-(need_true + need_complement) // root_limit) + 2)
    followers_range = [0]
    if strategy == "followers" and follower_limit >= 2:
        followers_range = range(min(64, -(-need_true // (follower_limit - 1)) + 2))
    complement_range = [0]
    if strategy == "followers" and follower_limit >= 2 and need_complement:
        complement_range = range(min(64, -(-need_complement // (follower_limit - 1)) + 2))
    shapes = []
    for copies in copies_range:
        for ft in followers_range:
            for fc in complement_range:
                true_slots = copies * root_limit + ft * (follower_limit - 1)
                complement_slots = complement_limit + fc * (follower_limit - 1)
                first = 1 if (need_complement or fc) and complement_limit == 0 else 0
                found = _odd_and_even(need_true, need_complement, true_slots, complement_slots,
                                      buffer_limit, first)
                if found is None:
                    continue
                odd, even = found
                cost = (copies - 1) * (copy_sections + copy_loads) + ft + fc + odd + even
                prefer_followers = -(ft + fc) if strategy == "followers" else ft + fc
                shapes.append(((cost, prefer_followers, copies), _Shape(copies, ft, fc, odd, even)))
    shapes.sort(key=lambda item: item[0])
    return [shape for _key, shape in shapes]


def _place(shape: _Shape, roots: list[tuple[str, int, int]], buffer_limit: int, follower_limit: int):
    """Hang the shape's nodes on the roots, breadth first: every node (roots first), or None when they do not fit.

    ``roots``: (net, polarity 0 true / 1 complement, limit).  A node is
    [net-or-None, polarity, free slots, is follower, parent index].
    """
    nodes = [[net, pol, limit, False, None] for net, pol, limit in roots]
    todo = {"ft": shape.true_followers, "fc": shape.complement_followers, "odd": shape.odd, "even": shape.even}
    wants = {"ft": (0, True), "fc": (1, True), "odd": (0, False), "even": (1, False)}
    gives = {"ft": (0, follower_limit, True), "fc": (1, follower_limit, True), "odd": (1, buffer_limit, False),
             "even": (0, buffer_limit, False)}
    while any(todo.values()):
        for what in ("ft", "fc", "odd", "even"):
            if not todo[what]:
                continue
            pol, follower = wants[what]
            parent = next((i for i, n in enumerate(nodes) if n[1] == pol and n[2] > 0
                           and not (follower and n[3])), None)
            if parent is None:
                continue
            nodes[parent][2] -= 1
            out_pol, limit, is_follower = gives[what]
            nodes.append([None, out_pol, limit, is_follower, parent])
            todo[what] -= 1
            break
        else:
            return None
    return nodes


#: Shapes with followers tried for a group before only follower-free ones are (their loads may not fit).
_FOLLOWER_TRIES = 20


def _follower_may_feed(nets: _Nets, slot: tuple) -> bool:
    """Whether a follower may drive this load: not a follower (the family's rule), not a diode AND's input
    (one divider follows the gate, proven for plate-driven or follower-driven inputs, not a mix)."""
    consumer, b, _p = slot
    if consumer == "output":
        return True
    kind, body = nets.records[consumer]
    return kind == "inverting" and body[b][1] != "diode"


def _deal(nodes: list, demand: dict, tolerant: Callable[[tuple], bool]) -> list | None:
    """Loads to nodes, in creation order: [(slot, old net, node index)], or None when they do not fit.

    Per polarity, the loads a follower may not drive go first, to the other
    nodes; then the rest, to any node with room.
    """
    free = [node[2] for node in nodes]
    dealt = []
    for pol, wanted in demand.items():
        for followers_too in (False, True):
            order = [i for i, node in enumerate(nodes) if node[1] == pol and (followers_too or not node[3])]
            k = 0
            for slot, old in (item for item in wanted if tolerant(item[0]) == followers_too):
                while k < len(order) and free[order[k]] == 0:
                    k += 1
                if k == len(order):
                    return None
                free[order[k]] -= 1
                dealt.append((slot, old, order[k]))
    return dealt


def _repair_group(nets: _Nets, root: str, members: list[tuple[str, int]], limits: dict, strategy: str,
                  buffer_limit: int, follower_limit: int, describe: Callable[[str], str], primary: set) -> None:
    """Repair one polarity group (a root net and the plain inverters hanging from it) in place."""
    pol_of = dict(members)
    roots = [(root, 0)] + [(net, 1) for net, pol in members if net == "~" + root and net in primary]
    removable = [net for net, _pol in members if net not in {r for r, _ in roots}]
    over = [net for net, _pol in members if len(nets.slots[net]) > limits[net]]
    if not over:
        return
    buffers = set(removable)
    demand = {0: [], 1: []}
    for net, pol in members:
        for slot in nets.slots[net]:
            if slot[0] in buffers:
                continue
            demand[pol].append((slot, net))
    for wanted in demand.values():
        wanted.sort(key=lambda item: _slot_key(item[0]))
    need_true, need_complement = len(demand[0]), len(demand[1])
    root_limit = limits[root]
    complement_limit = limits[roots[1][0]] if len(roots) > 1 else 0
    record = nets.records.get(root)
    copy_sections = 0
    copy_loads = 0.0
    can_copy = False
    if record is not None and record[0] == "inverting":
        copy_sections = _stage(root, record).sections
        can_copy = 0 < copy_sections <= DUPLICATE_SECTIONS
        # Each copy loads the driver's inputs again: about one buffer per buffer_limit loads (ideal inputs free).
        copy_loads = sum(0 if (used in primary and limits.get(used, 0) >= _UNLIMITED) else 1.0 / max(buffer_limit, 1)
                         for used in _stage(root, record).input_nets)
    if root_limit <= 0:
        return  # no stocked template drives this stage at all: the integer program reports it
    placed = dealt = None
    comp = [(net, 1, complement_limit) for net, pol in roots if pol == 1]
    misses = 0
    for shape in _shapes(strategy, need_true, need_complement, root_limit, complement_limit, buffer_limit,
                         follower_limit, can_copy, copy_sections, copy_loads):
        with_followers = shape.true_followers or shape.complement_followers
        if with_followers and misses >= _FOLLOWER_TRIES:
            continue
        copies = [(root, 0, root_limit)] + [(None, 0, root_limit)] * (shape.copies - 1)
        placed = _place(shape, copies + comp, buffer_limit, follower_limit)
        dealt = None if placed is None else _deal(placed, demand, lambda slot: _follower_may_feed(nets, slot))
        if dealt is not None:
            break
        misses += bool(with_followers)
    if dealt is None:
        worst = max(over, key=lambda net: len(nets.slots[net]))
        words = f"an inverter {buffer_limit}"
        if follower_limit:
            words += f" and a follower {follower_limit}"
        raise FanoutError(f"{describe(worst)} has {len(nets.slots[worst])} loads; its driver allows "
                          f"{limits[worst]}, {words}: neither buffers nor duplicates can spread the load")
    # Take the old inverters out; their names serve new nodes of the same polarity.
    reuse = {0: [], 1: []}
    for net in removable:
        reuse[pol_of[net]].append(net)
        nets.remove(net)
    n_roots = shape.copies + len(comp)
    for i, node in enumerate(placed):
        if i < n_roots and i != 0 and i < shape.copies:
            node[0] = nets.name("d")
            nets.add(node[0], record)
        elif i >= n_roots:
            pol, is_follower = node[1], node[3]
            node[0] = reuse[pol].pop(0) if (reuse[pol] and not is_follower) else nets.name(
                "f" if is_follower else "b")
            parent = placed[node[4]][0]
            nets.add(node[0], ("follower", parent) if is_follower else ("inverting", (((parent,), "single"),)))
    # A named signal on an inverter that is gone moves to a net of the same polarity.
    for pol in (0, 1):
        same = next((node[0] for node in placed if node[1] == pol), None)
        for net in reuse[pol] if same is not None else ():
            nets.moved[net] = same
    for slot, old, index in dealt:
        nets.rewire(slot, old, placed[index][0])


def repair_fanout(network: Network, fanout_limit: Callable[[Stage], int],
                  primary_limits: Mapping[str, int] | None = None, *, strategy: str = "buffers",
                  names: Mapping[str, str] | None = None) -> Network:
    """``network`` with no net over its driver's limit: buffer trees, duplicated drivers or followers.

    Nets are taken in **polarity groups**: a root net (a stage that is not a
    plain inverter, or a primary input with its ``~name`` complement) and every
    plain inverter hanging from it, directly or through other plain inverters.
    A group whose nets are all within their limits is left as it is.  Otherwise
    its plain inverters are taken out and its loads pooled by polarity (loads
    wanting the root's value, loads wanting its complement), then rebuilt as
    the cheapest tree, in sections, of:

    * ``copies`` of the root's stage (``strategy`` "duplicates", stages of
      at most :data:`DUPLICATE_SECTIONS` sections), each
      driving its share of the loads; the copies load the stage's inputs again;
    * inverters giving the complement (hung on a true node: the root, a copy
      or a follower) and inverters giving the true polarity again (hung on a
      complement node), so a load wanting the complement takes it from the
      first level and the true polarity comes from the second; widths from the
      inverter's limit, depth as the loads need;
    * cathode followers (``strategy`` "followers" and a follower limit of at
      least 2), each on a node that is not a follower.

    Loads are dealt to the nodes in creation order (roots first); a load a
    follower may not drive (a follower, a diode AND's input: its one divider
    is proven for plate-driven or follower-driven inputs, not a mix) goes to
    another node, and a shape where such loads do not fit is passed over.  Groups are
    repaired from the outputs back to the inputs, so a group's loads are final
    when it is repaired and copies only add loads to groups not yet visited:
    one pass reaches the fixed point.

    ``fanout_limit(stage)``: the most loads a stage may drive (a follower
    probe gives the follower limit; 0: no template, left for the integer
    program to report).  ``primary_limits``: net -> limit for primary nets
    (register outputs, inputs that declare a fan-out); other primary nets are
    ideal sources.  ``names``: words for primary nets in messages.  Raises
    :class:`FanoutError` naming the net when a group cannot be spread.
    The result is renumbered and checked by simulation against ``network``
    (up to 20 inputs).  Cost: O(groups x stages) plus the shape search, about
    (loads / limit)^2 for duplicates.

    >>> fan = Network(("a", "b"), (Stage("S1", "n1", "inverting", (Branch(("a", "b"), "dual"),)),),
    ...               {f"y{k}": "n1" for k in range(5)})
    >>> [s.view for s in repair_fanout(fan, lambda s: 2).stages]
    ['NAND-2', 'inverter', 'inverter', 'inverter']
    >>> [s.view for s in repair_fanout(fan, lambda s: 2, strategy="duplicates").stages]
    ['NAND-2', 'NAND-2', 'NAND-2']
    """
    if strategy not in STRATEGIES:
        raise ValueError(f"strategy {strategy!r}; expected one of {', '.join(STRATEGIES)}")
    primary_limits = dict(primary_limits or {})
    primary = set(network.primary_nets)
    nets = _Nets(network)
    describe = lambda net: describe_net(network, net, names)
    follower_limit = fanout_limit(Stage("F?", "#f?", "follower", input="x"))
    buffer_limit = fanout_limit(Stage("B?", "#b?", "inverting", (Branch(("x",), "single"),)))
    # Polarity groups: the root of every net (through plain inverters) and the net's polarity.
    group: dict[str, tuple[str, int]] = {}
    for net in network.primary_nets:
        group[net] = (net[1:], 1) if net.startswith("~") else (net, 0)
    for stage in network.stages:
        source = _plain_source(nets.records[stage.output])
        if source is None:
            group[stage.output] = (stage.output, 0)
        else:
            top, pol = group[source]
            group[stage.output] = (top, 1 - pol)
    members: dict[str, list[tuple[str, int]]] = {}
    for net, (top, pol) in group.items():
        members.setdefault(top, []).append((net, pol))
    limits = {}
    for net in primary:
        limits[net] = primary_limits.get(net, _UNLIMITED)
    for stage in network.stages:
        limits[stage.output] = fanout_limit(stage)
    roots = [s.output for s in reversed(network.stages) if group[s.output] == (s.output, 0)]
    roots += [net for net in network.inputs]
    for root in roots:
        _repair_group(nets, root, members[root], limits, strategy, buffer_limit, follower_limit, describe,
                      primary)
    moved = lambda mapping: {k: nets.moved.get(v, v) for k, v in mapping.items()}  # noqa: E731
    result = renumber(network.inputs, network.complements, nets.records, nets.outputs, network.forms,
                      moved(network.signals), moved(network.inverted_signals))
    if len(network.inputs) <= 20:
        before, after = simulate(network), simulate(result)
        for name in network.outputs:
            if before[network.outputs[name]] != after[result.outputs[name]]:
                raise ProofError(f"internal error: fan-out repair changed output {name!r}")
    return result
