"""Cathode followers that pass worst case: elevated heater windings, follower-fed dividers, the ILP.

Stocks and designs here are invented test data (made-up counts, supplies and
logic); the tube types and their heater-cathode ratings are the built-in
catalogue's. ngspice (Debian) is the outside reference for the follower's levels.
"""

from __future__ import annotations

import itertools
import random
import re
import subprocess
import sys

import pytest

from planner.catalogue import builtin_catalogue, spice_nodes, spice_subcircuit, subcircuit_name
from planner.electrical import Rails, design_family, design_template, heater_cathode_excess
from planner.mapping import MappingOptions
from planner.pipeline import Shortage, plan_design
from planner.mapping import model as M
from planner.pipeline import _design as planning
from planner.mapping.assemble import place
from planner.mapping.model import HOSTS, HeaterWay
from planner.spec import InputError, load_design, load_stock
from planner.stages import Network, Stage, Branch

CAT = builtin_catalogue()
S = frozenset

STOCK = """\
# Invented test data.
supplies:
  plate: {volts: 150, max_ma: 300}
  bias: {volts: -100, max_ma: 100}
  heater:
    - {id: H1, volts: 6.3, max_amps: 10}
    - {id: H2, volts: 6.3, max_amps: 10%(elevation)s}
tubes:
  12AT7: {count: 20}
  5965: {count: 10}
diodes: none
"""


def _stock(tmp_path, elevation: str = "", name="stock.yaml"):
    path = tmp_path / name
    path.write_text(STOCK % {"elevation": elevation})
    return path


def _wide_design(tmp_path, loads: int = 12):
    """One NOR whose output feeds ``loads`` two-input stages: more than any stocked driver carries."""
    text = ["# Invented test data.", "design: wide", "inputs:", "  - a", "  - b"]
    text += [f"  - {{name: c{i}, complement: true}}" for i in range(1, loads + 1)]
    text += ["signals:", "  s: ~(a | b)", "outputs:"] + [f"  o{i}: ~(s | c{i})" for i in range(1, loads + 1)]
    path = tmp_path / "design.yaml"
    path.write_text("\n".join(text) + "\n")
    return path


# --- the stock file ----------------------------------------------------------------------------

def test_stock_reads_elevated_volts(tmp_path):
    stock = load_stock(str(_stock(tmp_path, ", elevated_volts: 60")))
    assert [(w.id, w.elevated_volts) for w in stock.windings] == [("H1", 0.0), ("H2", 60.0)]


BETWEEN_RAILS = "V; expected a DC reference between the bias rail (-100 V) and B+ (150 V)"


@pytest.mark.parametrize("value,words", [("200", "is 200 " + BETWEEN_RAILS), ("-120", "is -120 " + BETWEEN_RAILS),
                                         ("sixty", "must be a number, found 'sixty'"),
                                         ("true", "must be a number, found the boolean true")])
def test_bad_elevation_is_located(tmp_path, value, words):
    path = _stock(tmp_path, f", elevated_volts: {value}")
    message = f"{path}:7: heater winding 'H2'.elevated_volts {words}"
    with pytest.raises(InputError, match=f"^{re.escape(message)}$") as caught:
        load_stock(str(path))
    text = str(caught.value)
    assert text.startswith(f"{path}:7:") and "elevated_volts" in text and words in text


def test_bad_elevation_exits_2_without_traceback(tmp_path):
    stock = _stock(tmp_path, ", elevated_volts: 151")
    design = _wide_design(tmp_path, 2)
    out = tmp_path / "out"
    result = subprocess.run([sys.executable, "-m", "planner.cli", "plan", str(design), "--stock", str(stock),
                             "--out", str(out)], capture_output=True, text=True, timeout=120)
    assert result.returncode == 2 and "Traceback" not in result.stderr
    assert f"{stock}:7:" in result.stderr and "elevated_volts" in result.stderr
    assert not out.exists()


# --- the heater-cathode check ------------------------------------------------------------------

def test_heater_cathode_excess_both_signs():
    tube = CAT.get("12AT7")  # catalogue: 90 V heater-cathode rating
    assert heater_cathode_excess(tube, 0.0, 0.0, 100.0) == pytest.approx(10.0)  # cathode 100 V above the heater
    assert heater_cathode_excess(tube, 100.0, 0.0, 0.0) == pytest.approx(10.0)  # heater 100 V above the cathode
    assert heater_cathode_excess(tube, 50.0, 0.0, 100.0) == pytest.approx(-40.0)


