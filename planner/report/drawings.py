"""Drawings of the plan's stage templates, made with schemdraw and rendered to inline SVG.

schemdraw's tube symbols are not used: the symbol is composed here from its
primitives (a circle with plate, grid and cathode lines) so that every section
kind of the catalogue, including two control grids, is drawn the same way.
A stage is drawn from the plan's parts list: the plate load and the dividers
are the resistors the netlist puts on the stage's nets, with their values.
"""

from __future__ import annotations

import re
import sys
from dataclasses import dataclass

from planner.mapping import BIAS_RAIL, GROUND, PLATE_RAIL, Part, PlacedRegister, PlacedStage, Plan

from .designators import natural_key


def _import_schemdraw_svg_only() -> None:
    """Import schemdraw without its matplotlib backend: the drawings are SVG, and schemdraw's
    optional import of matplotlib costs about a second of every plan's start-up. The block
    (``sys.modules[name] = None`` makes that one import fail, as if matplotlib were absent)
    is lifted at once, so an explicit import of the backend later still works."""
    blocked = "schemdraw.backends.mpl"
    if "schemdraw" in sys.modules or blocked in sys.modules:
        return
    sys.modules[blocked] = None
    try:
        import schemdraw  # noqa: F401
    finally:
        del sys.modules[blocked]


_import_schemdraw_svg_only()

import schemdraw  # noqa: E402
import schemdraw.elements as elm  # noqa: E402
from schemdraw.segments import Segment, SegmentCircle, SegmentText  # noqa: E402

_GRID_Y = {"grid": -0.4, "screen": 0.0, "grid3": 0.4}
#: Display scale of the drawings relative to schemdraw's default size.
SCALE = 0.7
_RAIL_TEXT = {PLATE_RAIL: "B+", BIAS_RAIL: "BIAS", GROUND: "0 V"}


class TubeSymbol(elm.Element):
    """A tube section: envelope circle, plate, dashed grids (g1, screen, g3 as present), cathode.

    Anchors: ``plate`` (top), ``cathode`` (bottom), ``grid`` and ``grid3``
    (left), ``screen`` (right); the centre is the element's origin.
    """

    def __init__(self, electrodes=("grid",), caption: str = "", **kwargs):
        super().__init__(**kwargs)
        self.segments.append(SegmentCircle((0, 0), 1.0))
        self.segments.append(Segment([(-0.42, 0.62), (0.42, 0.62)]))
        self.segments.append(Segment([(0, 0.62), (0, 1.5)]))
        self.segments.append(Segment([(-0.42, -0.62), (0.42, -0.62)]))
        self.segments.append(Segment([(0, -0.62), (0, -1.5)]))
        self.anchors["plate"], self.anchors["cathode"] = (0, 1.5), (0, -1.5)
        for electrode in electrodes:
            y = _GRID_Y[electrode]
            for x in (-0.45, -0.15, 0.15):
                self.segments.append(Segment([(x, y), (x + 0.22, y)]))
            if electrode == "screen":
                self.segments.append(Segment([(0.37, y), (1.5, y)]))
                self.anchors["screen"] = (1.5, y)
            else:
                self.segments.append(Segment([(-0.45, y), (-1.5, y)]))
                self.anchors[electrode] = (-1.5, y)
        if caption:
            self.segments.append(SegmentText((0.2, 1.1), caption, align=("left", "bottom"), fontsize=10))


class Text(elm.Element):
    """A free text at its origin, aligned by (halign, valign)."""

    def __init__(self, text: str, align=("left", "center"), fontsize: float = 11, **kwargs):
        super().__init__(**kwargs)
        self.segments.append(SegmentText((0, 0), text, align=align, fontsize=fontsize))
        # schemdraw does not measure text for the bounding box: an invisible line of about its width does
        width = len(text) * fontsize * 0.6 / 36.0
        start = {"left": 0.0, "center": -width / 2, "right": -width}[align[0]]
        self.segments.append(Segment([(start, 0), (start + width, 0)], visible=False))


@dataclass(frozen=True)
class Template:
    """Stages built alike (same view, tubes, means and resistor values), drawn once."""

    title: str
    stages: tuple[str, ...]
    svg: str


def _value(part: Part) -> str:
    return f"{part.ref} {part.value}"


