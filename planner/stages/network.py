"""The stage network: the intermediate representation between logic and tubes.

A stage is one plate node with one plate load.  An ``inverting`` stage computes
``NOT(OR over branches of AND over the branch's inputs)``; a ``follower`` copies
its ``input`` (a cathode follower, for fan-out).  Nets are named by the plan:
primary inputs by their own names (and ``~name`` where the design declares the
complement available), every stage output ``n1``, ``n2``, ... in topological
order.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Iterable, Mapping

#: Branch means: what a branch is built from, and its input count.
#: "single": one section, one control grid; "dual": one dual-control section (a
#: multigrid tube's g1 and g3, or a pentode gated on its suppressor); "diode": a
#: diode AND (one diode an input) on one section's grid; "series": two triode
#: sections in series, one input each.
MEANS = ("single", "dual", "diode", "series")

#: Amplifying sections a branch of each means occupies.
SECTIONS_PER_BRANCH = MappingProxyType({"single": 1, "dual": 1, "diode": 1, "series": 2})


@dataclass(frozen=True)
class Branch:
    """One conducting path from the plate node: on only when all inputs are high.

    >>> Branch(("a", "b"), "dual").sections
    1
    """

    inputs: tuple[str, ...]
    means: str

    def __post_init__(self) -> None:
        object.__setattr__(self, "inputs", tuple(self.inputs))
        if self.means not in MEANS:
            raise ValueError(f"branch means {self.means!r}; expected one of {', '.join(MEANS)}")
        n = len(self.inputs)
        fits = {"single": n == 1, "dual": n == 2, "series": n == 2, "diode": n >= 2}[self.means]
        if not fits:
            raise ValueError(f"a {self.means} branch cannot have {n} inputs")
        if len(set(self.inputs)) != n:
            raise ValueError(f"branch inputs repeat: {self.inputs}")

    @property
    def sections(self) -> int:
        return SECTIONS_PER_BRANCH[self.means]

    @property
    def diodes(self) -> int:
        return len(self.inputs) if self.means == "diode" else 0


def stage_view(kind: str, branches: tuple[Branch, ...]) -> str:
    """The textbook name of a stage, for reports.

    >>> b = lambda *i: Branch(i, "single" if len(i) == 1 else "dual")
    >>> [stage_view("inverting", x) for x in [(b("a"),), (b("a", "b"),), (b("a"), b("b"), b("c")),
    ...                                       (b("a", "b"), b("c"))]]
    ['inverter', 'NAND-2', 'NOR-3', 'AOI 2-1']
    """
    if kind == "follower":
        return "follower"
    if not branches:
        return "pull-up (constant 1)"
    sizes = sorted((len(b.inputs) for b in branches), reverse=True)
    if len(sizes) == 1:
        return "inverter" if sizes[0] == 1 else f"NAND-{sizes[0]}"
    if sizes[0] == 1:
        return f"NOR-{len(sizes)}"
    return "AOI " + "-".join(str(s) for s in sizes)


@dataclass(frozen=True)
class Stage:
    """One plate node: ``inverting`` (branches) or ``follower`` (``input``)."""

    id: str
    output: str
    kind: str
    branches: tuple[Branch, ...] = ()
    input: str | None = None
    view: str = ""

    def __post_init__(self) -> None:
        object.__setattr__(self, "branches", tuple(self.branches))
        if self.kind == "inverting":
            if self.input is not None:
                raise ValueError("an inverting stage has branches, not an input")
        elif self.kind == "follower":
            if self.branches or self.input is None:
                raise ValueError("a follower has one input and no branches")
        else:
            raise ValueError(f"stage kind {self.kind!r}; expected 'inverting' or 'follower'")
        view = stage_view(self.kind, self.branches)
        if self.view and self.view != view:
            raise ValueError(f"stage view {self.view!r} does not describe it; it is a {view}")
        object.__setattr__(self, "view", view)

    @property
    def input_nets(self) -> tuple[str, ...]:
        """Every net this stage loads, once per connection."""
        if self.kind == "follower":
            return (self.input,)
        return tuple(net for b in self.branches for net in b.inputs)

    @property
    def sections(self) -> int:
        return 1 if self.kind == "follower" else sum(b.sections for b in self.branches)


@dataclass(frozen=True)
class NetworkCost:
    """What a network needs: amplifying sections by branch means, diodes, stages."""

    sections_by_means: Mapping[str, int]
    followers: int
    diodes: int
    stages: int
    inverters: int

    @property
    def sections(self) -> int:
        return sum(SECTIONS_PER_BRANCH[m] * n for m, n in self.sections_by_means.items()) + self.followers

    def key(self) -> tuple[int, int, int]:
        """Ordering used to choose between networks: sections, then stages, then diodes."""
        return (self.sections, self.stages, self.diodes)


def _frozen_map(items) -> Mapping[str, str]:
    return MappingProxyType(dict(items))


@dataclass(frozen=True)
class Network:
    """A whole stage network.

    ``inputs``: the design inputs in design order (``names[0]`` is the most
    significant bit in simulation); ``complements``: inputs whose ``~name`` net
    is available from outside.  ``outputs``: design output -> net carrying it in
    true polarity.  ``forms``: design output -> the minimised expression it was
    built from.  ``signals`` / ``inverted_signals``: named signal -> net carrying
    it in true / inverted polarity, where such a net was built.
    """

    inputs: tuple[str, ...]
    stages: tuple[Stage, ...]
    outputs: Mapping[str, str]
    forms: Mapping[str, str] = field(default_factory=dict)
    signals: Mapping[str, str] = field(default_factory=dict)
    complements: tuple[str, ...] = ()
    inverted_signals: Mapping[str, str] = field(default_factory=dict)

    def __post_init__(self) -> None:
        for name in ("outputs", "forms", "signals", "inverted_signals"):
            object.__setattr__(self, name, _frozen_map(getattr(self, name).items()))
        object.__setattr__(self, "inputs", tuple(self.inputs))
        object.__setattr__(self, "stages", tuple(self.stages))
        object.__setattr__(self, "complements", tuple(self.complements))
        self._check()

    def _check(self) -> None:
        known = set(self.primary_nets)
        for stage in self.stages:
            for net in stage.input_nets:
                if net not in known:
                    raise ValueError(f"stage {stage.id} uses net {net!r} before it is driven")
            if stage.output in known:
                raise ValueError(f"net {stage.output!r} is driven twice")
            known.add(stage.output)
        for name, net in list(self.outputs.items()) + list(self.signals.items()):
            if net not in known:
                raise ValueError(f"{name!r} is on net {net!r}, which nothing drives")

    @property
    def primary_nets(self) -> tuple[str, ...]:
        """Nets driven from outside: the inputs, then the declared complements."""
        return self.inputs + tuple("~" + name for name in self.complements)

    def driver(self, net: str) -> Stage | None:
        """The stage driving ``net`` (None for a primary net)."""
        for stage in self.stages:
            if stage.output == net:
                return stage
        if net in self.primary_nets:
            return None
        raise KeyError(net)

    def load_counts(self) -> Mapping[str, int]:
        """Loads on every net: one per grid (or diode) connection, one per design output."""
        counts = {net: 0 for net in self.primary_nets}
        counts.update((stage.output, 0) for stage in self.stages)
        for stage in self.stages:
            for net in stage.input_nets:
                counts[net] += 1
        for net in self.outputs.values():
            counts[net] += 1
        return MappingProxyType(counts)

    def loads(self, net: str) -> int:
        """Loads on ``net`` (see :meth:`load_counts`)."""
        return self.load_counts()[net]

    def cost(self) -> NetworkCost:
        by_means = {m: 0 for m in MEANS}
        diodes = followers = inverters = 0
        for stage in self.stages:
            if stage.kind == "follower":
                followers += 1
                continue
            inverters += stage.view == "inverter"
            for b in stage.branches:
                by_means[b.means] += 1
                diodes += b.diodes
        return NetworkCost(MappingProxyType(by_means), followers, diodes, len(self.stages), inverters)


def canonical_order(roots: Iterable[str], drivers: Mapping[str, tuple]) -> list[str]:
    """Nets of the stages reachable from ``roots``, each after the nets it uses.

    Depth-first post-order from the roots in the order given, a stage's inputs
    visited in branch order: the same structure always numbers the same way.
    ``drivers`` maps a net to ``(kind, branches_inputs_or_input)``; nets absent
    from it are primary.  Iterative, so deep networks need no recursion.
    """
    order: list[str] = []
    done: set[str] = set()
    for root in roots:
        stack = [(root, False)]
        while stack:
            net, expanded = stack.pop()
            if net in done or net not in drivers:
                continue
            if expanded:
                done.add(net)
                order.append(net)
                continue
            stack.append((net, True))
            for used in reversed(_uses(drivers[net])):
                if used not in done:
                    stack.append((used, False))
    return order


def _uses(record: tuple) -> tuple[str, ...]:
    kind, body = record
    if kind == "follower":
        return (body,)
    return tuple(net for inputs, _means in body for net in inputs)


def renumber(inputs: tuple[str, ...], complements: tuple[str, ...], drivers: Mapping[str, tuple],
             outputs: Mapping[str, str], forms: Mapping[str, str], signals: Mapping[str, str],
             inverted_signals: Mapping[str, str]) -> Network:
    """Build a :class:`Network` from temporary nets: drop what no output uses, name the rest.

    Stages are numbered ``S1``, ``S2``, ... driving ``n1``, ``n2``, ... in
    :func:`canonical_order` from the outputs in design order.  Signals whose
    nets no output needs are left out of ``signals``.
    """
    order = canonical_order(list(outputs.values()), drivers)
    names = {net: f"n{i}" for i, net in enumerate(order, 1)}
    primary = set(inputs) | {"~" + c for c in complements}
    rename = lambda net: net if net in primary else names[net]  # noqa: E731
    stages = []
    for i, net in enumerate(order, 1):
        kind, body = drivers[net]
        if kind == "follower":
            stages.append(Stage(f"S{i}", names[net], "follower", input=rename(body)))
        else:
            branches = tuple(Branch(tuple(rename(x) for x in b_inputs), means) for b_inputs, means in body)
            stages.append(Stage(f"S{i}", names[net], "inverting", branches))
    live = lambda mapping: {k: rename(v) for k, v in mapping.items() if v in primary or v in names}  # noqa: E731
    return Network(inputs, tuple(stages), {k: rename(v) for k, v in outputs.items()}, forms,
                   live(signals), complements, live(inverted_signals))