def test_elevation_fixes_a_follower_that_fails_without_it():
    """Same types and rails: grounded heaters give a follower Shortfall naming the heater-cathode voltage
    and its excess; a winding at +60 V lets both followers pass, their cathode range within rating."""
    rails, tubes = Rails(150, -100), [(CAT.get("12AT7"), 0.7), (CAT.get("5965"), 0.7)]
    grounded = design_family(rails, tubes)
    assert not grounded.followers
    for name in ("12AT7", "5965"):
        why = grounded.rejected[(name, "follower")]
        assert why.limit == "heater-cathode voltage" and why.amount > 20 and why.unit == "V"
        assert f"{why.amount:.1f} V over" in why.message
    raised = design_family(rails, tubes, elevations=(0.0, 60.0))
    assert set(raised.followers) == {"12AT7", "5965"}
    for f in raised.followers.values():
        assert f.fanout_limit >= 3 and f.elevations == (60.0,)
        tube = CAT.get(f.tube)
        # catalogue rating: the whole cathode range within it around +60 V, not around 0 V
        assert abs(f.cathode_volts_max - 60) <= tube.max_heater_cathode_volts
        assert abs(f.cathode_volts_min - 60) <= tube.max_heater_cathode_volts
        assert f.cathode_volts_max > tube.max_heater_cathode_volts
        assert f.high_volts >= raised.high_min_volts and f.low_volts <= raised.follower_low_max_volts
    # Drivers' receivers keep the drivers' window; the followers' loads get dividers of their own.
    assert raised.follower_low_max_volts > raised.low_max_volts
    assert set(raised.follower_receivers) == set(raised.receivers)
    for _key, rec in raised.follower_receivers.items():
        assert rec.margin_high_volts >= 0 and rec.margin_low_volts >= raised.rules.margin_volts


# --- plans: the follower's envelope on the elevated winding --------------------------------------

def _followed_inputs(plan):
    followers = {s.output for s in plan.stages if s.kind == "follower"}
    return followers, [(s, b, net) for s in plan.stages if s.kind == "inverting"
                       for b in s.branches for net in b.inputs if net in followers]


def test_plan_puts_the_follower_on_the_elevated_winding(tmp_path):
    design = load_design(str(_wide_design(tmp_path)))
    said = []
    grounded = load_stock(str(_stock(tmp_path, "", "stock0.yaml")))
    try:
        plan = plan_design(design, grounded, MappingOptions(progress=said.append))
        assert not any(s.kind == "follower" for s in plan.stages)  # repaired another way, if at all
    except Shortage:
        pass
    assert any("no 12AT7 follower: heater-cathode voltage short by" in line for line in said)

    stock = load_stock(str(_stock(tmp_path, ", elevated_volts: 60", "stock60.yaml")))
    plan = plan_design(design, stock)  # proven against the design inside plan_design
    followers, fed = _followed_inputs(plan)
    assert followers and fed
    env = {e.ref: e for e in plan.envelopes}
    for s in plan.stages:
        if s.kind == "follower":
            assert env[s.envelope].winding == "H2"
    assert {w.id: w.elevated_volts for w in plan.budget.windings} == {"H1": 0.0, "H2": 60.0}
    # Every input fed by a follower has the follower-fed divider; every other input the drivers' one.
    family = design_family(Rails(150, -100), [(CAT.get("12AT7"), 0.7), (CAT.get("5965"), 0.7)],
                           planning.design_rules(stock, MappingOptions()), elevations=(0.0, 60.0))
    uppers = {}
    for p in plan.parts:
        if p.role == "divider upper":
            uppers.setdefault(dict(p.pins)["1"], set()).add(p.ohms)
    for net, values in uppers.items():
        variant = family.follower_receivers if net in followers else family.receivers
        assert values <= {r.upper_ohms for r in variant.values()}, (net, values)
    assert family.follower_receivers != family.receivers


def test_plan_json_and_reports_show_the_elevation(tmp_path):
    out = tmp_path / "out"
    result = subprocess.run([sys.executable, "-m", "planner.cli", "plan", str(_wide_design(tmp_path)), "--stock",
                             str(_stock(tmp_path, ", elevated_volts: 60")), "--out", str(out)],
                            capture_output=True, text=True, timeout=300)
    assert result.returncode == 0, result.stderr
    import json
    doc = json.loads((out / "plan.json").read_text())
    assert [w["elevated_volts"] for w in doc["budget"]["windings"]] == [0, 60]
    assert "6.3 V at +60 V DC" in result.stdout
    assert "referred to +60 V DC" in (out / "bom.csv").read_text()
    assert "(winding at +60 V DC)" in (out / "wiring.csv").read_text()
    for name in ("report.md", "report.html"):
        assert "+60 V DC" in (out / name).read_text()


# --- the integer program: hosting is a constraint --------------------------------------------------

