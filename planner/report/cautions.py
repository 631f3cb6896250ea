"""Safety cautions carried by every human-facing output of a plan.

Plain words, our own; the figures in a plan are planning estimates, never a
safety approval.
"""

from __future__ import annotations

#: (heading, text) pairs, in the order every report shows them.
CAUTIONS: tuple[tuple[str, str], ...] = (
    ("High voltage can kill",
     "Tube plate supplies run at one to several hundred volts DC, enough to stop a heart. "
     "Never work on the circuit with the supply on; keep one hand away from the chassis when you "
     "measure; use insulated probes rated for the voltage."),
    ("Stored charge",
     "Filter and reservoir capacitors keep their charge long after switch-off. Discharge them "
     "through a suitable resistor and measure that they are at zero before you touch any wiring."),
    ("Heater currents",
     "Heater windings carry several amperes, and more at switch-on while the filaments are cold. "
     "Size wire, fuses and switches for the cold-start surge given with the heater budget, and fuse every winding. "
     "A winding elevated to a DC voltage (to keep cathode followers within their heater-cathode rating) "
     "sits at that voltage: the heater transformer's insulation and all heater wiring must be rated for it."),
    ("Hot glass",
     "Tube envelopes and power resistors run hot enough to burn skin and to char nearby "
     "insulation. Leave air around them and let them cool before handling."),
    ("Codes and licensed practice",
     "This plan is a design aid, not a safety approval. Build, earth and test mains-powered "
     "equipment to your local electrical codes, and have the work checked by someone licensed "
     "to do so where that is required."),
)