class _Netlist:
    """Look-ups on the parts list used while drawing."""

    def __init__(self, plan: Plan):
        self.parts = plan.parts
        self.tubes = {p.ref: p for p in plan.parts if p.kind == "tube"}
        self.sections = {(e.ref, s.index): dict(s.nets) for e in plan.envelopes for s in e.sections}

    def two_terminal(self, net: str, kind: str = "resistor") -> list[tuple[Part, str]]:
        """Parts of ``kind`` with a pin on ``net``, each with the net at its other end."""
        out = []
        for part in self.parts:
            if part.kind != kind:
                continue
            nets = [n for _, n in part.pins]
            if net in nets:
                other = [n for n in nets if n != net]
                out.append((part, other[0] if other else net))
        return sorted(out, key=lambda item: natural_key(item[0].ref))

    def diodes_from(self, node: str) -> list[tuple[str, str, bool]]:
        """Diodes with their anode on ``node``: (label, cathode net, vacuum?), solid-state parts and
        vacuum diode sections (a section with only a plate and a cathode) alike."""
        out = []
        for part in self.parts:
            if part.kind == "diode" and dict(part.pins).get("A") == node:
                out.append((part.ref, dict(part.pins)["K"], False))
        for (ref, index), nets in self.sections.items():
            if set(nets) == {"plate", "cathode"} and nets["plate"] == node:
                out.append((f"{ref}.{index} {self.tubes[ref].value}", nets["cathode"], True))
        return sorted(out, key=lambda item: natural_key(item[0]))


def _rail_label(d, at, rail: str, direction: str) -> None:
    text = _RAIL_TEXT.get(rail, rail)
    if direction == "down" and rail == GROUND:
        d.add(elm.Ground().at(at).theta(0))
    else:
        x, y = at
        _text(d, (x, y + 0.3 if direction == "up" else y - 0.3), text,
              ("center", "bottom" if direction == "up" else "top"))


def _text(d, at, text: str, align, fontsize: float = 11) -> None:
    d.add(Text(text, align=align, fontsize=fontsize).at(at).theta(0))


def _feed(d, net: _Netlist, node_xy, grid_net: str, upward_return: bool) -> None:
    """Draw what drives a grid at ``node_xy``: a rail, an input directly, or a divider from its source.

    The divider's source is an input net, or the gate node of a diode AND
    (pulled up from B+, one diode to each input), which is drawn too.
    """
    x, y = node_xy
    if grid_net in _RAIL_TEXT:
        d.add(elm.Line().at((x, y)).to((x - 0.6, y)))
        _text(d, (x - 0.8, y), _RAIL_TEXT[grid_net], ("right", "center"))
        return
    resistors = net.two_terminal(grid_net)
    upper = [(p, other) for p, other in resistors if other not in _RAIL_TEXT]
    lower = [(p, other) for p, other in resistors if other in _RAIL_TEXT]
    if not upper:
        d.add(elm.Line().at((x, y)).to((x - 1.0, y)))
        _text(d, (x - 1.2, y), grid_net, ("right", "center"))
        return
    part, source = upper[0]
    d.add(elm.Dot().at((x, y)))
    start = (x - 3.0, y)
    label = _value(part)
    for cap, other in net.two_terminal(grid_net, "capacitor"):  # a speed-up capacitor across the upper
        if other == source:
            label += f" + {_value(cap)} across"
    d.add(elm.Resistor().at(start).to((x, y)).label(label, loc="top" if upward_return else "bottom", fontsize=10))
    for part, rail in lower[:1]:
        end = (x, y + 2.0) if upward_return else (x, y - 2.5)
        d.add(elm.Resistor().at((x, y)).to(end).label(_value(part), loc="bottom", fontsize=10))
        _rail_label(d, end, rail, "up" if upward_return else "down")
    diodes = net.diodes_from(source)
    if not diodes:
        _text(d, (start[0] - 0.2, y), source, ("right", "center"))
        return
    gx, gy = start
    d.add(elm.Dot().at(start))
    for part, rail in [(p, o) for p, o in net.two_terminal(source) if o in _RAIL_TEXT][:1]:  # the pull-up
        top = (gx, gy + 2.5)
        d.add(elm.Resistor().at(start).to(top).label(_value(part), loc="bottom", fontsize=10))
        _rail_label(d, top, rail, "up")
    pitch = 2.6 if any(vacuum for _, _, vacuum in diodes) else 1.4
    for k, (label, cathode, vacuum) in enumerate(diodes):  # one diode to each input, anode at the gate node
        row = (gx, gy - pitch * k)
        if k:
            d.add(elm.Line().at((gx, gy - pitch * (k - 1))).to(row))
            d.add(elm.Dot().at(row))
        end = (gx - 3.0, row[1])
        if vacuum:  # a diode section: plate at the gate node, cathode towards the input
            d.add(TubeSymbol(()).at((gx - 1.5, row[1])).theta(-90))
            _text(d, (gx - 1.5, row[1] - 1.1), label, ("center", "top"), 10)
        else:
            d.add(elm.Diode().at(row).to(end).label(label, loc="bottom" if k == len(diodes) - 1 else "top",
                                                    fontsize=10))
        _text(d, (end[0] - 0.2, row[1]), cathode, ("right", "center"))


