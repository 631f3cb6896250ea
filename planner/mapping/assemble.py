"""The model's counts made concrete: a way for every stage, sockets V1, V2, ..., heater windings.

Deterministic throughout: stages of a class take the class's ways in way order
(tube name, then template), in stage order; envelopes are numbered by the first
stage (then branch, then diode) that uses them.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from .layout import Job, pack, pack_diodes
from .model import Counts, Problem, RegisterWay, TubeKind, Way


@dataclass(frozen=True)
class Socket:
    """One envelope: designator, type, heater way (index into the kind's heaters) and its jobs.

    ``jobs``: (section position, job); the position counts amplifying sections
    (or, for a diode type, diode sections) from 0 in catalogue order.
    """

    ref: str
    tube: str
    heater: int
    jobs: tuple[tuple[int, Job], ...]


@dataclass(frozen=True)
class Placement:
    """Every stage's way and every job's socket: ``at[(stage, branch, part)] = (ref, position)``
    (branch None for a follower; part counts the diodes of a diode AND from 1, 0 otherwise)."""

    ways: dict
    sockets: tuple[Socket, ...]
    at: dict
    registers: dict = field(default_factory=dict)


def _deal(classes, rows, members) -> dict:
    """Member -> way: each class's members, in order, take its ways as the counts in ``rows`` say."""
    chosen = {}
    for cls, row in zip(classes, rows):
        picks = [w for w, n in enumerate(row) for _ in range(n)]
        for member, w in zip(members(cls), picks):
            chosen[member] = cls.ways[w]
    return chosen


def choose_ways(problem: Problem, counts: Counts) -> dict[str, Way]:
    """Stage id -> way, dealt from the solved counts."""
    return _deal(problem.classes, counts.ways, lambda cls: cls.stages)


def choose_register_ways(problem: Problem, counts: Counts) -> dict[str, RegisterWay]:
    """Register name -> way, dealt from the solved counts."""
    return _deal(problem.registers, counts.register_ways, lambda cls: cls.registers)


def register_job_id(name: str) -> str:
    """The job (and parts') stage id of register ``name``: ``reg:NAME``."""
    return f"reg:{name}"


def _jobs(network, ways: dict[str, Way]) -> tuple[dict[str, list[Job]], list[Job]]:
    """Section jobs by tube type, and the diode jobs, in network order."""
    by_tube: dict[str, list[Job]] = {}
    diodes: list[Job] = []
    for order, stage in enumerate(network.stages):
        way = ways[stage.id]
        if stage.kind == "follower":
            by_tube.setdefault(way.tube, []).append(Job(order, stage.id, None, "follower"))
            continue
        kind = "dual" if way.template == "dual" else "single"
        for b, branch in enumerate(stage.branches):
            by_tube.setdefault(way.tube, []).append(Job(order, stage.id, b, kind))
            if way.template == "diode":
                diodes.extend(Job(order, stage.id, b, "diode", k + 1) for k in range(len(branch.inputs)))
    return by_tube, diodes


def place(network, problem: Problem, counts: Counts, register_order: tuple[str, ...] = ()) -> Placement:
    """Sockets for the counts of ``problem`` on ``network``.

    Each register's bistable takes a whole envelope of its way's type (both
    sections), numbered after the stages' envelopes in ``register_order``; the other sections are
    packed per type by :func:`planner.mapping.layout.pack`;
    vacuum diodes fill the diode types in name order, up to each type's
    count in the solution.  Heater ways are dealt to a type's envelopes in
    designator order, as many of each as the solution has.
    """
    ways = choose_ways(problem, counts)
    chosen = choose_register_ways(problem, counts)
    registers = {name: chosen[name] for name in sorted(chosen, key=lambda n: (register_order + (n,)).index(n))}
    by_tube, diode_jobs = _jobs(network, ways)
    boxes: list[tuple[TubeKind, list]] = []
    kinds = {kind.tube: kind for kind in problem.kinds}
    held = {kind.tube: 0 for kind in problem.kinds}
    for order, name in enumerate(registers, len(network.stages)):
        way = registers[name]
        held[way.tube] += 1
        job = register_job_id(name)
        boxes.append((kinds[way.tube], [(0, Job(order, job, None, "bistable")),
                                        (1, Job(order, job, None, "bistable", 1))]))
    for t, kind in enumerate(problem.kinds):
        if by_tube.get(kind.tube):
            boxes.extend((kind, box) for box in pack(kind, by_tube[kind.tube], counts.envelopes[t] - held[kind.tube]))
    if problem.vacuum_diodes and diode_jobs:
        left = list(diode_jobs)
        for t, kind in enumerate(problem.kinds):
            if kind.diode_sections and left:
                take = left[:kind.diode_sections * counts.envelopes[t]]
                left = left[len(take):]
                boxes.extend((kind, box) for box in pack_diodes(kind, take))
        if left:
            raise ValueError("internal error: the solution has too few diode sections")

    def first(item):
        kind, box = item
        job = min((j for _s, j in box), key=lambda j: (j.order, -1 if j.branch is None else j.branch, j.part))
        return (job.order, -1 if job.branch is None else job.branch, job.part, kind.tube)

    boxes.sort(key=first)
    heaters = {kind.tube: [k for k, n in enumerate(row) for _ in range(n)]
               for kind, row in zip(problem.kinds, counts.heaters)}
    dealt = {tube: 0 for tube in heaters}
    sockets, at = [], {}
    for i, (kind, box) in enumerate(boxes, 1):
        ref = f"V{i}"
        pool = heaters[kind.tube]
        heater = pool[min(dealt[kind.tube], len(pool) - 1)]
        dealt[kind.tube] += 1
        sockets.append(Socket(ref, kind.tube, heater, tuple(sorted(box, key=lambda sj: sj[0]))))
        for position, job in box:
            at[(job.stage, job.branch, job.part)] = (ref, position)
    return Placement(ways, tuple(sockets), at, registers)
