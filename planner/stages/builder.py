"""Building stages under the stock's limits, with structural hashing.

The builder holds the stages made so far under temporary net names (``#1``,
``#2``, ...; never a valid design name).  Equal stages are made once (the same
branches give the same net), every inverter records its input and output as
complements of each other, and a primary input's declared complement is known
from the start, so no literal is inverted twice.
"""

from __future__ import annotations

from typing import Iterable, Mapping, Sequence

from .decompose import INFEASIBLE, Cost, Decomposer
from .network import SECTIONS_PER_BRANCH, Network, renumber
from .options import SynthesisOptions

Body = tuple[tuple[tuple[str, ...], str], ...]


class Builder:
    """Stages under construction for one synthesis; :meth:`copy` gives a trial branch."""

    def __init__(self, options: SynthesisOptions, complements: Mapping[str, str] | None = None) -> None:
        self.options = options
        self.decomposer = Decomposer(fanin=options.fanin, max_branches=options.branch_limit,
                                     branch_cost=self._branch_cost)
        self.drivers: dict[str, tuple] = {}
        self._by_body: dict[tuple, str] = {}
        self._complement: dict[str, str] = {}
        for a, b in sorted((complements or {}).items()):
            self._complement[a], self._complement[b] = b, a

    def copy(self) -> "Builder":
        other = Builder.__new__(Builder)
        other.options, other.decomposer = self.options, self.decomposer
        other.drivers = dict(self.drivers)
        other._by_body = dict(self._by_body)
        other._complement = dict(self._complement)
        return other

    def _branch_cost(self, n: int) -> Cost:
        if n > self.options.fanin:
            return INFEASIBLE
        means = self.options.means_for(n)
        return (SECTIONS_PER_BRANCH[means], 0, n if means == "diode" else 0)

    # -- stages ---------------------------------------------------------------

    def stage(self, branches: Iterable[Sequence[str]]) -> str:
        """The net of the stage ``NOT(OR of ANDs)`` over ``branches`` (each within the fan-in).

        Inputs are sorted, repeated and absorbed branches (a superset of another
        branch's inputs) dropped, so equal logic gives one stage.
        """
        sets = sorted({tuple(sorted(set(b))) for b in branches}, key=lambda b: (len(b), b))
        kept: list[tuple[str, ...]] = []
        for b in sets:
            if not any(set(k) <= set(b) for k in kept):
                kept.append(b)
        if len(kept) > self.options.branch_limit:
            raise ValueError(f"{len(kept)} branches exceed the limit {self.options.branch_limit}")
        body: Body = tuple((b, self.options.means_for(len(b))) for b in sorted(kept))
        key = ("inverting", body)
        if key not in self._by_body:
            net = f"#{len(self.drivers) + 1}"
            self.drivers[net] = key
            self._by_body[key] = net
            if len(body) == 1 and len(body[0][0]) == 1:
                source = body[0][0][0]
                self._complement.setdefault(source, net)
                self._complement.setdefault(net, source)
        return self._by_body[key]

    def follower(self, net: str) -> str:
        """A new follower copying ``net`` (followers are never merged: each carries its own loads)."""
        out = f"#{len(self.drivers) + 1}"
        self.drivers[out] = ("follower", net)
        return out

    def constant_high(self) -> str:
        """A stage with no branches: its plate sits at the high level."""
        return self.stage([])

    def complement(self, net: str) -> str:
        """A net carrying NOT ``net``: known already, or a new (shared) inverter."""
        if net not in self._complement:
            self.stage([[net]])
        return self._complement[net]

    def has_complement(self, net: str) -> bool:
        return net in self._complement

    # -- decomposition (see decompose.py for the identities) -------------------

    def _classes(self, operands: Iterable[str]) -> tuple[list[str], list[str]]:
        ops = sorted(set(operands))
        return [x for x in ops if self.has_complement(x)], [x for x in ops if not self.has_complement(x)]

    @staticmethod
    def _deal(free: list[str], costly: list[str], sizes) -> list[list[str]]:
        parts, i0, i1 = [], 0, 0
        for a0, a1 in sizes:
            parts.append(free[i0:i0 + a0] + costly[i1:i1 + a1])
            i0, i1 = i0 + a0, i1 + a1
        return parts

    def branch_inputs(self, operands: Iterable[str]) -> tuple[str, ...]:
        """Inputs (at most the fan-in) of one branch conducting on the AND of ``operands``."""
        free, costly = self._classes(operands)
        _, choice = self.decomposer.branch(len(free), len(costly))
        if choice[0] == "direct":
            return tuple(free + costly)
        if choice[0] == "split":
            return (self._and_split(free, costly),)
        parts = self._deal(free, costly, choice[1])
        return tuple(p[0] if len(p) == 1 else self.and_net(p) for p in parts)

    def and_net(self, operands: Iterable[str]) -> str:
        """A net carrying the AND of ``operands`` (one operand: itself)."""
        free, costly = self._classes(operands)
        if len(free) + len(costly) == 1:
            return (free + costly)[0]
        _, choice = self.decomposer.and_net(len(free), len(costly))
        if choice[0] == "invert":
            return self.complement(self.nand_net(free + costly))
        return self._and_split(free, costly)

    def _and_split(self, free: list[str], costly: list[str]) -> str:
        _, (_, sizes) = self.decomposer.and_split(len(free), len(costly))
        groups = self._deal(free, costly, sizes)
        return self.stage([[self.complement(g[0]) if len(g) == 1 else self.nand_net(g)] for g in groups])

    def nand_net(self, operands: Iterable[str]) -> str:
        """A net carrying the NAND of ``operands`` (one operand: its complement)."""
        ops = sorted(set(operands))
        if len(ops) == 1:
            return self.complement(ops[0])
        return self.stage([self.branch_inputs(ops)])

    def aoi_net(self, terms: Sequence[Sequence[str]]) -> str:
        """A net carrying ``NOT(OR over terms of AND(term))`` within fan-in and branch limits.

        More terms than a stage may hold: either the stage keeps some terms and
        takes the rest as OR-nets (each the inverted output of a sub-stage of
        terms: two sections each), or ``NOT(T1 | ... | Tm) = AND(NOT T1, ...,
        NOT Tm)`` over sub-stages of whole parts, whichever is cheaper.
        """
        terms = sorted({tuple(sorted(set(t))) for t in terms}, key=lambda t: (len(t), t))
        limit = self.options.branch_limit
        if not terms:
            return self.constant_high()
        if len(terms) <= limit:
            return self.stage([self.branch_inputs(t) for t in terms])
        m = -(-len(terms) // limit)
        and_cost = self.decomposer.and_net(0, m)[0]
        parts_cost = (and_cost[0], and_cost[1] + m - 1, and_cost[2])
        or_nets = -(-(len(terms) - limit) // (limit - 1)) if limit > 1 else None
        if or_nets is not None and or_nets <= limit and (2 * or_nets, 2 * or_nets, 0) <= parts_cost:
            direct, rest = terms[:limit - or_nets], terms[limit - or_nets:]
            subs = [rest[i::or_nets] for i in range(or_nets)]
            ors = [self.complement(self.aoi_net(sub)) for sub in subs]
            return self.stage([self.branch_inputs(t) for t in direct] + [[y] for y in ors])
        parts = [terms[i::m] for i in range(m)]
        return self.and_net([self.aoi_net(p) for p in parts])

    # -- results ----------------------------------------------------------------

    def live_cost(self, roots: Iterable[str]) -> tuple[int, int, int]:
        """(sections, stages, diodes) of the stages that ``roots`` need."""
        seen: set[str] = set()
        stack = [r for r in roots]
        sections = stages = diodes = 0
        while stack:
            net = stack.pop()
            if net in seen or net not in self.drivers:
                continue
            seen.add(net)
            kind, body = self.drivers[net]
            stages += 1
            if kind == "follower":
                sections += 1
                stack.append(body)
                continue
            for inputs, means in body:
                sections += SECTIONS_PER_BRANCH[means]
                diodes += len(inputs) if means == "diode" else 0
                stack.extend(inputs)
        return sections, stages, diodes

    def network(self, inputs: tuple[str, ...], complements: tuple[str, ...], outputs: Mapping[str, str],
                forms: Mapping[str, str], signals: Mapping[str, str],
                inverted_signals: Mapping[str, str]) -> Network:
        """The finished network, renumbered (see :func:`planner.stages.network.renumber`)."""
        return renumber(inputs, complements, self.drivers, outputs, forms, signals, inverted_signals)
