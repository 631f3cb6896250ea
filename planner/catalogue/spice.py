"""SPICE subcircuits for one tube section, with the equations of ``models``.

Each subcircuit uses behavioural current sources (B-sources: ``ln``,
``exp``, ``abs``, ``max``, ``pow``, ``atan``) that ngspice runs, plus the
interelectrode capacitances where the catalogue knows them. The currents are
those of ``planner.catalogue.models`` (Koren 1996 triode and pentode, the
three-halves law, the g3 gating factor, the three-halves grid diode), so a
DC operating point in ngspice matches the Python model.

Subcircuit names are deterministic: ``TP_<type>_<KIND>`` with the type name
upper-cased and anything but letters and digits turned into "_", KIND one
of TRIODE, PENTODE, DUAL, DIODE. ``spice_nodes`` gives the pin order.

Every subcircuit takes one parameter, ``wear`` (default 1): the fraction of
nominal plate and screen current the section gives, as the planner's models
scale a worn tube (``planner.electrical`` multiplies those currents by the
tube's condition; grid current is left alone).
"""

from __future__ import annotations

import re

from planner.units import as_written, picofarads

from .models import G3_ROUNDING, G3_SATURATION_POWER
from .types import ModelParams, TubeType

KIND_TAG = {"triode": "TRIODE", "pentode": "PENTODE", "dual-control": "DUAL", "diode": "DIODE"}
NODES = {
    "triode": ("plate", "grid", "cathode"),
    "pentode": ("plate", "screen", "grid", "cathode"),
    "dual-control": ("plate", "screen", "grid", "grid3", "cathode"),
    "diode": ("plate", "cathode"),
}
"""Subcircuit pin order by section kind, as pin roles."""

_EPSILON_VOLTS = 1e-9
"""Floor under the screen voltage in a denominator (keeps the B-source finite at 0 V)."""


def _section_kind(tube: TubeType, kind_or_means: str) -> str:
    """The section kind meant by a kind ("triode", ...) or a means ("single", "dual", "diode")."""
    kinds = [s.kind for s in tube.sections]
    if kind_or_means in KIND_TAG:
        kind = kind_or_means
    elif kind_or_means == "dual":
        kind = "dual-control"
    elif kind_or_means == "single":
        kind = next((k for k in kinds if k != "diode"), None)
    else:
        raise ValueError(f"expected a section kind or means, got {kind_or_means!r}")
    if kind not in kinds:
        raise ValueError(f"{tube.name} has no {kind_or_means} section")
    return kind


def subcircuit_name(tube: TubeType, kind_or_means: str) -> str:
    """Deterministic subcircuit name, e.g. ``TP_12AU7_TRIODE``.

    >>> from planner.catalogue import builtin_catalogue
    >>> subcircuit_name(builtin_catalogue().get("6AS6"), "dual")
    'TP_6AS6_DUAL'
    """
    kind = _section_kind(tube, kind_or_means)
    return f"TP_{re.sub(r'[^A-Z0-9]', '_', tube.name.upper())}_{KIND_TAG[kind]}"


def spice_nodes(tube: TubeType, kind_or_means: str) -> tuple[str, ...]:
    """Pin roles of the subcircuit in order, e.g. ("plate", "grid", "cathode")."""
    return NODES[_section_kind(tube, kind_or_means)]


def _num(x: float) -> str:
    return repr(float(x))


def _softplus(x: str) -> str:
    """ln(1 + exp(x)) written without overflow, as in ``models.softplus``."""
    return f"(max({x},0)+ln(1+exp(-abs({x}))))"


def _tail(m: ModelParams) -> str:
    """The cut-off tail factor E1^2 / (E1^2 + tail_volts^2), as in ``models``; empty without one.

    E1 is clamped to [0, 1e4] V inside the factor (it never exceeds a few hundred volts at a
    solution) so that wild Newton iterates cannot overflow the square.
    """
    if m.tail_volts is None:
        return ""
    e1 = f"min(max(v(e1),0),{_num(_BOUND_VOLTS)})"
    return f"*{e1}*{e1}/({e1}*{e1}+{_num(m.tail_volts ** 2)})"


_BOUND_VOLTS = 1e4
"""Bound on the triode's internal voltages in the deck (far above any real one)."""


