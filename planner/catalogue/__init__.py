"""Tube catalogue: tube data with its sources, and tube current models.

Public API:

- types: ``TubeType``, ``Section``, ``ModelParams``, ``Catalogue``,
  ``CatalogueDataError``, ``FrozenMap``
- ``builtin_catalogue() -> Catalogue``
- ``tube_type_from_mapping(name, data) -> TubeType`` (the custom-type format,
  docs/catalogue.md)
- models (one section, voltages to cathode): ``plate_current_amps``,
  ``screen_current_amps``, ``grid_current_amps``, ``cutoff_grid_volts``,
  ``g3_gate``, ``CUTOFF_AMPS``
- SPICE: ``spice_subcircuit(tube, kind_or_means) -> str``,
  ``subcircuit_name``, ``spice_nodes``
- listings (``tubeplan tubes``): ``format_catalogue(catalogue) -> str``,
  ``catalogue_document(catalogue) -> dict``, ``tube_document(tube) -> dict``
"""

from .builtin import builtin_catalogue
from .custom import tube_type_from_mapping
from .listing import catalogue_document, format_catalogue, tube_document
from .models import (
    CUTOFF_AMPS,
    cutoff_grid_volts,
    g3_gate,
    grid_current_amps,
    plate_current_amps,
    screen_current_amps,
)
from .spice import spice_nodes, spice_subcircuit, subcircuit_name
from .types import Catalogue, CatalogueDataError, FrozenMap, ModelParams, Section, TubeType

__all__ = [
    "CUTOFF_AMPS",
    "Catalogue",
    "CatalogueDataError",
    "FrozenMap",
    "ModelParams",
    "Section",
    "TubeType",
    "builtin_catalogue",
    "catalogue_document",
    "format_catalogue",
    "cutoff_grid_volts",
    "g3_gate",
    "grid_current_amps",
    "plate_current_amps",
    "screen_current_amps",
    "spice_nodes",
    "spice_subcircuit",
    "subcircuit_name",
    "tube_document",
    "tube_type_from_mapping",
]
