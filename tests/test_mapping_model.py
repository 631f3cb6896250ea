"""The aggregated integer program against brute-force enumeration on tiny problems.

All tube data here is invented test data (made-up types, counts, currents and
windings); only its shape matters.
"""

from __future__ import annotations

import itertools
import random

import pytest

from planner.mapping import model as M
from planner.mapping.layout import Job, max_flow_split, pack
from planner.mapping.model import HeaterWay

S = frozenset


def _fits(sections, jobs, envelopes, shared):
    """Whether ``jobs`` (kinds) fit ``envelopes`` envelopes by trying every slot (tiny cases only)."""
    if shared and "follower" in jobs:
        followers = jobs.count("follower")
        if followers > envelopes:
            return False
        envelopes -= followers
        jobs = [j for j in jobs if j != "follower"]
    slots = [(e, s) for e in range(envelopes) for s in range(len(sections))]
    jobs = sorted(jobs)

    def place(i, free):
        if i == len(jobs):
            return True
        for slot in sorted(free):
            if jobs[i] in sections[slot[1]]:
                if place(i + 1, free - {slot}):
                    return True
        return False
    return place(0, frozenset(slots))


def _brute(problem: M.Problem):
    """Least weighted objective over every per-stage choice and every per-envelope heater choice."""
    kinds = {k.tube: k for k in problem.kinds}
    stages = [(cls, i) for cls in problem.classes for i in range(cls.count)]
    best = None
    for choice in itertools.product(*[range(len(cls.ways)) for cls, _ in stages]):
        ways = [cls.ways[w] for (cls, _), w in zip(stages, choice)]
        plate = problem.supplies.fixed_plate_amps + sum(w.plate_amps for w in ways)
        bias = problem.supplies.fixed_bias_amps + sum(w.bias_amps for w in ways)
        if plate > problem.supplies.plate_max_amps + 1e-12 or bias > problem.supplies.bias_max_amps + 1e-12:
            continue
        need = {}
        for tube, kind in kinds.items():
            jobs = [k for w in ways if w.tube == tube for k, n in w.demand for _ in range(n)]
            n = 0
            while not _fits(kind.sections, jobs, n, kind.shared_cathode):
                n += 1
            need[tube] = n
        if any(need[t] > kinds[t].usable for t in kinds):
            continue
        envelopes = [t for t in sorted(kinds) for _ in range(need[t])]
        for heat in itertools.product(*[range(len(kinds[t].heaters)) for t in envelopes]):
            amps = {w[0]: 0.0 for w in problem.supplies.windings}
            watts = 0.0
            for t, h in zip(envelopes, heat):
                way = kinds[t].heaters[h]
                amps[way.winding] += way.amps
                watts += way.watts
            if any(amps[w] > cap + 1e-9 for w, _v, cap in problem.supplies.windings):
                continue
            wt = problem.weights
            value = (wt.envelopes * len(envelopes) + wt.heater_watts * watts
                     + wt.scarce * sum(1 for t in envelopes if kinds[t].scarce))
            best = value if best is None else min(best, value)
    return best


def _random_problem(rng: random.Random) -> M.Problem:
    windings = (("H1", 6.3, rng.choice([0.6, 0.9, 1.5])), ("H2", 12.6, rng.choice([0.3, 0.6])))
    kinds = []
    for i in range(rng.randint(2, 3)):
        shape = rng.choice(["dual-triode", "multigrid", "triode-pentode", "shared"])
        sections = {"dual-triode": (S({"single", "follower"}), S({"single", "follower"})),
                    "multigrid": (S({"single", "dual"}),),
                    "triode-pentode": (S({"single", "follower"}), S({"single", "dual"})),
                    "shared": (S({"single", "follower"}), S({"single", "follower"}))}[shape]
        heaters = [HeaterWay("H1", "parallel", 6.3, rng.choice([0.15, 0.3, 0.45]))]
        if rng.random() < 0.5:
            heaters.append(HeaterWay("H2", "series", 12.6, heaters[0].amps / 2))
        kinds.append(M.TubeKind(f"T{i}", rng.randint(1, 3), rng.random() < 0.3, sections, 0,
                                shape == "shared", tuple(heaters)))
    classes = []
    for c in range(rng.randint(1, 3)):
        need = rng.choice(["single", "dual", "follower"])
        ways = []
        for kind in kinds:
            if any(need in caps for caps in kind.sections) and rng.random() < 0.85:
                ways.append(M.Way(kind.tube, need, ((need, 1),), rng.uniform(1, 5) * 1e-3, 1e-3,
                                  rng.uniform(0, 2) * 1e-3, 9))
        if ways:
            classes.append(M.StageClass((c,), tuple(f"S{c}_{i}" for i in range(rng.randint(1, 2))), tuple(ways)))
    weights = M.Weights(envelopes=1.0, heater_watts=rng.choice([0.05, 0.5]), scarce=rng.choice([0.0, 5.0]))
    supplies = M.Supplies(rng.uniform(8, 30) * 1e-3, rng.uniform(2, 10) * 1e-3, windings)
    return M.Problem(tuple(kinds), tuple(classes), supplies, weights)


