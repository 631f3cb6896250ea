"""Fewest-section decomposition of wide AND terms under a branch fan-in limit.

A branch conducts when all of its (at most ``fanin``) inputs are high.  A wider
product of operands ``x1 ... xn`` is made from nets built by extra stages, with
these identities (De Morgan):

* ``branch(L)``: a branch on ``AND(L)``: the operands themselves when
  ``|L| <= fanin``; else a branch on parts ``L = P1 u ... u Pj`` (``j <= fanin``),
  a one-operand part used directly, a wider part through its net ``and(P)``.
* ``and(L)``: a net carrying ``AND(L) = NOT(OR over groups G of NAND(G))``: one
  stage with one single-input branch per group (at most ``max_branches``): on
  ``~x`` for a one-operand group, on the net ``nand(G)`` for a wider one; or the
  inverter of ``nand(L)``.
* ``nand(L)``: a net carrying ``NAND(L)``: one stage whose only branch is
  ``branch(L)``.

Operands come in two classes: class 0 has its complement at hand (a declared
``~a``, or the input of an inverter), class 1 needs an inverter (one section,
one stage).  The dynamic program below takes the cheapest choice at each level
over all partitions of the operand multiset ``(n0, n1)``; costs are
``(sections, stages, diodes)``, compared in that order.  Memoised per instance:
``O(n^2 * fanin)`` states for ``n`` operands, each scanning ``O(n^2)`` first
parts.  That this family is optimal among all stage networks for small widths
is checked by exhaustive search in ``tests/test_stages_decompose.py``.

>>> d = Decomposer(fanin=2, max_branches=6, branch_cost=lambda j: (1, 0, 0))
>>> [d.branch(0, n)[0][0] for n in range(1, 7)]      # sections of a branch on an n-term AND
[1, 1, 3, 5, 5, 7]
>>> [d.and_net(0, n)[0][0] for n in range(2, 7)]     # sections of a net carrying AND
[2, 4, 4, 6, 6]
"""

from __future__ import annotations

from typing import Callable

Cost = tuple[int, int, int]
ZERO: Cost = (0, 0, 0)
SECTION: Cost = (1, 0, 0)
STAGE: Cost = (0, 1, 0)
INVERTER: Cost = (1, 1, 0)
INFEASIBLE: Cost = (1 << 40, 1 << 40, 1 << 40)


def add(*costs: Cost) -> Cost:
    return tuple(min(sum(c[i] for c in costs), INFEASIBLE[i]) for i in range(3))  # type: ignore[return-value]


class Decomposer:
    """The dynamic program of the module docstring for one set of limits.

    ``branch_cost(j)`` is the cost of one branch of ``j`` inputs (its sections
    and diodes).  Every method returns ``(cost, choice)``; ``choice`` is what
    :class:`planner.stages.builder.Builder` needs to build it.
    """

    def __init__(self, *, fanin: int, max_branches: int, branch_cost: Callable[[int], Cost]) -> None:
        self.fanin = fanin
        self.max_branches = max_branches
        self.branch_cost = branch_cost
        self._memo: dict[tuple, tuple[Cost, object]] = {}

    def branch(self, n0: int, n1: int) -> tuple[Cost, object]:
        """A branch on the AND of the operands: ``("direct",)``, ``("parts", sizes)`` or ``("split",)``."""
        key = ("branch", n0, n1)
        if key not in self._memo:
            n = n0 + n1
            if n <= self.fanin:
                result = (self.branch_cost(n), ("direct",))
            else:
                split_cost, _ = self.and_split(n0, n1)
                result = (add(self.branch_cost(1), split_cost), ("split",))
                for j in range(2, self.fanin + 1):
                    cost, parts = self._partition(n0, n1, j, "part")
                    cost = add(self.branch_cost(j), cost)
                    if cost < result[0]:
                        result = (cost, ("parts", parts))
            self._memo[key] = result
        return self._memo[key]

    def and_net(self, n0: int, n1: int) -> tuple[Cost, object]:
        """A net carrying the AND of two or more operands: ``("groups", sizes)`` or ``("invert",)``."""
        key = ("and", n0, n1)
        if key not in self._memo:
            result = self.and_split(n0, n1)
            if self.fanin >= 2:
                cost = add(INVERTER, self.nand_net(n0, n1)[0])
                if cost < result[0]:
                    result = (cost, ("invert",))
            self._memo[key] = result
        return self._memo[key]

    def and_split(self, n0: int, n1: int) -> tuple[Cost, object]:
        """The AND as a NOR stage over two or more groups: ``("groups", sizes)``."""
        key = ("split", n0, n1)
        if key not in self._memo:
            result: tuple[Cost, object] = (INFEASIBLE, ("groups", ()))
            for g in range(2, min(self.max_branches, n0 + n1) + 1):
                cost, groups = self._partition(n0, n1, g, "group")
                cost = add(STAGE, cost)
                if cost < result[0]:
                    result = (cost, ("groups", groups))
            self._memo[key] = result
        return self._memo[key]

    def nand_net(self, n0: int, n1: int) -> tuple[Cost, object]:
        """A net carrying the NAND of the operands (one operand: its complement)."""
        if n0 + n1 == 1:
            return (ZERO if n0 else INVERTER), ("complement",)
        cost, _ = self.branch(n0, n1)
        return add(STAGE, cost), ("stage",)

    def _part_cost(self, a0: int, a1: int, role: str) -> Cost:
        if role == "part":
            return ZERO if a0 + a1 == 1 else self.and_net(a0, a1)[0]
        if a0 + a1 == 1:
            return SECTION if a0 else add(SECTION, INVERTER)
        return add(SECTION, self.nand_net(a0, a1)[0])

    def _partition(self, n0: int, n1: int, parts: int, role: str) -> tuple[Cost, tuple[tuple[int, int], ...]]:
        """Cheapest split of ``(n0, n1)`` into exactly ``parts`` non-empty parts, parts largest first."""
        key = ("partition", n0, n1, parts, role)
        if key not in self._memo:
            if parts == 1:
                result = (self._part_cost(n0, n1, role), ((n0, n1),))
            else:
                result = (INFEASIBLE, ())
                # First part the largest (size, then class-1 count): each partition is seen once.
                for a0 in range(n0, -1, -1):
                    for a1 in range(n1, -1, -1):
                        size, rest = a0 + a1, n0 + n1 - a0 - a1
                        if size == 0 or rest < parts - 1 or size * parts < n0 + n1:
                            continue
                        rest_cost, rest_parts = self._partition(n0 - a0, n1 - a1, parts - 1, role)
                        if rest_parts and (rest_parts[0][0] + rest_parts[0][1], rest_parts[0][1]) > (size, a1):
                            continue
                        cost = add(self._part_cost(a0, a1, role), rest_cost)
                        if cost < result[0]:
                            result = (cost, ((a0, a1),) + rest_parts)
            self._memo[key] = result
        return self._memo[key]
