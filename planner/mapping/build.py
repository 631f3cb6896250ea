"""Building the :class:`~planner.mapping.plan.Plan` from a placed network."""

from __future__ import annotations

from planner.electrical import CAPACITOR_TOLERANCE, RESET_PULLUP_OHMS

from .assemble import Placement, register_job_id
from .model import Counts, Problem
from .parts import NetlistBuilder, gate_node, grid_node
from .plan import (BIAS_RAIL, GROUND, PLATE_RAIL, Budget, Clock, Envelope, Part, PlacedBranch, PlacedRegister,
                   PlacedStage, Plan, SectionUse, Solution, StockUse, WindingLoad)
from .problem import branch_realisation, branch_receivers
from .registers import COMPLEMENT, RegisterSetting, register_loads, register_parts, reset_pullup


def _sections(tube, kind_is_diode: bool):
    return tube.diode_sections if kind_is_diode else tube.amplifying_sections


def build_plan(design, network, family, stock, problem: Problem, counts: Counts, placement: Placement,
               solution: Solution, rules, setting: RegisterSetting | None = None) -> Plan:
    """The plan: stages placed, registers built, envelopes with heaters, the parts netlist, budgets, stock use.

    Parts are made stage by stage in network order (plate load, then per
    branch its screen feed and each input's divider, diode and grid return;
    a follower's cathode load), then register by register in design order
    (:func:`planner.mapping.registers.register_parts`) and the reset line's
    pull-up, so designators R1, R2, ... follow the network; tube envelopes
    V1, V2, ... come from the placement. ``design`` is the design as given
    (its outputs are the plan's; next states are the registers').
    """
    kinds = {k.tube: k for k in problem.kinds}
    sockets = {s.ref: s for s in placement.sockets}
    net = NetlistBuilder(family, stock, rules.resistor_tolerance)
    loads = network.load_counts()
    followed = frozenset(s.output for s in network.stages if s.kind == "follower")
    uses: dict[str, list[SectionUse]] = {ref: [] for ref in sockets}
    placed = []
    for stage in network.stages:
        way = placement.ways[stage.id]
        tube = stock.catalogue.get(way.tube)
        if stage.kind == "follower":
            follower = family.followers[way.tube]
            ref, pos = placement.at[(stage.id, None, 0)]
            section = tube.amplifying_sections[pos]
            grid = stage.input
            if follower.grid_stopper_ohms:
                grid = f"{stage.output}.g1"
                net.grid_stopper(stage, stage.input, grid, follower)
            nets = {"plate": PLATE_RAIL, "grid": grid, "cathode": stage.output}
            _use(net, uses, ref, tube, section, "follower", stage.id, nets)
            net.resistor(stage.output, BIAS_RAIL, follower.cathode_load_ohms, follower.cathode_load_watts,
                         follower.bias_amps_worst ** 2 * net.hi(follower.cathode_load_ohms),
                         "cathode load", stage.id)
            placed.append(PlacedStage(stage.id, "follower", stage.output, stage.view, (), stage.input, way.tube,
                                      ref, section.index, None, follower.cathode_load_ohms, loads[stage.output],
                                      follower.fanout_limit, follower.supply_amps_worst,
                                      follower.supply_amps_typical, follower.bias_amps_worst, template="follower"))
            continue
        driver = family.drivers[(way.tube, way.template)]
        net.plate_load(stage, driver)
        branches = []
        for b, branch in enumerate(stage.branches):
            real = branch_realisation(way.template, len(branch.inputs))
            ref, pos = placement.at[(stage.id, b, 0)]
            section = tube.amplifying_sections[pos]
            g1 = grid_node(stage.output, b, "g1")
            nets = {"plate": stage.output, "cathode": GROUND, "grid": g1}
            if "screen" in section.pins:
                nets["screen"] = net.screen(stage, driver, grid_node(stage.output, b, "g2"))
            diodes = []
            recs = branch_receivers(family, way.tube, way.template, branch.inputs, followed)
            if real.means == "diode":
                rec = recs[0]
                gate = gate_node(stage.output, b)
                vacuum = None
                if problem.vacuum_diodes:
                    vacuum = []
                    for k, source in enumerate(branch.inputs, 1):
                        dref, dpos = placement.at[(stage.id, b, k)]
                        dsec = stock.catalogue.get(sockets[dref].tube).diode_sections[dpos]
                        vacuum.append((dref, dsec))
                        uses[dref].append(SectionUse(dsec.index, "AND diode", stage.id,
                                                     (("cathode", source), ("plate", gate))))
                diodes = list(net.diode_gate(stage, branch.inputs, gate, g1, rec, vacuum))
            else:
                for role, source, rec in zip(real.roles, branch.inputs, recs):
                    node = g1 if role == "grid" else grid_node(stage.output, b, "g3")
                    if role == "grid3":
                        nets["grid3"] = node
                    net.divider(stage, source, node, rec)
            _use(net, uses, ref, tube, section, real.means, stage.id, nets)
            branches.append(PlacedBranch(branch.inputs, real.means, way.tube, ref, section.index, tuple(diodes)))
        placed.append(PlacedStage(stage.id, "inverting", stage.output, stage.view, tuple(branches), None,
                                  None, None, None, driver.plate_load_ohms,
                                  None, loads[stage.output], driver.fanout_limit, driver.supply_amps_worst,
                                  driver.supply_amps_typical, way.bias_amps, template=way.template))
    registers = _registers(design, network, stock, placement, net, uses, setting) if design.registers else ()
    envelopes = []
    for socket in placement.sockets:
        tube = stock.catalogue.get(socket.tube)
        kind = kinds[socket.tube]
        heater = kind.heaters[socket.heater]
        diode_type = bool(kind.diode_sections) and not tube.amplifying_sections
        used = {u.index for u in uses[socket.ref]}
        for section in _sections(tube, diode_type):
            if section.index in used:
                continue
            _tie_off(net, uses, socket.ref, section, diode_type)
        _heater_pins(net, socket.ref, tube, heater)
        envelopes.append(Envelope(socket.ref, socket.tube, tube.base, heater.winding, heater.connection,
                                  heater.volts, heater.amps, tuple(sorted(uses[socket.ref], key=lambda u: u.index))))
    parts = list(net.parts)
    for socket in placement.sockets:
        pins = net.pins[socket.ref]
        parts.append(Part(socket.ref, "tube", socket.tube, tuple((str(p), n) for p, n in sorted(pins.items())),
                          "envelope", None, tube=socket.tube))
    budget = _budget(stock, problem, placement, envelopes)
    used_count = {}
    for socket in placement.sockets:
        used_count[socket.tube] = used_count.get(socket.tube, 0) + 1
    stock_use = tuple(StockUse(e.tube, e.count, e.reserve, used_count.get(e.tube, 0), e.scarce,
                               stock.catalogue.get(e.tube).model_from_memory)
                      for e in stock.tubes)
    names = [o.name for o in design.outputs]  # the design's outputs; next states belong to the registers
    clock = _clock(setting, registers) if registers else None
    return Plan(design.name, tuple((i.name, i.complement) for i in design.inputs),
                tuple((name, network.outputs[name]) for name in names),
                tuple((name, network.forms[name]) for name in names if name in network.forms),
                tuple(placed), tuple(envelopes), tuple(parts), budget, stock_use, solution,
                stock.plate.volts, stock.bias.volts, family.high_min_volts, family.low_max_volts,
                family.follower_low_max_volts, registers, clock,
                input_fanout_limits=tuple((i.name, i.fanout) for i in design.inputs if i.fanout is not None))