def _section_electrodes(nets: dict) -> tuple[str, ...]:
    return tuple(role for role in ("grid", "screen", "grid3") if role in nets)


def _draw_screen(d, net: _Netlist, anchor, screen_net: str) -> None:
    """The screen feed: series resistor from B+ and, if present, the shunt to a rail."""
    sx, sy = anchor
    if screen_net in _RAIL_TEXT:
        d.add(elm.Line().at(anchor).to((sx + 1.0, sy)))
        _text(d, (sx + 1.2, sy), _RAIL_TEXT[screen_net], ("left", "center"))
        return
    resistors = net.two_terminal(screen_net)
    series = [p for p, o in resistors if o == PLATE_RAIL]
    shunts = [(p, o) for p, o in resistors if o in _RAIL_TEXT and o != PLATE_RAIL]
    node = (sx + 0.8, sy)
    d.add(elm.Line().at(anchor).to(node))
    for part, rail in shunts[:1]:
        d.add(elm.Dot().at(node))
        end = (node[0], sy - 2.5)
        d.add(elm.Resistor().at(node).to(end).label(_value(part), loc="bottom", fontsize=10))
        _rail_label(d, end, rail, "down")
    if series:
        end = (node[0] + 2.5, sy)
        d.add(elm.Resistor().at(node).to(end).label(_value(series[0]), loc="top", fontsize=10))
        _text(d, (end[0] + 0.2, sy), "B+", ("left", "center"))
    else:
        _text(d, (node[0] + 0.2, sy), screen_net, ("left", "center"))


def _draw_section(d, net: _Netlist, centre, nets: dict, label: str) -> TubeSymbol:
    tube = d.add(TubeSymbol(_section_electrodes(nets), caption=label).at(centre).theta(0))
    for role, upward in (("grid", False), ("grid3", True)):
        if role in nets:
            gx, gy = tube.absanchors[role]
            node = (gx - 1.0, gy)
            d.add(elm.Line().at((gx, gy)).to(node))
            _feed(d, net, node, nets[role], upward)
    if "screen" in nets:
        _draw_screen(d, net, tube.absanchors["screen"], nets["screen"])
    kx, ky = tube.absanchors["cathode"]
    cathode = nets.get("cathode", GROUND)
    if cathode == GROUND:
        d.add(elm.Ground().at((kx, ky)).theta(0))
    else:
        _text(d, (kx, ky - 0.2), cathode, ("center", "top"))
    return tube


def _draw_inverting(stage: PlacedStage, net: _Netlist, plan: Plan) -> str:
    d = schemdraw.Drawing(canvas="svg", show=False)
    d.config(fontsize=11, lw=1.4)
    plates = []
    x = 0.0
    for branch in stage.branches:
        nets = net.sections.get((branch.envelope, branch.section), {})
        x += 10.0 if branch.means == "diode" else 7.0  # a diode gate reaches further left
        centre = (x, 0.0)
        x += 6.0 if "screen" in nets else 2.5
        tube = _draw_section(d, net, centre, nets, f"{branch.envelope}.{branch.section} {branch.tube}")
        plates.append(tube.absanchors["plate"])
    bus_y = 4.2
    for px, py in plates:
        d.add(elm.Line().at((px, py)).to((px, bus_y)))
    right = (plates[-1][0] + 5.0) if plates else 7.0
    left = plates[0][0] if plates else right
    d.add(elm.Line().at((left, bus_y)).to((right, bus_y)))
    loads = [(p, o) for p, o in net.two_terminal(stage.output) if o == PLATE_RAIL]
    top = (right, bus_y + 3.0)
    d.add(elm.Dot().at((right, bus_y)))
    if loads:
        d.add(elm.Resistor().at((right, bus_y)).to(top).label(_value(loads[0][0]), loc="bottom", fontsize=10))
    else:
        d.add(elm.Line().at((right, bus_y)).to(top))
    _rail_label(d, top, PLATE_RAIL, "up")
    outputs = [name for name, n in plan.outputs if n == stage.output]
    text = stage.output + (f" = {', '.join(outputs)}" if outputs else "")
    d.add(elm.Line().at((right, bus_y)).to((right + 2.5, bus_y)))
    d.add(elm.Dot(open=True).at((right + 2.5, bus_y)))
    _text(d, (right + 2.8, bus_y), text, ("left", "center"))
    return _svg(d)


