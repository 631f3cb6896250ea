"""The SPICE deck of a plan (plan.cir) and its input vectors run in ngspice.

The deck is plain SPICE that ``ngspice -b`` runs: the plan's parts list as a
netlist, tube sections as the catalogue's subcircuits (``spice_subcircuit``,
the same equations as the Python models), the rails (B+, BIAS, GND = node 0),
one source per primary input (and its complement, where declared) whose logic
value is a ``.param in_NAME=0|1`` line, a 0 V source naming each design
output's node ``out_NAME``, and an ``.op`` analysis. Corner parameters
(``CORNER_ROLES`` and the deck's header say what each does) default to the
nominal plan, so the deck as written simulates the plan at nominal; ``tubeplan
prove`` sets them for its worst-case corners. With registers, a clock
source ``V_clk`` idling at the clock's swing (a falling step to 0 V clocks the
registers) and a ``.nodeset`` putting each bistable in its reset state (a
bistable has two stable operating points; the node set picks one). Heater pins
are not part of the DC logic circuit and are left out.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from planner.catalogue import Catalogue, spice_nodes, spice_subcircuit, subcircuit_name
from planner.mapping import BIAS_RAIL, GROUND, PLATE_RAIL, Plan

from .designators import natural_key
from .ngspice import NgspiceFailed, run_ngspice

#: A generic small-signal silicon junction diode (forward parameters from memory,
#: typical of signal diodes). No reverse breakdown is modelled: the BOM asks for
#: diodes rated for the whole B+ to BIAS span, since an AND diode's cathode can
#: sit at a high plate level while its anode is held near a low one.
SILICON_DIODE_MODEL = ".model d_silicon D(IS=2.5n N=1.8 RS=0.6 CJO=4p)"

#: The resistor roles that the corner parameter ``rdir`` moves, and the sign of their move: with
#: ``rdir=+1`` a role marked +1 goes to the top of its tolerance and one marked -1 to the bottom,
#: which lowers every high level (a larger plate load drops more across it; a smaller divider upper
#: and cathode load draw more from the node; a larger divider lower and screen shunt, a smaller
#: screen series and gate pull-up lift a cut-off grid and let its section leak more).
#: ``rdir=-1`` is the other end of each, which raises every low level. Other roles stay nominal.
CORNER_ROLES = {"plate load": 1, "divider lower": 1, "screen shunt": 1,
                "divider upper": -1, "gate pull-up": -1, "screen series": -1, "cathode load": -1}



@dataclass(frozen=True)
class SpiceDeck:
    """A deck and the names in it: ``params`` input -> parameter, ``outputs`` output -> node,
    ``nodes`` plan net -> SPICE node."""

    text: str
    params: tuple[tuple[str, str], ...]
    outputs: tuple[tuple[str, str], ...]
    nodes: tuple[tuple[str, str], ...]
    high_volts: float
    low_volts: float
    clock_node: str | None = None

    def with_inputs(self, values: Mapping[str, int]) -> str:
        """The deck text with each input's ``.param`` line set to ``values[input]`` (0 or 1)."""
        text = self.text
        for name, param in self.params:
            if name in values:
                text = re.sub(rf"(?m)^\.param {re.escape(param)}=\d$", f".param {param}={int(values[name])}",
                              text)
        return text


def sanitise(name: str) -> str:
    """A SPICE-safe spelling of a net or design name: lower case, letters, digits, '_'.

    SPICE folds case and reads '+', '.' and '~' specially, so '~' becomes
    ``not_``, '+' becomes ``plus``, any other character '_'.

    >>> [sanitise(x) for x in ("~a", "B+", "n3.g1", "Cin")]
    ['not_a', 'bplus', 'n3_g1', 'cin']
    """
    text = name.replace("~", "not_").replace("+", "plus")
    text = re.sub(r"[^A-Za-z0-9_]", "_", text).lower()
    return text or "_"


class _Names:
    """Allocates distinct SPICE names (case-folded), suffixing ``_2``, ``_3`` on a clash."""

    def __init__(self, reserved=()):
        self.used = {r.lower() for r in reserved}

    def take(self, wanted: str) -> str:
        name, k = wanted, 1
        while name in self.used:
            k += 1
            name = f"{wanted}_{k}"
        self.used.add(name)
        return name


def _num(value: float) -> str:
    return f"{value:.6g}"


def _element(letter: str, ref: str) -> str:
    """A SPICE element name of class ``letter`` for designator ``ref`` (R5 stays R5, V1 -> XV1)."""
    return ref if ref[:1].upper() == letter else f"{letter}{ref}"