@pytest.mark.parametrize("seed", range(40))
def test_integer_program_matches_brute_force(seed):
    problem = _random_problem(random.Random(seed))
    expected = _brute(problem)
    if expected is None:
        with pytest.raises(M.Infeasible, match="^weighted$"):  # the criterion without a solution
            M.solve_problem(problem)
        return
    counts = M.solve_problem(problem)
    got = dict(counts.terms)["weighted"]
    assert got == pytest.approx(expected, abs=1e-6)
    level, = counts.levels
    assert level.lp_bound <= level.value + 1e-9


def test_shared_cathode_follower_takes_its_own_envelope():
    kind = M.TubeKind("T", 5, False, (S({"single", "follower"}), S({"single", "follower"})), 0, True,
                      (HeaterWay("H1", "single", 6.3, 0.3),))
    jobs = [Job(0, "S1", 0, "single"), Job(1, "S2", None, "follower"), Job(2, "S3", 0, "single")]
    boxes = pack(kind, jobs, 2)
    assert [[j.stage for _s, j in box] for box in boxes] == [["S1", "S3"], ["S2"]]
    way_f = M.Way("T", "follower", (("follower", 1),), 1e-3, 1e-3, 0.0, 9)
    way_s = M.Way("T", "single", (("single", 1),), 1e-3, 1e-3, 0.0, 9)
    problem = M.Problem((kind,), (M.StageClass(("f",), ("S2",), (way_f,)),
                                  M.StageClass(("s",), ("S1", "S3"), (way_s,))),
                        M.Supplies(0.1, 0.1, (("H1", 6.3, 10),)), M.Weights())
    assert M.solve_problem(problem).envelopes == (2,)


def test_max_flow_split_uses_the_restricted_sections_for_restricted_jobs():
    sections = (S({"single", "dual"}), S({"single"}))
    split = max_flow_split({"single": 3, "dual": 2}, sections, 3)
    assert split[("dual", 0)] == 2 and sum(v for (k, _s), v in split.items() if k == "single") == 3
    with pytest.raises(ValueError, match=r"^\{'dual': 3\} does not fit in 2 envelopes$"):
        max_flow_split({"dual": 3}, sections, 2)


def test_lexicographic_mode_puts_scarce_envelopes_first():
    # Invented: a scarce multigrid type saves two envelopes, a plain type does not.
    plain = M.TubeKind("P", 10, False, (S({"single"}),), 0, False, (HeaterWay("H1", "single", 6.3, 0.3),))
    rare = M.TubeKind("R", 10, True, (S({"single"}), S({"single"}), S({"single"})), 0, False,
                      (HeaterWay("H1", "single", 6.3, 0.3),))
    ways = (M.Way("P", "single", (("single", 1),), 1e-3, 1e-3, 0.0, 9),
            M.Way("R", "single", (("single", 1),), 1e-3, 1e-3, 0.0, 9))
    classes = (M.StageClass(("s",), ("S1", "S2", "S3"), ways),)
    supplies = M.Supplies(0.1, 0.1, (("H1", 6.3, 10),))
    weighted = M.solve_problem(M.Problem((plain, rare), classes, supplies, M.Weights(scarce=1.0)))
    assert weighted.envelopes == (0, 1)   # 1 + 1 (scarce) < 3 plain envelopes
    lexi = M.solve_problem(M.Problem((plain, rare), classes, supplies, M.Weights(scarce=1.0, mode="lexicographic")))
    assert lexi.envelopes == (3, 0)
    assert [lv.criterion for lv in lexi.levels] == ["scarce envelopes", "envelopes", "heater watts"]
    assert all(lv.lp_bound <= lv.value + 1e-9 for lv in lexi.levels)


def test_diagnose_buys_the_fewest_envelopes():
    kind = M.TubeKind("T", 1, False, (S({"single"}), S({"single"})), 0, False, (HeaterWay("H1", "single", 6.3, 0.3),))
    way = M.Way("T", "single", (("single", 1),), 1e-3, 1e-3, 0.0, 9)
    problem = M.Problem((kind,), (M.StageClass(("s",), tuple(f"S{i}" for i in range(5)), (way,)),),
                        M.Supplies(0.1, 0.1, (("H1", 6.3, 0.6),)), M.Weights())
    with pytest.raises(M.Infeasible, match="^weighted$"):
        M.solve_problem(problem)
    counts = M.diagnose(problem)
    assert counts.purchase == (2,)
    assert dict(counts.overloads)["H1"] == pytest.approx(0.3)
