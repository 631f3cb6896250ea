"""Plain-text description of a stage template (``tubeplan stage``)."""

from __future__ import annotations

from planner.units import milliamps, picofarads

from .parts import Shortfall, Template

CAUTION = ("CAUTION: the plate supply of these stages is high voltage and can kill; switch off and "
           "discharge the filter capacitors before touching the wiring, and follow your local "
           "electrical codes and licensed practice.")


def ohms_text(ohms: float) -> str:
    """Resistance in the usual short form.

    >>> ohms_text(82e3), ohms_text(1.2e6), ohms_text(470.0)
    ('82k', '1.2M', '470')
    """
    for scale, suffix in ((1e6, "M"), (1e3, "k")):
        if ohms >= scale:
            return f"{ohms / scale:g}{suffix}"
    return f"{ohms:g}"


def watts_text(watts: float) -> str:
    """A resistor rating: 1/4 W, 1/2 W, 1 W, 2 W."""
    return {0.25: "1/4 W", 0.5: "1/2 W"}.get(watts, f"{watts:g} W")


def format_template(t: Template) -> str:
    """Human-readable summary of ``t``: values, worst-case levels and margins, supply, a caution."""
    d, r = t.driver, t.rules
    lines = [
        f"{t.tube} stage ({t.means} branch) on {t.rails.plate_volts:+g} V / {t.rails.bias_volts:+g} V, "
        f"fan-out {t.fanout} (these values carry up to {t.fanout_limit})",
        f"worst case over {r.resistor_tolerance:.0%} resistors, {r.supply_tolerance:.0%} supplies and tubes at "
        f"{r.wear:.0%} of nominal current"
        + (f" ({r.unsourced_allowance:.0%} less, and new ones {r.unsourced_allowance:.0%} more: data from memory)"
           if t.from_memory else "") + f"; {r.series} values",
        "",
        f"  plate load       {ohms_text(d.plate_load_ohms):>6}  {watts_text(d.plate_load_watts)}",
    ]
    if d.screen_series_ohms is not None:
        text = f"  screen feed      {ohms_text(d.screen_series_ohms):>6}  {watts_text(d.screen_series_watts)} from B+"
        if d.screen_shunt_ohms is not None:
            text += f", {ohms_text(d.screen_shunt_ohms)} {watts_text(d.screen_shunt_watts)} to ground"
        lines.append(text)
    for rec in t.receivers:
        role = f"({rec.grid_role})"
        text = (f"  divider {role:<8} {ohms_text(rec.upper_ohms):>6}  {watts_text(rec.upper_watts)} "
                f"upper, {ohms_text(rec.lower_ohms)} {watts_text(rec.lower_watts)} lower to bias")
        if rec.pullup_ohms is not None:
            text += f"; gate pull-up {ohms_text(rec.pullup_ohms)} {watts_text(rec.pullup_watts)} to B+"
        if rec.speedup_farads is not None:
            text += f"; {picofarads(rec.speedup_farads):g} pF across the upper"
        lines.append(text)
    lines += [
        "",
        f"  output high      {t.high_volts:7.1f} V at the plate (designed for {t.design_high_volts:.1f} V); "
        f"load grid {t.grid_high_volts:+.2f} V, drive {t.margin_high_volts:.1f} V above 0 V",
        f"  output low       {t.low_volts:7.1f} V at the plate (designed for {t.design_low_volts:.1f} V); "
        f"load grid {t.grid_low_volts:+.1f} V, {t.margin_low_volts:.1f} V below cut-off ({t.cutoff_volts:.1f} V)",
        f"  cut-off          {t.cutoff_volts:+.1f} V at a load's grid (10 uA) with the plate at the highest "
        f"supply, {t.rails.plate_volts * (1 + r.supply_tolerance):g} V"
        + (f" ({r.unsourced_allowance:.0%} deeper: {t.tube}'s data are from memory)" if t.from_memory else ""),
        f"  plate supply     {milliamps(d.supply_amps_worst):.2f} mA worst, "
        f"{milliamps(d.supply_amps_typical):.2f} mA typical per stage",
        f"  section          {d.section_watts_worst:.2f} W worst"
        + (f", screen {d.screen_watts_worst:.2f} W" if d.screen_watts_worst is not None else ""),
    ]
    lines += _follower_lines(t) + ["", CAUTION]
    return "\n".join(lines) + "\n"


def _follower_lines(t: Template) -> list[str]:
    """The type's cathode follower at the template's fan-out, or which limit fails and by how much."""
    f = t.follower
    if f is None:
        return []
    if isinstance(f, Shortfall):
        return ["", f"  follower         none passes: {f.limit}, short by {f.amount:.1f} {f.unit}".rstrip(),
                f"                   ({f.message})"]
    x = f.follower
    lines = ["", f"  follower         cathode load {ohms_text(x.cathode_load_ohms)} {watts_text(x.cathode_load_watts)} "
             f"to bias" + (f", grid stopper {ohms_text(x.grid_stopper_ohms)}" if x.grid_stopper_ohms else "")
             + f"; carries up to {x.fanout_limit} loads"]
    for rec in f.receivers:
        lines.append(f"  fed divider {('(' + rec.grid_role + ')'):<8} {ohms_text(rec.upper_ohms)} upper, "
                     f"{ohms_text(rec.lower_ohms)} lower (designed for the follower's levels)")
    where = "grounded heater" if not f.elevation_volts else f"heater at {f.elevation_volts:+g} V DC"
    lines += [f"  follower output  {f.high_volts:.1f} V high, {f.low_volts:.1f} V low worst case with {f.fanout} "
              f"loads (its loads accept {f.design_high_volts:.1f} V and {f.accept_low_volts:.1f} V)",
              f"  cathode range    {x.cathode_volts_min:.1f} to {x.cathode_volts_max:.1f} V ({where}; "
              f"within the heater-cathode rating)"]
    return lines