def _corner_header() -> list[str]:
    """The comment lines that document the corner parameters (see ``CORNER_ROLES``)."""
    up = ", ".join(r for r, sign in CORNER_ROLES.items() if sign > 0)
    down = ", ".join(r for r, sign in CORNER_ROLES.items() if sign < 0)
    return ["* corner parameters (tubeplan prove sets them; these defaults simulate the plan at nominal):",
            "*   supply_bplus, supply_bias: each supply as a fraction of nominal (1; corners 1 +- supply_tol)",
            "*   wear_TYPE: fraction of nominal plate and screen current of every TYPE section",
            "*     (1 new; worn_TYPE is the wear the plan was designed for)",
            "*   rdir: resistors at nominal (0); +1 each at the end of its tolerance that lowers high levels:",
            f"*     {up}: high end; {down}: low end;",
            "*     -1 the other end of each, which raises low levels;",
            "*     other resistors stay nominal"]


def _resistance(part) -> str:
    """A resistor's value, written to follow ``rdir`` by its role (``CORNER_ROLES``)."""
    sign = CORNER_ROLES.get(part.role, 0)
    if not sign or not part.tolerance:
        return _num(part.ohms)
    return f"{{{_num(part.ohms)}*(1{'+' if sign > 0 else '-'}{_num(part.tolerance)}*rdir)}}"


def spice_deck(plan: Plan, catalogue: Catalogue) -> SpiceDeck:
    """The SPICE deck of ``plan``, every input at logic 0. Cost O(parts).

    Node names: every plan net sanitised (``sanitise``), made distinct in the
    natural order of the nets; GND is node 0.
    """
    nets = {GROUND, PLATE_RAIL, BIAS_RAIL}
    for part in plan.parts:
        nets.update(net for _, net in part.pins)
    nets.update(name for name, _ in plan.inputs)
    nets.update(f"~{name}" for name, complement in plan.inputs if complement)
    nets.update(net for _, net in plan.outputs)
    names = _Names(reserved=("0",))
    nodes = {GROUND: "0"}
    for net in sorted(nets - {GROUND}, key=natural_key):
        nodes[net] = names.take(sanitise(net))
    out_nodes = {name: names.take("out_" + sanitise(name)) for name, _ in sorted(plan.outputs)}
    params_names = _Names()
    params = {name: params_names.take("in_" + sanitise(name)) for name, _ in plan.inputs}

    lines = [f"* tubeplan deck: {plan.design}",
             f"* inputs: .param in_NAME=1 drives logic high ({plan.high_volts:g} V), 0 logic low "
             f"({plan.low_volts:g} V); outputs are nodes out_NAME",
             "* CAUTION: the circuit this deck describes runs at lethal voltages.",
             "",
             f".param logic_high={_num(plan.high_volts)} logic_low={_num(plan.low_volts)}"]
    lines += [f".param {params[name]}=0" for name, _ in plan.inputs]
    wear = {sanitise(t): w for t, w in plan.tube_wear}
    lines += ["", *_corner_header(), ".param supply_bplus=1 supply_bias=1 "
              f"supply_tol={_num(plan.supply_tolerance)} rdir=0"]
    lines += [f".param wear_{t}=1 worn_{t}={_num(w)}" for t, w in sorted(wear.items())]
    lines += ["", "* supplies",
              f"V_bplus {nodes[PLATE_RAIL]} 0 {{{_num(plan.plate_volts)}*supply_bplus}}",
              f"V_bias {nodes[BIAS_RAIL]} 0 {{{_num(plan.bias_volts)}*supply_bias}}",
              "", "* primary inputs"]
    for name, complement in plan.inputs:
        p = params[name]
        lines.append(f"V_{p} {nodes[name]} 0 {{{p}*logic_high + (1-{p})*logic_low}}")
        if complement:
            lines.append(f"V_not_{p} {nodes['~' + name]} 0 "
                         f"{{(1-{p})*logic_high + {p}*logic_low}}")
    clock_node = None
    if plan.clock is not None:
        clock_node = nodes[plan.clock.net]
        lines += ["", "* clock: idles at its swing; a falling step to 0 V clocks the registers",
                  f"V_clk {clock_node} 0 {_num(plan.clock.swing_volts)}",
                  "* registers start in their reset states",
                  ".nodeset " + " ".join(
                      f"v({nodes[net]})={_num(plan.high_volts if high else plan.low_volts)}"
                      for reg in plan.registers
                      for net, high in ((reg.output, reg.reset == 1), (reg.complement, reg.reset == 0)))]
    lines += ["", "* design outputs"]
    lines += [f"V_{out_nodes[name]} {nodes[net]} {out_nodes[name]} 0" for name, net in sorted(plan.outputs)]

    subckts: dict[str, str] = {}
    body = ["", "* parts"]
    diode_model = False
    for part in plan.parts:
        pins = dict(part.pins)
        if part.kind == "resistor":
            body.append(f"{_element('R', part.ref)} {nodes[pins['1']]} {nodes[pins['2']]} {_resistance(part)}")
        elif part.kind == "capacitor":
            body.append(f"{_element('C', part.ref)} {nodes[pins['1']]} {nodes[pins['2']]} {_num(part.farads)}")
        elif part.kind == "diode":
            body.append(f"{_element('D', part.ref)} {nodes[pins['A']]} {nodes[pins['K']]} d_silicon")
            diode_model = True
        elif part.kind == "tube":
            tube = catalogue.get(part.tube or part.value)
            for section in tube.sections:
                name = subcircuit_name(tube, section.kind)
                subckts.setdefault(name, spice_subcircuit(tube, section.kind))
                wired = [pins.get(str(section.pins[role])) if role in section.pins else None
                         for role in spice_nodes(tube, section.kind)]
                if None in wired:
                    body.append(f"* {part.ref} section {section.index} not wired")
                    continue
                worn = sanitise(tube.name)
                scaled = f" wear={{wear_{worn}}}" if worn in wear and section.kind != "diode" else ""
                body.append(f"X{part.ref}_{section.index} {' '.join(nodes[n] for n in wired)} {name}{scaled}")
    lines += body
    lines += ["", "* models"]
    if diode_model:
        lines.append(SILICON_DIODE_MODEL)
    for name in sorted(subckts):
        lines.append(subckts[name].strip())
    lines += ["", ".op", ".end", ""]
    return SpiceDeck("\n".join(lines), tuple((n, params[n]) for n, _ in plan.inputs),
                     tuple(sorted(out_nodes.items())), tuple(sorted(nodes.items())),
                     plan.high_volts, plan.low_volts, clock_node)