def _registers(design, network, stock, placement: Placement, net: NetlistBuilder, uses: dict,
               setting: RegisterSetting) -> tuple[PlacedRegister, ...]:
    """Every register's parts and section uses, in design order, then the reset line's pull-up."""
    loads = register_loads(design, network)
    placed = []
    for reg in design.registers:
        way = placement.registers[reg.name]
        bistable = setting.bistables[way.tube]
        tube = stock.catalogue.get(way.tube)
        job = register_job_id(reg.name)
        ref, _ = placement.at[(job, None, 0)]
        nets = {"next": network.outputs[reg.next_output],
                "next_complement": network.outputs[COMPLEMENT + reg.next_output]}
        register_parts(net, uses, reg, bistable, tube, ref, job, nets, setting.clock, setting.reset)
        placed.append(PlacedRegister(
            reg.name, reg.name, COMPLEMENT + reg.name, nets["next"], nets["next_complement"], reg.reset, way.tube, ref,
            network.forms.get(reg.next_output, ""), bistable.plate_load_ohms, bistable.upper_ohms,
            bistable.lower_ohms, bistable.commutating_farads, bistable.steering_farads,
            bistable.steering_ohms, loads[reg.name], bistable.fanout_limit, bistable.supply_amps_worst,
            bistable.supply_amps_typical, bistable.bias_amps_worst, setup_seconds=bistable.setup_seconds))
    reset_pullup(net, setting.reset)
    return tuple(placed)


