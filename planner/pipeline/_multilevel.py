"""Multi-level candidate networks for the integer program: the whole design mapped onto the stock's stages."""

from __future__ import annotations

from planner.stages import EngineError, EngineMissing, cached_multilevel

#: Cost of a solid-state diode in a diode AND, in envelopes (small: a diode is cheap, but not free of wiring).
SOLID_DIODE_COST = 0.02


def section_costs(stock, family, weights) -> tuple[dict[str, float], float]:
    """Objective cost of one section on each template, and of one diode: (template -> cost, diode cost).

    Per template the cheapest stocked type that has it, at ``(envelope weight + scarce weight
    if scarce + heater-watt weight x heater watts) / amplifying sections``, the integer
    program's weighted objective spread over the sections of one envelope.  In lexicographic
    mode a scarce envelope counts as a hundred.  A diode is a vacuum diode section where the
    stock's diodes are vacuum-only (the cheapest diode type's envelope over its sections),
    else :data:`SOLID_DIODE_COST`.
    """
    scarce = 100.0 if weights.mode == "lexicographic" else weights.scarce
    costs: dict[str, float] = {}
    diode = SOLID_DIODE_COST
    vacuum = []
    for entry in stock.tubes:
        tube = stock.catalogue.get(entry.tube)
        envelope = weights.envelopes + (scarce if entry.scarce else 0.0) + \
            weights.heater_watts * tube.heater_volts * tube.heater_amps
        if tube.amplifying_sections:
            per = envelope / len(tube.amplifying_sections)
            for template in ("single", "dual", "diode"):
                if (entry.tube, template) in family.drivers:
                    costs[template] = min(costs.get(template, per), per)
        elif tube.diode_sections:
            vacuum.append(envelope / len(tube.diode_sections))
    if stock.diodes == "vacuum-only" and vacuum:
        diode = min(vacuum)
    return costs, diode


def multilevel_networks(view, stock, family, variants, weights, options) -> list[tuple[str, object, str]]:
    """The multi-level networks for ``view``: (label, network or None, reason when none).

    For every stage-layer variant of the stock (:func:`planner.pipeline._design._synthesis_variants`),
    the whole design mapped onto the stages it allows with area = sections; for the
    first (richest) variant, also with area = the stock's objective cost per section
    (:func:`section_costs`), so scarce dual-control sections go where they save the most.
    The caller repairs fan-out, proves and costs each like any other candidate.  Each network
    is kept on disk across runs (:func:`planner.stages.cached_multilevel`).
    """
    costs, diode = section_costs(stock, family, weights)
    tries = [(f"multi-level, {label}", synth, None, 0.0) for label, synth in variants]
    if variants:
        label, synth = variants[0]
        tries.insert(1, (f"multi-level at stock costs, {label}", synth, costs, diode))
    found = []
    for label, synth, section_cost, diode_cost in tries:
        try:
            result = cached_multilevel(view, synth, section_cost, diode_cost)
        except EngineMissing:
            raise
        except EngineError as problem:
            found.append((label, None, str(problem)))
            continue
        options.say(f"mapping: network '{label}': engine script '{result.script}'")
        found.append((label, result.network, ""))
    return found
