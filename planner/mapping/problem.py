"""From a stage network, a logic family and a stock to the aggregated model (:mod:`.model`).

Ways to build a stage (one plate load serves all its branches, so a stage is
built on one tube type with one template, the family's driver for that type
and template):

* ``single``: every branch has one input, each on a section with a single
  control grid (receiver "grid" before each);
* ``dual``: branches of one or two inputs, each on a dual-control section;
  a two-input branch uses g1 and g3, a one-input branch uses g1 with g3 tied to
  its cathode.  Safe because the dual template's low-output check is made with
  a worn tube and both grids just at 0 V (planner.electrical drivers), which
  is exactly g3 at its cathode; the high output has every branch cut off by a
  low g1, and g1's receiver was designed for cut-off with g3 at its highest
  high level, above 0 V; and the template's worst supply current is taken with
  the grids at their highest, which g3 at 0 V does not exceed;
* ``diode``: every branch a diode AND of its inputs (one diode an input, a
  one-input branch included: a gate node pulled up to B+, a diode from it to
  each input, one "diode" receiver's divider from it to the grid) on one
  single-grid section; where the stock has diodes;
* ``follower``: a cathode follower on a triode section; never fed by another
  follower (the family's rule).

A way is allowed when its template's ``fanout_limit`` covers the loads on the
stage's output net and the family has a divider for every input: an input fed
by a follower takes the follower-fed variant (:func:`branch_receivers`).
Stages with the same set of allowed ways are one class.
"""

from __future__ import annotations

from dataclasses import dataclass

from planner.electrical import heater_cathode_excess

from .model import HOSTS, HeaterWay, Problem, StageClass, Supplies, TubeKind, Way, Weights

#: Most inputs of one diode AND: each input adds a diode's capacitance and
#: leakage to the grid node, and four is a usual width for diode gates
#: (common practice).
DIODE_FANIN = 4


@dataclass(frozen=True)
class Realisation:
    """How one branch is built in a way: its means as wired ("single", "dual",
    "g1-only" (dual-control section, g3 to cathode), "diode") and its grid roles."""

    means: str
    roles: tuple[str, ...]


def branch_realisation(template: str, n_inputs: int) -> Realisation:
    """The wiring of a branch of ``n_inputs`` inputs under ``template``.

    >>> branch_realisation("dual", 1), branch_realisation("diode", 3).roles
    (Realisation(means='g1-only', roles=('grid',)), ('diode',))
    """
    if template == "single":
        return Realisation("single", ("grid",))
    if template == "dual":
        return Realisation("dual", ("grid", "grid3")) if n_inputs == 2 else Realisation("g1-only", ("grid",))
    if template == "diode":
        return Realisation("diode", ("diode",))
    raise ValueError(f"no branch in a {template} template")


def branch_receivers(family, tube: str, template: str, inputs: tuple[str, ...], follower_nets) -> tuple | None:
    """The receiver (divider) in front of each input of a branch, or None when one is missing.

    An input whose net is a follower's output (``follower_nets``) takes the
    family's follower-fed variant, designed for the follower's levels; any
    other input the drivers' one. A diode AND has one divider after its
    gate: the follower-fed one when every input comes from a follower, the
    drivers' one when none does; a gate mixing the two has no divider proven
    for both loads, so that way is not offered (None).

    >>> class F:  # a family with one divider of each variant
    ...     def receiver(self, tube, role, after_follower=False):
    ...         return (role, after_follower)
    >>> branch_receivers(F(), "12AU7", "dual", ("a", "f1"), {"f1"})
    (('grid', False), ('grid3', True))
    >>> branch_receivers(F(), "12AU7", "diode", ("a", "f1"), {"f1"}) is None
    True
    """
    real = branch_realisation(template, len(inputs))
    if real.means == "diode":
        fed = {net in follower_nets for net in inputs}
        if len(fed) > 1:
            return None
        rec = family.receiver(tube, "diode", fed.pop())
        return None if rec is None else (rec,) * len(inputs)
    out = tuple(family.receiver(tube, role, net in follower_nets) for role, net in zip(real.roles, inputs))
    return None if any(r is None for r in out) else out


def pullup_amps_worst(family, rec) -> float:
    """Most current a diode gate's pull-up can take from B+: the whole high supply across its lowest value.

    (The driver templates do not count it; its typical figure is the nominal
    supply over the nominal value, an upper figure too.)
    """
    rules = family.rules
    vb = family.rails.plate_volts * (1 + rules.supply_tolerance)
    return vb / (rec.pullup_ohms * (1 - rules.resistor_tolerance))


def winding_hosts(tube, elevated_volts: float, follower=None) -> frozenset:
    """What an envelope of ``tube`` on a winding elevated to ``elevated_volts`` may hold.

    "grounded": sections with their cathode at 0 V (the heater-cathode
    voltage is the elevation); "follower": the family's follower of the type
    (``follower`` given), whose cathode spans its worst-case range. Checked
    with :func:`planner.electrical.heater_cathode_excess`.
    """
    hosts = set()
    if heater_cathode_excess(tube, elevated_volts, 0.0, 0.0) <= 0:
        hosts.add("grounded")
    if follower is not None and heater_cathode_excess(tube, elevated_volts, follower.cathode_volts_min,
                                                      follower.cathode_volts_max) <= 0:
        hosts.add("follower")
    return frozenset(hosts)


