"""Synthesised networks kept on disk between runs (:mod:`planner.diskcache`).

Synthesis depends only on the design's logic and the options, and its exact NAND
searches take most of a small plan's time; a builder who changes the stock or a rail
and plans again meets the same networks. :func:`cached_network` keys each network by
the whole design (every field of its inputs, signals, outputs and registers; expressions
by ``srepr``, minterm lists as given), the options, and the source text of the ``spec``, ``logic`` and
``stages`` packages (so a change of the code that made it never reads a stale one). The
caller proves the network against the design on every run, hit or miss.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

from planner.diskcache import cache_dir, key_of, remembered, source_digest

from .network import Network
from .options import SynthesisOptions
from .synthesis import synthesise


def _describe(value):
    """A hashable, exact description of a design value: dataclasses field by field (the fields
    that take part in equality, so a new field is keyed as soon as it exists), sympy
    expressions by ``srepr``, anything else by ``repr``."""
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return (type(value).__name__,) + tuple(
            (f.name, _describe(getattr(value, f.name))) for f in dataclasses.fields(value) if f.compare)
    if isinstance(value, (tuple, list)):
        return tuple(_describe(v) for v in value)
    if type(value).__module__.startswith("sympy"):
        import sympy

        return sympy.srepr(value)
    return repr(value)


def network_key(design, options: SynthesisOptions) -> str:
    """The hash naming the cache entry of ``synthesise(design, options).network``: the whole
    design (:func:`_describe`), the options and the source of the packages that synthesise."""
    packages = Path(__file__).resolve().parent.parent
    source = source_digest(packages / name for name in ("spec", "logic", "stages"))
    return key_of(source, _describe(options), _describe(design))


def cached_network(design, options: SynthesisOptions, *, directory: Path | None | str = "environment") -> Network:
    """``synthesise(design, options).network``, read from the cache when it holds it.

    ``directory``: where the cache lives (default: :func:`planner.diskcache.cache_dir`; None:
    no cache). Stored as plain fields (the network's read-only mappings do not pickle) and
    rebuilt, so a hit is equal to a fresh network.
    """
    folder = cache_dir() if directory == "environment" else (Path(directory) if directory else None)

    def fields() -> tuple:
        n = synthesise(design, options).network
        return (n.inputs, n.stages, dict(n.outputs), dict(n.forms), dict(n.signals), n.complements,
                dict(n.inverted_signals))

    inputs, stages, outputs, forms, signals, complements, inverted = remembered(
        "network", network_key(design, options), fields, folder)
    return Network(inputs, stages, outputs, forms, signals, complements, inverted)