def reset_press(reset_node: str, bias_node: str, release_s: float, ramp_s: float) -> str:
    """Deck lines for the reset contact pressed from the start until ``release_s`` (opening over ``ramp_s``).

    A transient run starts every register in its reset state this way, as on the bench:
    the deck's ``.nodeset`` only hints at that state, and an operating point may settle
    elsewhere.
    """
    return (f"S_prove_reset {reset_node} {bias_node} prove_reset 0 prove_contact\n"
            f"V_prove_reset prove_reset 0 PWL(0 1 {release_s:.9g} 1 {release_s + ramp_s:.9g} 0)\n"
            ".model prove_contact sw vt=0.5 vh=0.1 ron=10 roff=1e12\n")


def run_deck(deck: SpiceDeck, vectors: Sequence[Mapping[str, int]], *, probes: Mapping[str, str] | None = None,
             executable: str | None = None, timeout_s: float = 120.0) -> tuple[dict[str, float], ...]:
    """Node volts for each input vector, in one ngspice run: label -> V.

    ``probes`` maps a label to a SPICE node (see ``SpiceDeck.nodes``); the
    default is every design output (label: output name, node out_NAME). The
    deck's ``.op`` is replaced by a ``.control`` block that, per vector, sets
    the input parameters (``alterparam``), re-loads the circuit (``reset``),
    runs ``op`` and prints every probed node. ``executable``: as for
    ``find_ngspice``. Raises NgspiceMissing, and NgspiceFailed when ngspice
    fails or prints fewer results than asked. Cost: one ngspice process
    (``run_ngspice``), one operating point a vector.
    """
    probes = dict(deck.outputs if probes is None else probes)
    control = [".control", "set noaskquit"]
    for k, vector in enumerate(vectors):
        control += [f"alterparam {param}={int(vector[name])}" for name, param in deck.params if name in vector]
        control += ["reset", "op", f"echo @@vector {k}"]
        control += [f"print v({node})" for node in sorted(set(probes.values()))]
    control += ["quit", ".endc"]
    text = deck.text.replace("\n.op\n", "\n" + "\n".join(control) + "\n")
    out, _ = run_ngspice(text, executable, timeout_s=timeout_s)
    volts: list[dict[str, float]] = []
    for line in out.splitlines():
        if line.startswith("@@vector"):
            volts.append({})
            continue
        match = re.match(r"\s*v\((\S+)\)\s*=\s*(\S+)", line)
        if match and volts:
            volts[-1][match.group(1)] = float(match.group(2))
    results = [{label: row[node] for label, node in probes.items() if node in row} for row in volts]
    complete = len(results) == len(vectors) and all(len(r) == len(probes) for r in results)
    if not complete:
        tail = "\n".join(out.splitlines()[-15:])
        raise NgspiceFailed(f"ngspice printed {len(results)} of {len(vectors)} vectors:\n{tail}")
    return tuple(results)