def _hosting_problem(h2_amps: float) -> M.Problem:
    """Invented: a dual triode whose follower fits only winding H2 and whose grounded sections only H1."""
    sections = (S({"single", "follower"}), S({"single", "follower"}))
    heaters = (HeaterWay("H1", "single", 6.3, 0.3, 0.0, S({"grounded"})),
               HeaterWay("H2", "single", 6.3, 0.3, 95.0, S({"follower"})))
    kind = M.TubeKind("T", 4, False, sections, 0, False, heaters)
    inv = M.StageClass((0,), ("S1",), (M.Way("T", "single", (("single", 1),), 1e-3, 0.5e-3, 0.1e-3, 4),))
    fol = M.StageClass((1,), ("S2",), (M.Way("T", "follower", (("follower", 1),), 1e-3, 0.5e-3, 0.1e-3, 8),))
    supplies = M.Supplies(0.1, 0.1, (("H1", 6.3, 5.0), ("H2", 6.3, h2_amps)))
    return M.Problem((kind,), (inv, fol), supplies, M.Weights())


def test_ilp_keeps_followers_off_windings_that_cannot_host_them():
    problem = _hosting_problem(5.0)
    counts = M.solve_problem(problem)
    assert counts.envelopes == (2,)  # one envelope would hold both sections, but no winding hosts both
    assert counts.heaters == ((1, 1),)
    network = Network(("a",), (Stage("S1", "n1", "inverting", (Branch(("a",), "single"),)),
                               Stage("S2", "n2", "follower", input="n1")), {"y": "n2"})
    placement = place(network, problem, counts)
    heater_of = {s.ref: problem.kinds[0].heaters[s.heater].winding for s in placement.sockets}
    assert heater_of[placement.at[("S2", None, 0)][0]] == "H2"
    assert heater_of[placement.at[("S1", 0, 0)][0]] == "H1"
    # With H2 unable to carry a heater the program has no solution: the constraint is in the model.
    with pytest.raises(M.Infeasible, match="^weighted$"):  # the criterion without a solution: the weighted one
        M.solve_problem(_hosting_problem(0.1))
    # Both ways hosting everything: one envelope suffices again.
    kind = problem.kinds[0]
    both = M.TubeKind("T", 4, False, kind.sections, 0, False,
                      tuple(HeaterWay(w.winding, w.connection, w.volts, w.amps) for w in kind.heaters))
    assert both.heaters[0].hosts == HOSTS
    assert M.solve_problem(M.Problem((both,), problem.classes, problem.supplies, M.Weights())).envelopes == (1,)


# --- figures at common rails -----------------------------------------------------------------

@pytest.mark.parametrize("plate,bias", [(150, -100), (180, -90)])
def test_some_follower_passes_at_common_rails(plate, bias):
    """A stock of 12AU7, 12AT7 and 6SN7 on grounded heaters: a follower carries several loads."""
    fam = design_family(Rails(plate, bias), [(CAT.get(n), 0.7) for n in ("12AU7", "12AT7", "6SN7")])
    assert max(f.fanout_limit for f in fam.followers.values()) >= 3  # several loads
    for name, f in fam.followers.items():
        assert heater_cathode_excess(CAT.get(name), 0.0, f.cathode_volts_min, f.cathode_volts_max) <= 0
    # 12AT7 (90 V rating) cannot follow on a grounded heater: the reason names the limit.
    assert fam.rejected[("12AT7", "follower")].limit == "heater-cathode voltage"


def test_stage_command_reports_the_follower(tmp_path):
    run = lambda *extra: subprocess.run([sys.executable, "-m", "planner.cli", "stage", "12AT7", "--plate-volts",  # noqa: E731
                                         "150", "--bias-volts", "-100", "--fanout", "3", *extra],
                                        capture_output=True, text=True, timeout=300)
    grounded = run()
    assert grounded.returncode == 0
    assert re.search(r"follower\s+none passes: heater-cathode voltage, short by \d+\.\d V", grounded.stdout)
    raised = run("--heater-elevation", "70")
    assert raised.returncode == 0 and "carries up to" in raised.stdout and "heater at +70 V DC" in raised.stdout
    bad = run("--heater-elevation", "500")
    assert bad.returncode == 2 and "Traceback" not in bad.stderr


# --- ngspice: the follower template's worst-case levels bound the nominal ones ---------------------

def _instance(name: str, tube, pins: dict) -> str:
    return f"{name} " + " ".join(pins[r] for r in spice_nodes(tube, "triode")) + f" {subcircuit_name(tube, 'triode')}"


@pytest.mark.ngspice
@pytest.mark.parametrize("name,plate,bias,fanout", [("6SN7", 150, -100, 4), ("6SN7", 180, -90, 3),
                                                    ("12AU7", 180, -90, 6)])
