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


def _groups(kind: TubeKind, heaters: tuple[int, ...], hosted) -> list[tuple[list[int], dict, int, int]]:
    """The kind's envelope groups: (heater way indices, sections per demand kind, bistables, envelopes).

    One group of every way when the model did not split the type (``hosted`` empty).
    """
    if not hosted:
        return [(list(range(len(kind.heaters))), None, None, sum(heaters))]
    out = []
    for hosts, split, bistables in hosted:
        members = [k for k, way in enumerate(kind.heaters) if way.hosts == hosts]
        out.append((members, dict(split), bistables, sum(heaters[k] for k in members)))
    return out


def _share(items, kind_of, quotas) -> list[list]:
    """Items in order, each to the first group whose quota for its kind is not used up."""
    left = [dict(q) for q in quotas]
    out = [[] for _ in quotas]
    for item in items:
        g = next(g for g, q in enumerate(left) if q.get(kind_of(item), 0) > 0)
        left[g][kind_of(item)] -= 1
        out[g].append(item)
    return out


def place(network, problem: Problem, counts: Counts, register_order: tuple[str, ...] = ()) -> Placement:
    """Sockets for the counts of ``problem`` on ``network``.

    Each register's bistable takes a whole envelope of its way's type (both
    sections), numbered after the stages' envelopes in ``register_order``; the other sections are
    packed per type by :func:`planner.mapping.layout.pack`;
    vacuum diodes fill the diode types in name order, up to each type's
    count in the solution.  Heater ways are dealt to a type's envelopes in
    designator order, as many of each as the solution has.  Where the model
    split a type's envelopes into groups by what their heater ways may host
    (an elevated winding: ``Counts.hosted``), jobs and registers go to the
    groups in network order as the solution's shares say, each group is
    packed on its own and takes only its own heater ways.
    """
    ways = choose_ways(problem, counts)
    chosen = choose_register_ways(problem, counts)
    registers = {name: chosen[name] for name in sorted(chosen, key=lambda n: (register_order + (n,)).index(n))}
    by_tube, diode_jobs = _jobs(network, ways)
    boxes: list[tuple[TubeKind, int, list]] = []
    pools: dict[tuple[str, int], list[int]] = {}
    for t, kind in enumerate(problem.kinds):
        hosted = counts.hosted[t] if counts.hosted else ()
        groups = _groups(kind, counts.heaters[t], hosted)
        regs = [(order, name) for order, name in enumerate(registers, len(network.stages))
                if registers[name].tube == kind.tube]
        jobs = by_tube.get(kind.tube, [])
        if hosted:
            reg_share = _share(regs, lambda _r: "bistable", [{"bistable": b} for _m, _s, b, _n in groups])
            job_share = _share(jobs, lambda j: j.kind, [split for _m, split, _b, _n in groups])
        else:
            reg_share, job_share = [regs], [jobs]
        for g, (members, _split, _b, envelopes) in enumerate(groups):
            pools[(kind.tube, g)] = [k for k in members for _ in range(counts.heaters[t][k])]
            for order, name in reg_share[g]:
                job = register_job_id(name)
                boxes.append((kind, g, [(0, Job(order, job, None, "bistable")),
                                        (1, Job(order, job, None, "bistable", 1))]))
            if job_share[g]:
                boxes.extend((kind, g, box) for box in pack(kind, job_share[g], envelopes - len(reg_share[g])))
    if problem.vacuum_diodes and diode_jobs:
        left = list(diode_jobs)
        for t, kind in enumerate(problem.kinds):
            if kind.diode_sections and left:
                take = left[:kind.diode_sections * counts.envelopes[t]]
                left = left[len(take):]
                pools.setdefault((kind.tube, 0), [k for k, n in enumerate(counts.heaters[t]) for _ in range(n)])
                boxes.extend((kind, 0, box) for box in pack_diodes(kind, take))
        assert not left, "internal error: the solution has too few diode sections"

    def first(item):
        kind, _g, box = item
        job = min((j for _s, j in box), key=lambda j: (j.order, -1 if j.branch is None else j.branch, j.part))
        return (job.order, -1 if job.branch is None else job.branch, job.part, kind.tube)

    boxes.sort(key=first)
    dealt = {key: 0 for key in pools}
    sockets, at = [], {}
    for i, (kind, g, box) in enumerate(boxes, 1):
        ref = f"V{i}"
        pool = pools[(kind.tube, g)]
        heater = pool[min(dealt[(kind.tube, g)], len(pool) - 1)]
        dealt[(kind.tube, g)] += 1
        sockets.append(Socket(ref, kind.tube, heater, tuple(sorted(box, key=lambda sj: sj[0]))))
        for position, job in box:
            at[(job.stage, job.branch, job.part)] = (ref, position)
    return Placement(ways, tuple(sockets), at, registers)
