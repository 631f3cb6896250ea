"""Tube catalogue: tube data with its sources, and tube current models.

Public API:

- types: ``TubeType``, ``Section``, ``ModelParams``, ``Catalogue``,
  ``CatalogueDataError``, ``FrozenMap``
- ``builtin_catalogue() -> Catalogue``
- ``tube_type_from_mapping(name, data) -> TubeType`` (the custom-type format,
  docs/catalogue.md)
- models (one section, voltages to cathode): ``plate_current_amps``,
  ``screen_current_amps``, ``grid_current_amps``, ``cutoff_grid_volts``,
  ``CUTOFF_AMPS``
"""

from .builtin import builtin_catalogue
from .custom import tube_type_from_mapping
from .models import (
    CUTOFF_AMPS,
    cutoff_grid_volts,
    grid_current_amps,
    plate_current_amps,
    screen_current_amps,
)
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
    "cutoff_grid_volts",
    "grid_current_amps",
    "plate_current_amps",
    "screen_current_amps",
    "tube_type_from_mapping",
]