def _draw_follower(stage: PlacedStage, net: _Netlist, plan: Plan) -> str:
    d = schemdraw.Drawing(canvas="svg", show=False)
    d.config(fontsize=11, lw=1.4)
    nets = net.sections.get((stage.envelope, stage.section), {"grid": stage.input, "cathode": stage.output})
    tube = d.add(TubeSymbol(("grid",), caption=f"{stage.envelope}.{stage.section} {stage.tube}")
                 .at((7.0, 0.0)).theta(0))
    px, py = tube.absanchors["plate"]
    d.add(elm.Line().at((px, py)).to((px, py + 1.0)))
    _rail_label(d, (px, py + 1.0), PLATE_RAIL, "up")
    gx, gy = tube.absanchors["grid"]
    node = (gx - 1.0, gy)
    d.add(elm.Line().at((gx, gy)).to(node))
    _feed(d, net, node, nets.get("grid", stage.input), False)
    kx, ky = tube.absanchors["cathode"]
    k = (kx, ky - 1.0)
    d.add(elm.Line().at((kx, ky)).to(k))
    d.add(elm.Dot().at(k))
    loads = [(p, o) for p, o in net.two_terminal(stage.output) if o in (BIAS_RAIL, GROUND)]
    if loads:
        end = (kx, k[1] - 3.0)
        d.add(elm.Resistor().at(k).to(end).label(_value(loads[0][0]), loc="bottom", fontsize=10))
        _rail_label(d, end, loads[0][1], "down")
    outputs = [name for name, n in plan.outputs if n == stage.output]
    text = stage.output + (f" = {', '.join(outputs)}" if outputs else "")
    d.add(elm.Line().at(k).to((kx + 3.0, k[1])))
    d.add(elm.Dot(open=True).at((kx + 3.0, k[1])))
    _text(d, (kx + 3.3, k[1]), text, ("left", "center"))
    return _svg(d)


def _draw_register(reg: PlacedRegister, net: _Netlist, plan: Plan) -> str:
    """A register: the bistable's two sections with plate loads, cross-coupling dividers (the other
    plate's net named at the divider's top), steering diode, capacitor and resistor, and the reset diode.

    Drawn from the parts list, so the values are the plan's (docs/registers.md has the circuit).
    """
    d = schemdraw.Drawing(canvas="svg", show=False)
    d.config(fontsize=11, lw=1.4)
    reset_net = plan.clock.reset_net if plan.clock is not None else "RESET"
    for side, x0 in ((1, 0.0), (2, 17.0)):
        nets = net.sections.get((reg.envelope, side), {})
        plate, grid = nets.get("plate", "?"), nets.get("grid", "?")
        tube = d.add(TubeSymbol(("grid",), caption=f"{reg.envelope}.{side} {reg.tube}").at((x0, 0.0)).theta(0))
        px, py = tube.absanchors["plate"]
        node = (px, py + 2.5)
        d.add(elm.Line().at((px, py)).to(node))
        d.add(elm.Dot().at(node))
        loads = [p for p, o in net.two_terminal(plate) if o == PLATE_RAIL]
        top = (px, node[1] + 3.0)
        d.add(elm.Resistor().at(node).to(top).label(_value(loads[0]) if loads else "", loc="bottom", fontsize=10))
        _rail_label(d, top, PLATE_RAIL, "up")
        d.add(elm.Line().at(node).to((px + 2.5, node[1])))
        d.add(elm.Dot(open=True).at((px + 2.5, node[1])))
        _text(d, (px + 2.8, node[1]), plate, ("left", "center"))
        d.add(elm.Ground().at(tube.absanchors["cathode"]).theta(0))
        gx, gy = tube.absanchors["grid"]
        g = (gx - 1.5, gy)
        d.add(elm.Line().at((gx, gy)).to(g))
        d.add(elm.Dot().at(g))
        resistors = net.two_terminal(grid)
        upper = [(p, o) for p, o in resistors if o not in _RAIL_TEXT]
        if upper:  # the cross-coupling divider from the other plate, its commutating capacitor across
            label = _value(upper[0][0]) + "".join(f"\n+ {_value(c)} across" for c, o in
                                                   net.two_terminal(grid, "capacitor") if o == upper[0][1])
            d.add(elm.Resistor().at((g[0], g[1] + 4.4)).to(g).label(label, loc="bottom", fontsize=10))
            _text(d, (g[0], g[1] + 4.7), upper[0][1], ("center", "bottom"))
        junction = (g[0], g[1] - 1.0)
        d.add(elm.Line().at(g).to(junction))
        for part, rail in [(p, o) for p, o in resistors if o in _RAIL_TEXT][:1]:
            end = (g[0], junction[1] - 3.0)
            d.add(elm.Resistor().at(junction).to(end).label(_value(part), loc="top", fontsize=10))
            _rail_label(d, end, rail, "down")
        for label, cathode, _ in net.diodes_from(grid):
            if cathode == reset_net:  # the reset diode: anode at the grid the reset state cuts off
                d.add(elm.Dot().at(junction))
                end = (g[0] + 2.4, junction[1] - 2.4)
                d.add(elm.Diode().at(junction).to(end).label(label, loc="top", fontsize=10))
                _text(d, (end[0], end[1] - 0.2), cathode, ("center", "top"))
                continue
            x = (g[0] - 4.0, g[1])  # the steering node, behind its diode
            d.add(elm.Diode().at(g).to(x).label(label, loc="top", fontsize=10))
            d.add(elm.Dot().at(x))
            for cap, clock in net.two_terminal(cathode, "capacitor")[:1]:
                end = (x[0], x[1] + 3.0)
                d.add(elm.Capacitor().at(x).to(end).label(_value(cap), loc="bottom", fontsize=10))
                _text(d, (end[0], end[1] + 0.2), clock, ("center", "bottom"))
            for part, level in net.two_terminal(cathode)[:1]:
                end = (x[0], x[1] - 3.0)
                d.add(elm.Resistor().at(x).to(end).label(_value(part), loc="top", fontsize=10))
                _text(d, (end[0], end[1] - 0.2), level, ("center", "top"))
    return _svg(d)