def heater_ways(tube, windings, follower=None) -> tuple[HeaterWay, ...]:
    """Every winding a type's heater may sit on: volts equal to the heater's, parallel or series.

    A heater with a centre tap (``heater_series``) has two connections:
    "parallel" (the catalogue's ``heater_volts``) and "series". Each way
    says what its envelopes may host (:func:`winding_hosts`); a winding
    elevated so far that no section of the type may sit on it is left out.
    """
    ways = []
    connections = [("parallel" if tube.heater_series else "single", tube.heater_volts, tube.heater_amps)]
    if tube.heater_series:
        connections.append(("series",) + tuple(tube.heater_series))
    for winding in windings:
        elevated = winding.elevated_volts
        hosts = winding_hosts(tube, elevated, follower)
        if (follower is None and "grounded" in hosts) or not tube.amplifying_sections:
            hosts = HOSTS  # nothing follows on this type (or it holds diodes only): every way is alike
        if not hosts:
            continue
        for connection, volts, amps in connections:
            if abs(volts - winding.volts) <= 1e-9:
                ways.append(HeaterWay(winding.id, connection, volts, amps, elevated, hosts))
    return tuple(ways)


def tube_kinds(stock, family) -> tuple[TubeKind, ...]:
    """Every stocked type as the model sees it, in name order."""
    kinds = []
    for entry in stock.tubes:
        tube = stock.catalogue.get(entry.tube)
        sections = []
        for section in tube.amplifying_sections:
            caps = set(section.means)
            if section.kind == "triode" and tube.name in family.followers:
                caps.add("follower")
            sections.append(frozenset(caps))
        diodes = 0
        if (stock.diodes == "vacuum-only" and tube.diode_sections and not tube.amplifying_sections
                and not tube.shared_cathode):
            diodes = len(tube.diode_sections)
        kinds.append(TubeKind(tube.name, entry.count - entry.reserve, entry.scarce, tuple(sections), diodes,
                              tube.shared_cathode, heater_ways(tube, stock.windings, family.followers.get(tube.name))))
    return tuple(sorted(kinds, key=lambda k: k.tube))


def stage_ways(stage, loads: int, family, kinds: tuple[TubeKind, ...], follower_nets: frozenset,
               diode_fanin: int) -> tuple[Way, ...]:
    """Every way the family and stock allow for ``stage`` with ``loads`` on its output, sorted."""
    ways = []
    names = [k.tube for k in kinds]
    if stage.kind == "follower":
        if stage.input in follower_nets:
            return ()
        for tube in names:
            f = family.followers.get(tube)
            if f is not None and f.fanout_limit >= loads:
                ways.append(Way(tube, "follower", (("follower", 1),), f.supply_amps_worst, f.supply_amps_typical,
                                f.bias_amps_worst, f.fanout_limit))
        return tuple(ways)
    widths = [len(b.inputs) for b in stage.branches]
    for tube in names:
        for template in ("single", "dual", "diode"):
            driver = family.drivers.get((tube, template))
            if driver is None or driver.fanout_limit < loads:
                continue
            if template == "single" and any(w != 1 for w in widths):
                continue
            if template == "dual" and any(w > 2 for w in widths):
                continue
            if template == "diode" and (diode_fanin < 2 or any(w > diode_fanin for w in widths)):
                continue
            bias, plate, typical, diodes, missing = 0.0, 0.0, 0.0, 0, False
            for branch, width in zip(stage.branches, widths):
                recs = branch_receivers(family, tube, template, branch.inputs, follower_nets)
                if recs is None:
                    missing = True
                    break
                for rec in recs[:1] if template == "diode" else recs:
                    bias += rec.bias_amps_worst
                    if rec.pullup_ohms is not None:
                        plate += pullup_amps_worst(family, rec)
                        typical += family.rails.plate_volts / rec.pullup_ohms
                diodes += width if template == "diode" else 0
            if missing:
                continue
            kind = {"single": "single", "dual": "dual", "diode": "single"}[template]
            demand = ((kind, len(widths)),) if widths else ()
            # Each branch past the first adds its cut-off screen feed (the template's figure).
            extra = max(0, len(widths) - 1) * driver.branch_supply_amps_worst
            ways.append(Way(tube, template, demand, driver.supply_amps_worst + extra + plate,
                            driver.supply_amps_typical + extra + typical, bias, driver.fanout_limit, diodes))
    return tuple(ways)


def build_problem(network, family, stock, weights: Weights, *, diode_fanin: int, registers: tuple = (),
                  fixed_plate_amps: float = 0.0, fixed_bias_amps: float = 0.0) -> tuple[Problem, dict]:
    """The aggregated problem of ``network`` and the ways of every stage (stage id -> ways).

    Classes are formed from stages with equal tuples of ways, in order of
    their first stage.  ``registers``: the register classes
    (:func:`planner.mapping.registers.register_classes`); ``fixed_*``:
    supply currents no choice changes (the reset line's).  Cost: one pass
    over the stages and their branches.
    """
    kinds = tube_kinds(stock, family)
    loads = network.load_counts()
    followers = frozenset(s.output for s in network.stages if s.kind == "follower")
    by_ways: dict[tuple, list[str]] = {}
    ways_of = {}
    for stage in network.stages:
        ways = stage_ways(stage, loads[stage.output], family, kinds, followers, diode_fanin)
        ways_of[stage.id] = ways
        by_ways.setdefault(ways, []).append(stage.id)
    classes = tuple(StageClass((i,), tuple(ids), ways) for i, (ways, ids) in enumerate(by_ways.items()))
    supplies = Supplies(stock.plate.max_amps, stock.bias.max_amps,
                        tuple((w.id, w.volts, w.max_amps) for w in stock.windings), fixed_plate_amps, 0.0,
                        fixed_bias_amps)
    return Problem(kinds, classes, supplies, weights, stock.diodes == "vacuum-only", tuple(registers)), ways_of
