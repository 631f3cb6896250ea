"""The plan's timing: every stage's delay, the critical path and, with registers, the highest safe clock.

Static timing analysis (the arrival-time propagation of R. B. Hitchcock,
"Timing verification and the timing analysis program", 19th Design
Automation Conference, 1982; from memory). Every net carries, per edge
(rising, falling), the latest time it crosses the family's midpoint and the
shape of that edge (:class:`planner.electrical.Wave`); each stage, in
topological order, turns its inputs' edges into its output's
(:func:`planner.electrical.inverter_edge`, :func:`planner.electrical.follower_edge`).
An inverting stage is negative unate (a falling input can only raise its
output), a follower positive unate. Paths start at the primary inputs (their
edges from the family's worst-case levels, as steps, at time 0: inputs change
with the clock) and at the registers' outputs (the flip after the clock's
falling edge, :func:`planner.electrical.flip_edges`); they end at the design
outputs and at the registers' level inputs, where the next state must have
settled ``setup_seconds`` before the next falling edge.

Two corners. Nominal (:data:`planner.electrical.NOMINAL_CORNER`): nominal
resistors and supplies, each tube type at its stock condition (its current
is what a worn tube slows), the catalogue's capacitances and
:data:`planner.electrical.WIRING_FARADS` of wiring on every node: an estimate.
Slow (:func:`planner.electrical.slow_corner`): every resistor at the high
end of its tolerance, both supplies at the low end, capacitances 25 % up,
types whose model is from memory weaker by the rules' allowance; the
estimate there times 1 + :data:`planner.electrical.ESTIMATE_TOLERANCE` (the
estimate's tested agreement with ngspice) is the worst-case bound. The
registers' recovery and setup times (RC time constants of the bistable)
scale with resistance times capacitance at the slow corner. Both figures
are reported; the highest safe clock comes from the bound.
Node capacitance: the sections' output capacitance on the node; a follower's
grid (input and grid-plate capacitance) and a diode input's diode on it; a
load's grid behind a plain divider adds nothing at the node (its capacitance
acts behind R1, in the load's own delay), behind a speed-up capacitor C1 it
adds C1 in series with the grid.

The clock: its period must cover the slowest register-to-register path
(clock to output, the logic, the setup time) and twice the longer of the
shortest high phase (the steering nodes recover from the rising edge) and the
shortest low phase (the steering pulse must last ``HOLD_FACTOR`` flips before
the rising edge ends it), for a clock of even duty. The highest safe clock
is one over that period at the worst-case bound.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

from planner.electrical import (DIODE_DROP_VOLTS, DIODE_FARADS, ESTIMATE_TOLERANCE, HOLD_FACTOR, NOMINAL_CORNER,
                                WIRING_FARADS, InverterTiming, Load, ScreenFeed, Steering, TimingCorner, Wave,
                                flip_edges, follower_edge, inverter_edge, slow_corner)

from .assemble import Placement
from .plan import Plan, StageTiming, Timing
from .problem import branch_realisation, branch_receivers
from .registers import COMPLEMENT

#: The worst-case bound is the slow corner's estimate this much longer: the estimate agrees with
#: ngspice within 25 % (tests/test_timing_ngspice.py).
MARGIN = ESTIMATE_TOLERANCE

CORNER = NOMINAL_CORNER.description(WIRING_FARADS)

RISE, FALL = "rise", "fall"


@dataclass(frozen=True)
class _Arrival:
    """When a net's edge crosses the midpoint, its shape, and where the path came from."""

    seconds: float
    wave: Wave
    prev: tuple[str, str] | None
    origin: str