def _plate_expressions(m: ModelParams, kind: str) -> list[str]:
    """B-source lines for the plate (and screen) currents of one section, scaled by ``wear``."""
    # Bounded at 10 kV (far above any plate voltage here) so that Newton steps far outside the circuit's
    # range (a follower's cathode swinging during a transient) cannot overflow the squares.
    ep = f"min(max(v(p,k),0),{_num(_BOUND_VOLTS)})"
    if m.equation == "diode":
        return [f"Bp p k I={{wear}}*{_num(m.perveance)}*pow({ep},1.5)"]
    if m.equation == "child-langmuir":
        drive = f"max(v(g,k)+{ep}/{_num(m.mu)},0)"
        return [f"Bp p k I={{wear}}*{_num(m.perveance)}*pow({drive},1.5)"]
    if m.equation == "koren-triode":
        arg = f"{_num(m.kp)}*(1/{_num(m.mu)}+(v(g,k)+{_num(m.vct or 0.0)})/sqrt({_num(m.kvb)}+{ep}*{ep}))"
        return [f"Be1 e1 0 V=min({ep}/{_num(m.kp)}*{_softplus(arg)},{_num(_BOUND_VOLTS)})",
                "Re1 e1 0 1G",
                f"Bp p k I={{wear}}*2*pow(max(v(e1),0)+1e-30,{_num(m.ex)})/{_num(m.kg1)}{_tail(m)}"]
    # Koren pentode; the screen voltage floor keeps Eg1/Eg2 finite at 0 V.
    es = f"max(v(s,k),{_EPSILON_VOLTS})"
    arg = f"{_num(m.kp)}*(1/{_num(m.mu)}+v(g,k)/{es})"
    lines = [f"Be1 e1 0 V=max(v(s,k),0)/{_num(m.kp)}*{_softplus(arg)}",
             "Re1 e1 0 1G",
             f"Bex ex 0 V=pow(max(v(e1),0)+1e-30,{_num(m.ex)})",
             "Rex ex 0 1G",
             f"Bpp pp 0 V=2*v(ex)/{_num(m.kg1)}*atan({ep}/{_num(m.kvb)})",
             "Rpp pp 0 1G"]
    if kind != "dual-control":
        return lines + ["Bp p k I={wear}*v(pp)", f"Bs s k I={{wear}}*v(ex)/{_num(m.kg2)}"]
    z = f"(v(g3,k)-({_num(m.g3_zero_volts)}))/{_num(-m.g3_zero_volts)}"
    n = _num(G3_SATURATION_POWER)
    return lines + [
        f"Bu u 0 V=pow({_softplus(f'{_num(G3_ROUNDING)}*{z}')}/{_num(G3_ROUNDING)},{_num(m.g3_ex)})",
        "Ru u 0 1G",
        f"Bgate gate 0 V=v(u)/pow(1+pow(v(u),{n}),1/{n})",
        "Rgate gate 0 1G",
        "Bp p k I={wear}*v(pp)*v(gate)",
        f"Bs s k I={{wear}}*(v(ex)/{_num(m.kg2)}+v(pp)*(1-v(gate)))",
    ]


def spice_subcircuit(tube: TubeType, kind_or_means: str) -> str:
    """A ``.subckt`` for one section of ``tube`` (kind or means: "triode", "single", "dual", ...).

    Pins in the order of ``spice_nodes``, then ``params: wear=1`` (see the
    module docstring); internal nodes e1, ex, pp, u, gate
    carry intermediate values (1 GOhm to ground keeps them defined). The
    grid-cathode diode (three-halves law, ``model.grid_perveance``) and the
    capacitances are included where known. Cost O(1).
    """
    kind = _section_kind(tube, kind_or_means)
    m = tube.model
    short = {"plate": "p", "screen": "s", "grid": "g", "grid3": "g3", "cathode": "k"}
    pins = " ".join(short[r] for r in NODES[kind])
    lines = [f"* {tube.name} {kind} section: {tube.description}",
             f"* model {m.equation}; source: {tube.sources.get('model', 'not stated')}",
             f".subckt {subcircuit_name(tube, kind)} {pins} params: wear=1"]
    lines += _plate_expressions(m, kind)
    if kind != "diode" and m.grid_perveance is not None:
        lines.append(f"Bgk g k I={_num(m.grid_perveance)}*pow(min(max(v(g,k),0),1e4),1.5)")
    if kind == "dual-control" and m.grid_perveance is not None:
        lines.append(f"Bg3k g3 k I={_num(m.grid_perveance)}*pow(max(v(g3,k),0),1.5)")
    caps = (("Cin", "g k" if kind != "diode" else "p k", tube.c_in_farads),
            ("Cout", "p k", tube.c_out_farads),
            ("Cgp", "g p", tube.c_gp_farads if kind != "diode" else None))
    for label, nodes, farads in caps:
        if farads:
            lines.append(f"{label} {nodes} {_num(as_written(picofarads(farads)))}p")
    lines.append(f".ends {subcircuit_name(tube, kind)}")
    return "\n".join(lines) + "\n"
