"""DC design of stage templates: plate loads, level-shifting dividers, logic levels and margins.

Public API:

- ``Rails(plate_volts, bias_volts)``, ``DesignRules(...)``
- E series (IEC 60063): ``e_series(name)``, ``series_values(name, lo, hi)``,
  ``nearest_values(r_ohms, series)``, ``resistor_rating_watts(watts)``
- ``design_family(rails, tubes, rules, elevations) -> Family`` with ``Driver``,
  ``Receiver``, ``Follower`` and ``Shortfall`` (why a part was rejected);
  ``heater_cathode_excess(tube, elevation, low, high)`` (heater-cathode check)
- ``cached_family(rails, tubes, rules, elevations)``: the same family, kept on disk across runs
  (``family_key``; ``planner.diskcache``, ``$TUBEPLAN_CACHE_DIR``)
- ``design_template(tube, means, rails, fanout, rules) -> Template``,
  raising ``NoTemplate``
- ``format_template(template) -> str`` (the ``tubeplan stage`` text)
- ``brent_root(f, lo, hi)`` (the 1-D solver used throughout)
- circuit values the timing model shares: ``Load``, ``ScreenFeed``, ``DIODE_DROP_VOLTS``
- registers (docs/registers.md): ``design_bistable(family, tube, wear, types) -> Bistable``
  (or ``Shortfall``), ``design_bistables`` (several types on one clock), ``flip_edges`` (with
  ``Steering`` for a register steered by its own outputs),
  ``is_dual_triode``, ``RESET_PULLUP_OHMS``
- timing: ``Wave``, ``Edge``, ``InverterTiming``, ``inverter_edge``, ``follower_edge``,
  ``WIRING_FARADS``, ``DIODE_FARADS``; corners ``TimingCorner``, ``NOMINAL_CORNER``,
  ``slow_corner(rules)``, ``ESTIMATE_TOLERANCE``

See docs/electrical.md for the circuits, the worst-case method and the
mixing rule of a family.
"""

from .bistable import (CAPACITOR_TOLERANCE, CLOCK_TOLERANCE, HOLD_FACTOR, RESET_PULLUP_OHMS, Bistable, design_bistable,
                       Steering, design_bistables, flip_edges, is_dual_triode)
from .circuit import Load, ScreenFeed
from .eseries import RESISTOR_RATINGS_WATTS, e_series, nearest_values, resistor_rating_watts, series_values
from .family import design_family
from .family_cache import cached_family, family_key
from .followers import heater_cathode_excess
from .listing import format_template
from .parts import Driver, Family, Follower, FollowerTemplate, NoTemplate, Receiver, Shortfall, Template
from .roots import brent_root
from .rules import DIODE_DROP_VOLTS, DesignRules, Rails
from .template import design_template
from .timing import (DIODE_FARADS, ESTIMATE_TOLERANCE, NOMINAL_CORNER, WIRING_FARADS, Edge, InverterTiming,
                     TimingCorner, Wave, follower_edge, inverter_edge, slow_corner)

__all__ = [
    "CAPACITOR_TOLERANCE", "CLOCK_TOLERANCE", "DIODE_DROP_VOLTS", "DIODE_FARADS", "ESTIMATE_TOLERANCE", "HOLD_FACTOR",
    "NOMINAL_CORNER", "RESET_PULLUP_OHMS", "TimingCorner", "WIRING_FARADS", "slow_corner",
    "Bistable", "Edge", "InverterTiming", "Steering", "Wave", "design_bistable", "design_bistables", "flip_edges",
    "follower_edge", "inverter_edge", "is_dual_triode",
    "DesignRules", "Driver", "Family", "Follower", "FollowerTemplate", "Load", "ScreenFeed", "NoTemplate",
    "RESISTOR_RATINGS_WATTS", "Rails", "Receiver", "Shortfall", "Template", "brent_root", "cached_family",
    "design_family", "family_key",
    "heater_cathode_excess", "design_template", "e_series", "format_template", "nearest_values",
    "resistor_rating_watts", "series_values",
]