class _Nets:
    """Loads and capacitance of every net of the placed network."""

    def __init__(self, plan: Plan, network, placement: Placement, family, stock, rules,
                 corner: TimingCorner = NOMINAL_CORNER):
        self.family, self.stock, self.rules, self.corner = family, stock, rules, corner
        self.vc = stock.bias.volts
        drop_lo, drop_hi = DIODE_DROP_VOLTS.get(family.rules.diodes, (0.0, 0.0))
        self.drop = 0.5 * (drop_lo + drop_hi)
        self.loads: dict[str, list[Load]] = {}
        self.farads: dict[str, float] = {}
        self.followed = frozenset(s.output for s in network.stages if s.kind == "follower")
        heavy = max(family.receivers.values(), key=lambda r: (r.load_amps_high, r.tube, r.grid_role))
        self.heavy = Load(heavy.upper_ohms, heavy.lower_ohms, self.vc, self.tube(heavy.tube))
        for stage in network.stages:
            way = placement.ways[stage.id]
            tube = self.tube(way.tube)
            if stage.kind == "follower":
                self._add(stage.input, None, (tube.c_in_farads or 0.0) + (tube.c_gp_farads or 0.0))
                self._add(stage.output, None, tube.c_out_farads or 0.0)
                continue
            for branch in stage.branches:
                self._add(stage.output, None, tube.c_out_farads or 0.0)
                recs = branch_receivers(family, way.tube, way.template, branch.inputs, self.followed)
                for position, net in enumerate(branch.inputs):
                    role = input_role(way.template, len(branch.inputs), position)
                    rec = recs[position]
                    if role == "diode":
                        self._add(net, self.receiver_load(rec, tube), DIODE_FARADS)
                        continue
                    c1 = rec.speedup_farads or 0.0
                    grid = (tube.c_in_farads or 0.0) + (tube.c_gp_farads or 0.0) + WIRING_FARADS
                    self._add(net, self.receiver_load(rec, tube), c1 * grid / (c1 + grid) if c1 else 0.0)
        for _name, net in plan.outputs:
            self._add(net, self.heavy, 0.0)

    def tube(self, name: str):
        return self.stock.catalogue.get(name)

    def wear(self, name: str) -> float:
        """The type's stock condition (nominal values: the corner applies on top)."""
        entry = next((t for t in self.stock.tubes if t.tube == name), None)
        return entry.condition if entry is not None and entry.condition is not None else self.rules.wear

    def loads_at_corner(self, pairs: tuple[tuple[int, Load], ...]) -> tuple[tuple[int, Load], ...]:
        return tuple((n, self.corner.load(ld)) for n, ld in pairs)

    def receiver_load(self, rec, tube) -> Load:
        """A receiver as a concrete load at nominal values (a diode input with its gate node)."""
        if rec.grid_role != "diode":
            return Load(rec.upper_ohms, rec.lower_ohms, self.vc, tube)
        return Load(rec.upper_ohms, rec.lower_ohms, self.vc, tube, self.drop, rec.pullup_ohms, self.stock.plate.volts)

    def _add(self, net: str, load: Load | None, farads: float) -> None:
        self.farads[net] = self.farads.get(net, WIRING_FARADS) + farads
        self.loads.setdefault(net, [])
        if load is not None:
            self.loads[net].append(load)

    def load_pairs(self, net: str, extra: tuple[Load, ...] = ()) -> tuple[tuple[int, Load], ...]:
        return tuple((1, ld) for ld in tuple(self.loads.get(net, ())) + extra)

    def node_farads(self, net: str) -> float:
        return self.farads.get(net, WIRING_FARADS)


def input_role(template: str, width: int, position: int) -> str:
    """The receiver role of input ``position`` of a ``width``-input branch built with ``template``.

    >>> input_role("dual", 2, 1), input_role("dual", 1, 0), input_role("diode", 3, 2)
    ('grid3', 'grid', 'diode')
    """
    roles = branch_realisation(template, width).roles
    return roles[min(position, len(roles) - 1)]  # a diode AND's inputs share its one receiver