def _clock(setting: RegisterSetting, registers) -> Clock:
    """The clock every register shares: the common swing, its window and what it drives."""
    used = [setting.bistables[r.tube] for r in registers]
    low = max(b.clock_swing_min_volts for b in used)
    high = min(b.clock_swing_max_volts for b in used)
    # The clock's fall must be short beside the steering time constant (it then loses under 1 % of its step).
    fall = min(0.02 * b.steering_ohms * b.steering_farads * (1 - CAPACITOR_TOLERANCE) for b in used)
    load = sum(2 * b.steering_farads * (1 + CAPACITOR_TOLERANCE) for b in used)
    return Clock(setting.clock, setting.reset, setting.swing_volts, low, high, used[0].clock_tolerance, fall, load,
                 RESET_PULLUP_OHMS)


def _use(net, uses, ref, tube, section, means, stage_id, nets) -> None:
    cathode = nets["cathode"]
    pairs = tuple(sorted((role, nets.get(role, cathode)) for role in section.pins))
    for role, value in pairs:
        net.pin(ref, section.pins[role], value)
    uses[ref].append(SectionUse(section.index, means, stage_id, pairs))


def _tie_off(net, uses, ref, section, diode_type: bool) -> None:
    """Every electrode of an unused section to its cathode (GND unless the cathode pin is shared)."""
    if diode_type:
        cathode = GROUND
    else:
        cathode = net.pins.get(ref, {}).get(section.pins["cathode"], GROUND)
    pairs = tuple(sorted((role, cathode) for role in section.pins))
    for role, value in pairs:
        net.pin(ref, section.pins[role], value)
    uses[ref].append(SectionUse(section.index, "unused", "", pairs))


def _heater_pins(net, ref, tube, heater) -> None:
    live, ret = heater.winding, f"{heater.winding}_RET"
    a, b = tube.heater_pins[0], tube.heater_pins[-1]
    if heater.connection == "parallel":
        net.pin(ref, a, ret)
        net.pin(ref, b, ret)
        net.pin(ref, tube.heater_centre_tap_pin, live)
    else:
        net.pin(ref, a, live)
        net.pin(ref, b, ret)


def _budget(stock, problem: Problem, placement: Placement, envelopes) -> Budget:
    amps = {w.id: 0.0 for w in stock.windings}
    watts = 0.0
    for env in envelopes:
        amps[env.winding] += env.heater_amps
        watts += env.heater_volts * env.heater_amps
    ways = list(placement.ways.values()) + list(placement.registers.values())
    supplies = problem.supplies
    plate = supplies.fixed_plate_amps + sum(w.plate_amps for w in ways)
    typical = supplies.fixed_plate_amps_typical + sum(w.plate_amps_typical for w in ways)
    bias = supplies.fixed_bias_amps + sum(w.bias_amps for w in ways)
    windings = tuple(WindingLoad(w.id, w.volts, w.max_amps, amps[w.id], w.elevated_volts) for w in stock.windings)
    return Budget(watts, windings, plate, typical, bias, stock.plate.max_amps, stock.bias.max_amps)