def register_templates(plan: Plan) -> tuple[Template, ...]:
    """One drawing per distinct register (registers on the same tube with the same values share one)."""
    net = _Netlist(plan)
    groups: dict[tuple, list[PlacedRegister]] = {}
    for reg in plan.registers:
        key = (reg.tube, reg.plate_load_ohms, reg.upper_ohms, reg.lower_ohms, reg.commutating_farads,
               reg.steering_farads, reg.steering_ohms, reg.reset)
        groups.setdefault(key, []).append(reg)
    return tuple(Template(f"register (bistable, reset to {members[0].reset}) on {members[0].tube}",
                          tuple(r.name for r in members), _draw_register(members[0], net, plan))
                 for members in groups.values())


def _svg(d) -> str:
    """The drawing as an inline SVG element of class "schematic" (the report's CSS scales it)."""
    text = d.get_imagedata("svg").decode("utf-8")

    def smaller(match):  # schemdraw's default scale draws a tube about 2 cm wide; 0.7 reads as well
        return f'{match.group(1)}="{float(match.group(2)) * SCALE:.1f}pt"'

    head, rest = text.split(">", 1)
    head = re.sub(r'\b(height|width)="([0-9.]+)pt"', smaller, head)
    return head.replace("<svg ", '<svg class="schematic" ', 1) + ">" + rest


def _signature(stage: PlacedStage, net: _Netlist) -> tuple:
    """What makes two stages the same template: view, tubes and means, and the resistor values."""
    values = tuple(sorted((p.role, p.value) for p in net.parts if p.stage == stage.id and p.kind != "tube"))
    if stage.kind == "follower":
        return (stage.kind, stage.view, stage.tube, values)
    branches = tuple(sorted((b.means, b.tube, len(b.inputs)) for b in stage.branches))
    return (stage.kind, stage.view, branches, values)


def stage_templates(plan: Plan) -> tuple[Template, ...]:
    """One drawing per distinct stage template of the plan, drawn from its first stage; then the registers.

    Cost: one schemdraw drawing per template (a few milliseconds each).
    """
    net = _Netlist(plan)
    groups: dict[tuple, list[PlacedStage]] = {}
    for stage in plan.stages:
        groups.setdefault(_signature(stage, net), []).append(stage)
    templates = []
    for members in groups.values():
        first = members[0]
        if first.kind == "follower":
            title = f"follower on {first.tube}"
            svg = _draw_follower(first, net, plan)
        else:
            tubes = sorted({b.tube for b in first.branches})
            title = f"{first.view} on {', '.join(tubes)}"
            svg = _draw_inverting(first, net, plan)
        templates.append(Template(title, tuple(s.id for s in members), svg))
    return tuple(templates) + register_templates(plan)