def _gate_wave(nets: _Nets, rec, width: int, drive: Wave, mid: float) -> Wave:
    """The diode-AND gate node's edge when one input makes ``drive``: it follows a falling input one
    drop above; a rising one only as fast as the pull-up charges the node (wiring and the diodes)."""
    d, c = nets.drop, nets.corner
    if drive.to_volts < drive.from_volts:
        return Wave(drive.from_volts + d, drive.to_volts + d, drive.shape, drive.seconds)
    vb, vc = nets.stock.plate.volts * c.supply_scale, nets.vc * c.supply_scale
    pullup, top = rec.pullup_ohms * c.ohms_scale, (rec.upper_ohms + rec.lower_ohms) * c.ohms_scale
    opened = (vb / pullup + vc / top) / (1 / pullup + 1 / top)
    tau = (WIRING_FARADS + width * DIODE_FARADS) * c.farads_scale / (1 / pullup + 1 / top)
    follows = Wave(drive.from_volts + d, drive.to_volts + d, drive.shape, drive.seconds)
    charged = Wave(drive.from_volts + d, min(drive.to_volts + d, opened), "exponential", tau)
    return follows if follows.crossing_seconds(mid) >= charged.crossing_seconds(mid) else charged


def _inverter_delay(nets: _Nets, stage, way, driver, branch, position: int, drive: Wave, mid: float):
    """The output edge of ``stage`` when input ``position`` of ``branch`` makes ``drive``, timed from
    that input's midpoint crossing."""
    tube = nets.tube(way.tube)
    role = input_role(way.template, len(branch.inputs), position)
    rec = branch_receivers(nets.family, way.tube, way.template, branch.inputs, nets.followed)[position]
    feed = None if driver.screen_series_ohms is None else ScreenFeed(driver.screen_series_ohms,
                                                                     driver.screen_shunt_ohms)
    model = nets.corner.stage(InverterTiming(
        tube, nets.wear(way.tube), nets.stock.plate.volts, driver.plate_load_ohms,
        Load(rec.upper_ohms, rec.lower_ohms, nets.vc, tube), nets.load_pairs(stage.output),
        nets.node_farads(stage.output), (tube.c_in_farads or 0.0) + WIRING_FARADS, feed,
        "grid3" if role == "grid3" else "grid", 0.0, rec.speedup_farads or 0.0))
    wave, shift = drive, 0.0
    if role == "diode":
        wave = _gate_wave(nets, rec, len(branch.inputs), drive, mid)
        shift = wave.crossing_seconds(mid) - drive.crossing_seconds(mid)
    edge = inverter_edge(model, wave, mid)
    return edge.seconds + shift, edge.output


def plan_timing(plan: Plan, network, placement: Placement, family, stock, rules, setting
                ) -> tuple[Timing, dict[str, float]]:
    """The timing of a built plan (module docstring), and each register's clock-to-output time (nominal).

    The nominal estimate and the worst-case bound (the slow corner). Cost:
    per corner, two edges per stage input (each a threshold search and a
    grid scan, about 2 ms) and two flips per register.
    """
    nominal, flips = _corner_timing(plan, network, placement, family, stock, rules, setting, NOMINAL_CORNER)
    worst, _ = _corner_timing(plan, network, placement, family, stock, rules, setting, slow_corner(rules))
    stages = tuple(replace(s, rise_seconds_worst=w.rise_seconds, fall_seconds_worst=w.fall_seconds)
                   for s, w in zip(nominal.stages, worst.stages))
    timing = replace(nominal, stages=stages, path_seconds_worst=worst.path_seconds,
                     output_seconds_worst=worst.output_seconds, corner_worst=worst.corner,
                     path_worst=worst.path, start_worst=worst.start, end_worst=worst.end)
    if plan.registers:
        timing = replace(timing, clock_to_q_seconds_worst=worst.clock_to_q_seconds,
                         min_period_seconds_worst=worst.min_period_seconds,
                         max_clock_hz=1.0 / worst.min_period_seconds)
    return timing, flips


