"""Synthesised networks kept on disk between runs (:mod:`planner.diskcache`).

Synthesis depends only on the design's logic and the options, and its exact NAND
searches take most of a small plan's time; a builder who changes the stock or a rail
and plans again meets the same networks. :func:`cached_network` keys each network by
the whole design (every field of its inputs, signals, outputs and registers; expressions
by their canonical text, minterm lists as given), the options, and the source text of the ``spec``,
``logic`` and ``stages`` packages and ``planner/formula.py`` (so a change of the code that made it
never reads a stale one). The
caller proves the network against the design on every run, hit or miss.

:func:`cached_multilevel` does the same for the multi-level networks
(:func:`planner.stages.multilevel`, five or so runs of the ABC engine per plan), keyed
besides by the section and diode costs, the genlib library text and scripts handed to
the engine and the engine binary's identity (its path, size and modification time).
"""

from __future__ import annotations

import dataclasses
import os
from pathlib import Path
from types import MappingProxyType

from planner.diskcache import cache_dir, key_of, remembered, source_digest

from .engine import COLLAPSE_MAX_INPUTS, COLLAPSE_SCRIPTS, ENGINE_SCRIPTS, MultiLevel, engine_binary, genlib_text
from .engine import multilevel, stage_library
from .network import Network
from .options import SynthesisOptions
from .synthesis import synthesise


def _describe(value):
    """A hashable, exact description of a design value: dataclasses field by field (the fields
    that take part in equality, so a new field is keyed as soon as it exists; a formula by
    its canonical text), anything else by ``repr``."""
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return (type(value).__name__,) + tuple(
            (f.name, _describe(getattr(value, f.name))) for f in dataclasses.fields(value) if f.compare)
    if isinstance(value, (tuple, list)):
        return tuple(_describe(v) for v in value)
    return repr(value)


def _synthesis_source() -> str:
    """The digest of the code that decides a network: the packages ``spec``, ``logic`` and ``stages``
    and the formula type they share (``planner/formula.py``)."""
    packages = Path(__file__).resolve().parent.parent
    return source_digest(packages / name for name in ("spec", "logic", "stages", "formula.py"))


def network_key(design, options: SynthesisOptions) -> str:
    """The hash naming the cache entry of ``synthesise(design, options).network``: the whole
    design (:func:`_describe`), the options and the source of the packages that synthesise."""
    return key_of(_synthesis_source(), _describe(options), _describe(design))


def _folder(directory) -> Path | None:
    return cache_dir() if directory == "environment" else (Path(directory) if directory else None)


def _fields(n: Network) -> tuple:
    """A network as plain picklable fields (its read-only mappings do not pickle)."""
    return (n.inputs, n.stages, dict(n.outputs), dict(n.forms), dict(n.signals), n.complements,
            dict(n.inverted_signals))


def cached_network(design, options: SynthesisOptions, *, directory: Path | None | str = "environment") -> Network:
    """``synthesise(design, options).network``, read from the cache when it holds it.

    ``directory``: where the cache lives (default: :func:`planner.diskcache.cache_dir`; None:
    no cache). Stored as plain fields (the network's read-only mappings do not pickle) and
    rebuilt, so a hit is equal to a fresh network.
    """
    inputs, stages, outputs, forms, signals, complements, inverted = remembered(
        "network", network_key(design, options), lambda: _fields(synthesise(design, options).network),
        _folder(directory))
    return Network(inputs, stages, outputs, forms, signals, complements, inverted)


def engine_identity() -> tuple:
    """The engine binary as a cache key sees it: its real path, size and modification time (a new
    or reinstalled engine names other entries; hashing its 25 MB on every plan would cost more)."""
    path = os.path.realpath(engine_binary())
    status = os.stat(path)
    return path, status.st_size, status.st_mtime_ns


def multilevel_key(design, options: SynthesisOptions, section_cost=None, diode_cost: float = 0.0,
                   stage_cost: float = 0.0) -> str:
    """The hash naming the cache entry of ``multilevel(design, options, section_cost, diode_cost, stage_cost)``:
    what :func:`network_key` covers, the costs, the genlib text and scripts the engine is given and
    the engine's identity (:func:`engine_identity`)."""
    genlib = genlib_text(stage_library(options, section_cost, diode_cost, stage_cost))
    scripts = ENGINE_SCRIPTS + (COLLAPSE_SCRIPTS if len(design.input_names) <= COLLAPSE_MAX_INPUTS else ())
    costs = tuple(sorted((section_cost or {}).items()))
    return key_of(_synthesis_source(), engine_identity(), genlib, scripts, costs, repr(diode_cost), repr(stage_cost),
                  _describe(options), _describe(design))


def cached_multilevel(design, options: SynthesisOptions, section_cost=None, diode_cost: float = 0.0,
                      stage_cost: float = 0.0, *, directory: Path | None | str = "environment") -> MultiLevel:
    """``multilevel(design, options, section_cost, diode_cost, stage_cost)`` (default scripts and time
    limit), read from the cache when it holds it; equal to a fresh one.

    Only results are kept: an :class:`planner.stages.EngineError` (engine missing, failed, out of
    time) is raised again on every run.  ``directory`` as for :func:`cached_network`.
    """
    def fields() -> tuple:
        found = multilevel(design, options, section_cost, diode_cost, stage_cost)
        return _fields(found.network), found.script, found.area, dict(found.areas)

    folder = _folder(directory)
    key = multilevel_key(design, options, section_cost, diode_cost, stage_cost) if folder else ""
    network, script, area, areas = remembered("multilevel", key, fields, folder)
    return MultiLevel(Network(*network), script, area, MappingProxyType(areas))
