"""Packing section jobs of one tube type into envelopes.

Deterministic: jobs are taken in network order and fill the lowest-numbered
envelope with a suitable section free.
"""

from __future__ import annotations

from dataclasses import dataclass

from .model import KINDS, TubeKind


@dataclass(frozen=True)
class Job:
    """One use of one section: ``stage`` (its place ``order`` in the network), ``branch``
    index (None for a follower, or for a diode), ``kind`` "single"/"dual"/"follower"/"diode";
    ``part``: which diode of a diode AND (0 otherwise)."""

    order: int
    stage: str
    branch: int | None
    kind: str
    part: int = 0


def max_flow_split(demand: dict[str, int], sections: tuple[frozenset, ...], envelopes: int) -> dict:
    """How many jobs of each kind go to each section index, ``envelopes`` slots per section.

    A transportation problem solved by augmenting paths (Ford and Fulkerson
    1956) on kinds -> sections; raises ValueError when the demand does not fit
    (the model's Hall constraints make that impossible).  Cost: O(F * K * S)
    for F augmentations over K kinds and S sections (both a handful).

    >>> s = (frozenset({"single", "dual"}), frozenset({"single"}))
    >>> max_flow_split({"dual": 2, "single": 2}, s, 2)
    {('dual', 0): 2, ('single', 1): 2}
    """
    kinds = [k for k in KINDS if demand.get(k, 0)]
    flow = {(k, s): 0 for k in kinds for s in range(len(sections)) if k in sections[s]}
    room = [envelopes] * len(sections)
    left = {k: demand[k] for k in kinds}
    while any(left.values()):
        path = _augmenting_path(kinds, flow, room, left)
        if path is None:
            raise ValueError(f"{demand} does not fit in {envelopes} envelopes")
        # path = [k0, s0, k1, s1, ..., sj]: forward k_i -> s_i, backward s_i -> k_(i+1)
        backward = [flow[(path[i + 1], path[i])] for i in range(1, len(path) - 1, 2)]
        amount = min([left[path[0]], room[path[-1]]] + backward)
        for i in range(0, len(path) - 1, 2):
            flow[(path[i], path[i + 1])] += amount
        for i in range(1, len(path) - 1, 2):
            flow[(path[i + 1], path[i])] -= amount
        left[path[0]] -= amount
        room[path[-1]] -= amount
    return {edge: f for edge, f in sorted(flow.items(), key=lambda e: (KINDS.index(e[0][0]), e[0][1])) if f}


def _augmenting_path(kinds, flow, room, left):
    """Breadth-first: from a kind with jobs left to a section with room, through the residual graph."""
    sections = sorted({s for _k, s in flow})
    for start in kinds:
        if not left[start]:
            continue
        parent: dict = {("k", start): None}
        frontier = [("k", start)]
        while frontier:
            nxt = []
            for node in frontier:
                if node[0] == "k":
                    steps = [("s", s) for s in sections if (node[1], s) in flow]
                else:
                    steps = [("k", k) for k in kinds if flow.get((k, node[1]), 0) > 0]
                for step in steps:
                    if step in parent:
                        continue
                    parent[step] = node
                    if step[0] == "s" and room[step[1]] > 0:
                        path = [step]
                        while parent[path[-1]] is not None:
                            path.append(parent[path[-1]])
                        return [label for _tag, label in reversed(path)]
                    nxt.append(step)
            frontier = nxt
    return None


def pack(kind: TubeKind, jobs: list[Job], envelopes: int) -> list[list[tuple[int, Job]]]:
    """Jobs on ``kind`` placed into at most ``envelopes`` envelopes: per envelope, (section index, job).

    Followers on a type with a shared cathode get an envelope each; the rest
    are split over section indices by :func:`max_flow_split`, then each job, in
    stage order, takes the lowest-numbered envelope with its section free.
    Returned envelopes are those used, in order of their first job.
    """
    alone = kind.shared_cathode and any(j.kind == "follower" for j in jobs)
    solo = [j for j in jobs if alone and j.kind == "follower"]
    rest = [j for j in jobs if j not in solo] if solo else list(jobs)
    slots = envelopes - len(solo)
    demand = {k: sum(1 for j in rest if j.kind == k) for k in KINDS}
    split = dict(max_flow_split(demand, kind.sections, slots)) if rest else {}
    room = dict(split)
    lowest = [0] * len(kind.sections)  # no section is ever freed, so the lowest free envelope only rises
    boxes: list[list[tuple[int, Job]]] = [[] for _ in range(slots)]
    for job in rest:
        best = None
        for s in range(len(kind.sections)):
            if room.get((job.kind, s), 0) > 0 and (best is None or (lowest[s], s) < best):
                best = (lowest[s], s)
        e, s = best
        boxes[e].append((s, job))
        lowest[s] += 1
        room[(job.kind, s)] -= 1
    boxes = [sorted(box, key=lambda sj: sj[0]) for box in boxes if box]
    boxes += [[(_follower_section(kind), job)] for job in solo]
    return sorted(boxes, key=lambda box: min(job.order for _s, job in box))


def _follower_section(kind: TubeKind) -> int:
    return next(s for s, caps in enumerate(kind.sections) if "follower" in caps)


def pack_diodes(kind: TubeKind, jobs: list[Job]) -> list[list[tuple[int, Job]]]:
    """Diode jobs in order, ``kind.diode_sections`` to an envelope."""
    per = kind.diode_sections
    return [[(i, job) for i, job in enumerate(jobs[k:k + per])] for k in range(0, len(jobs), per)]