def _corner_timing(plan: Plan, network, placement: Placement, family, stock, rules, setting, corner: TimingCorner
                   ) -> tuple[Timing, dict[str, float]]:
    """The timing at one corner, its delays times the corner's bound factor."""
    nets = _Nets(plan, network, placement, family, stock, rules, corner)
    high, low, accept = family.high_min_volts, family.low_max_volts, family.follower_low_max_volts
    # A stage with no branches (a constant one) makes no edge: nets with no arrival never switch.
    mid = 0.5 * (high + low)
    arrivals: dict[tuple[str, str], _Arrival] = {}
    for net in network.primary_nets:
        origin = f"input {net.lstrip(COMPLEMENT)}"
        arrivals[(net, RISE)] = _Arrival(0.0, Wave(accept, high), None, origin)
        arrivals[(net, FALL)] = _Arrival(0.0, Wave(high, accept), None, origin)
    flips = _register_flips(plan, nets, setting, mid, arrivals)
    k = corner.bound_factor  # every delay times it: the bound's tolerance on the estimate
    stage_rows = []
    for stage in network.stages:
        way = placement.ways[stage.id]
        out: dict[str, _Arrival] = {}
        worst = {RISE: 0.0, FALL: 0.0}
        if stage.kind == "follower":
            follower = family.followers[way.tube]
            tube = nets.tube(way.tube)
            for e in (RISE, FALL):
                src = arrivals.get((stage.input, e))
                if src is None:  # a constant input never makes this edge
                    continue
                c = corner
                edge = follower_edge(c.tube(tube), c.wear(tube, nets.wear(way.tube)),
                                     stock.plate.volts * c.supply_scale,
                                     follower.cathode_load_ohms * c.ohms_scale, nets.vc * c.supply_scale,
                                     nets.loads_at_corner(nets.load_pairs(stage.output)),
                                     nets.node_farads(stage.output) * c.farads_scale,
                                     follower.grid_stopper_ohms * c.ohms_scale, src.wave, mid)
                out[e] = _Arrival(src.seconds + k * edge.seconds, edge.output, (stage.input, e), src.origin)
                worst[e] = edge.seconds
        else:
            driver = family.drivers[(way.tube, way.template)]
            for branch in stage.branches:
                for position, net in enumerate(branch.inputs):
                    for e_in, e_out in ((FALL, RISE), (RISE, FALL)):
                        src = arrivals.get((net, e_in))
                        if src is None:
                            continue
                        delay, wave = _inverter_delay(nets, stage, way, driver, branch, position, src.wave, mid)
                        worst[e_out] = max(worst[e_out], delay)
                        if e_out not in out or src.seconds + k * delay > out[e_out].seconds:
                            out[e_out] = _Arrival(src.seconds + k * delay, wave, (net, e_in), src.origin)
        for e, arrival in out.items():
            arrivals[(stage.output, e)] = arrival
        stage_rows.append(StageTiming(stage.id, stage.output, k * worst[RISE], k * worst[FALL]))
    return _summary(plan, arrivals, tuple(stage_rows), flips, setting, mid, corner), flips


def _register_flips(plan: Plan, nets: _Nets, setting, mid: float, arrivals: dict) -> dict[str, float]:
    """Arrivals of every register's outputs after the clock's falling edge; register -> clock to q."""
    out = {}
    for reg in plan.registers:
        b = setting.bistables[reg.tube]
        tube = nets.tube(reg.tube)
        own = Load(b.upper_ohms, b.lower_ohms, nets.vc, tube)
        grid = b.grid_node_farads
        c_series = b.commutating_farads * grid / (b.commutating_farads + grid)
        base = (tube.c_out_farads or 0.0) + c_series
        latest = 0.0
        c, f = nets.corner, nets.corner.farads_scale
        for rising, falling in ((reg.output, reg.complement), (reg.complement, reg.output)):
            steering = _steering_on(plan, setting, rising, c)
            up, down = flip_edges(c.tube(tube), c.wear(tube, nets.wear(reg.tube)),
                                  nets.stock.plate.volts * c.supply_scale, b.plate_load_ohms * c.ohms_scale,
                                  c.load(own), b.commutating_farads * f, grid * f,
                                  nets.loads_at_corner(nets.load_pairs(rising, (own,))),
                                  nets.loads_at_corner(nets.load_pairs(falling, (own,))),
                                  (base + nets.node_farads(rising) + (tube.c_gp_farads or 0.0)) * f,
                                  (base + nets.node_farads(falling)) * f, mid, steering)
            origin = f"register {reg.name}"
            k = c.bound_factor
            arrivals[(rising, RISE)] = _Arrival(k * up.seconds, up.output, None, origin)
            arrivals[(falling, FALL)] = _Arrival(k * down.seconds, down.output, None, origin)
            latest = max(latest, k * up.seconds, k * down.seconds)
        out[reg.name] = latest
    return out