def test_follower_template_bounds_ngspice(name, plate, bias, fanout, ngspice):
    tube = CAT.get(name)
    t = design_template(tube, "single", Rails(plate, bias), fanout, elevation_volts=0.0)
    f = t.follower
    assert f.follower.fanout_limit >= fanout
    rec = f.receivers[0]
    results = {}
    for state, grid in (("high", f.design_high_volts), ("low", f.drive_low_volts)):
        lines = ["* follower template at nominal values", spice_subcircuit(tube, "triode").strip(),
                 f"VB bp 0 {float(plate)!r}", f"VC bias 0 {float(bias)!r}", f"VG g 0 {grid!r}",
                 f"RK k bias {f.follower.cathode_load_ohms!r}",
                 _instance("XF", tube, {"plate": "bp", "grid": "g", "cathode": "k"})]
        for i in range(fanout):
            lines += [f"R1_{i} k t{i} {rec.upper_ohms!r}", f"R2_{i} t{i} bias {rec.lower_ohms!r}",
                      _instance(f"XL{i}", tube, {"plate": "bp", "grid": f"t{i}", "cathode": "0"})]
        lines += [".control", "op", "print v(k) v(t0)", ".endc", ".end"]
        results[state] = ngspice("\n".join(lines) + "\n", timeout_s=60)
    high, low = results["high"], results["low"]
    assert high["v(k)"] >= f.high_volts >= f.design_high_volts  # ngspice nominal high above the worst-case high
    assert low["v(k)"] <= f.low_volts <= f.accept_low_volts  # ngspice nominal low below the worst-case low
    assert high["v(t0)"] >= -0.05  # ngspice: a load's grid reaches 0 V (clamping) on the follower's high
    assert low["v(t0)"] <= rec.cutoff_volts - t.rules.margin_volts  # ngspice: the margin below cut-off


def _fits_hosted(envelopes, singles: int, followers: int, shared: bool) -> bool:
    """Brute force: can the jobs go into these envelopes (each a ``hosts`` set, two sections)?"""
    def place(i, jobs, room):
        if i == len(jobs):
            return True
        for e, hosts in enumerate(envelopes):
            kind = jobs[i]
            if ("follower" if kind == "follower" else "grounded") not in hosts:
                continue
            need = 2 if (kind == "follower" and shared) else 1
            if room[e] >= need:  # a follower on a shared cathode takes the whole envelope
                taken = list(room)
                taken[e] -= need
                if place(i + 1, jobs, taken):
                    return True
        return False
    jobs = ["follower"] * followers + ["single"] * singles
    return place(0, jobs, [2] * len(envelopes))


def test_ilp_hosting_matches_brute_force():
    """Invented random cases: the least envelopes by the program equals brute force over heater choices."""
    rng = random.Random(12)
    choices = (S({"grounded"}), S({"follower"}), HOSTS)
    for _ in range(40):
        shared = rng.random() < 0.3
        hosts = rng.sample(choices, rng.randint(1, 3))
        caps = [rng.choice((1, 2, 9)) for _ in hosts]  # envelopes each winding can heat
        singles, followers = rng.randint(0, 3), rng.randint(0, 3)
        if not singles and not followers:
            continue
        heaters = tuple(HeaterWay(f"H{i}", "single", 6.3, 1.0, 0.0, h) for i, h in enumerate(hosts))
        sections = (S({"single", "follower"}), S({"single", "follower"}))
        kind = M.TubeKind("T", 12, False, sections, 0, shared, heaters)
        classes = []
        if singles:
            classes.append(M.StageClass((0,), tuple(f"S{i}" for i in range(singles)),
                                        (M.Way("T", "single", (("single", 1),), 0.0, 0.0, 0.0, 4),)))
        if followers:
            classes.append(M.StageClass((1,), tuple(f"F{i}" for i in range(followers)),
                                        (M.Way("T", "follower", (("follower", 1),), 0.0, 0.0, 0.0, 8),)))
        supplies = M.Supplies(1e3, 1e3, tuple((f"H{i}", 6.3, float(c)) for i, c in enumerate(caps)))
        problem = M.Problem((kind,), tuple(classes), supplies, M.Weights(1.0, 0.0, 0.0))
        brute = None
        for n in range(0, 7):
            for combo in itertools.combinations_with_replacement(range(len(hosts)), n):
                if any(combo.count(i) > c for i, c in enumerate(caps)):
                    continue
                if _fits_hosted([hosts[i] for i in combo], singles, followers, shared):
                    brute = n
                    break
            if brute is not None:
                break
        try:
            got = M.solve_problem(problem).envelopes[0]
        except M.Infeasible:
            got = None
        assert got == brute, (hosts, caps, singles, followers, shared)