def _steering_on(plan: Plan, setting, net: str, corner: TimingCorner) -> Steering | None:
    """The steering nodes whose level input is ``net``, as seen by a flip that raises it; None when none.

    The net was low at the clock's edge, so each of those nodes took the pulse
    and hangs on it through its Rs (the heaviest register's values taken for
    all); away from nominal the clock may give its largest step (the deepest
    pulse, the slowest rise).
    """
    found = [setting.bistables[r.tube] for r in plan.registers for level in (r.next, r.next_complement)
             if level == net]
    if not found:
        return None
    b = min(found, key=lambda x: (x.steering_ohms, -x.steering_farads))
    swing = b.clock_swing_volts * (1.0 if corner.name == "nominal" else 1.0 + b.clock_tolerance)
    f = corner.farads_scale
    return Steering(b.steering_ohms * corner.ohms_scale, b.steering_farads * f, b.steering_node_farads * f,
                    swing, len(found))


def _settle(wave: Wave, mid: float) -> float:
    """How long an edge takes from its midpoint crossing to its end (ten time constants, for an exponential)."""
    return wave.end_seconds() - wave.crossing_seconds(mid)


def _path(arrivals: dict, key: tuple[str, str]) -> tuple[str, ...]:
    nets = []
    while key is not None:
        nets.append(key[0])
        key = arrivals[key].prev
    return tuple(reversed(nets))


def _summary(plan: Plan, arrivals: dict, stages, flips: dict, setting, mid: float, corner: TimingCorner) -> Timing:
    ends = []  # (seconds, (net, edge), end label)
    outputs = 0.0
    for name, net in plan.outputs:
        for e in (RISE, FALL):
            if (net, e) in arrivals:
                seconds = arrivals[(net, e)].seconds
                outputs = max(outputs, seconds)
                ends.append((seconds, (net, e), f"output {name}"))
    wiring, text = WIRING_FARADS, corner.description(WIRING_FARADS)
    if not plan.registers:
        seconds, key, label = max(ends, key=lambda x: (x[0], x[2]), default=(0.0, None, ""))
        path = _path(arrivals, key) if key else ()
        start = arrivals[key].origin if key else ""
        return Timing(stages, path, seconds, start, label, outputs, wiring, MARGIN, text)
    # The bistable's RC times scale with R x C at the corner, and take the bound's factor.
    rc = corner.ohms_scale * corner.farads_scale * corner.bound_factor
    reg_ends = []
    for reg in plan.registers:
        b = setting.bistables[reg.tube]
        for net in (reg.next, reg.next_complement):
            for e in (RISE, FALL):
                a = arrivals.get((net, e))
                if a is None:  # a constant next state
                    continue
                reg_ends.append((a.seconds + corner.bound_factor * _settle(a.wave, mid) + rc * b.setup_seconds,
                                 (net, e), f"register {reg.name}"))
    seconds, key, label = max(reg_ends, key=lambda x: (x[0], x[2]), default=(0.0, None, ""))
    high_min = rc * max(setting.bistables[r.tube].recovery_seconds for r in plan.registers)
    low_min = HOLD_FACTOR * max(flips.values())
    period = max(seconds, 2 * max(high_min, low_min))
    start = arrivals[key].origin if key else ""
    return Timing(stages, _path(arrivals, key) if key else (), seconds, start, label, outputs, wiring, MARGIN, text,
                  max(flips.values()), rc * max(setting.bistables[r.tube].setup_seconds for r in plan.registers),
                  high_min, low_min, period, 1.0 / period)


__all__ = ["CORNER", "MARGIN", "input_role", "plan_timing"]
