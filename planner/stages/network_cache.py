"""Synthesised networks kept on disk between runs (:mod:`planner.diskcache`).

Synthesis depends only on the design's logic and the options, and its exact NAND
searches take most of a small plan's time; a builder who changes the stock or a rail
and plans again meets the same networks. :func:`cached_network` keys each network by
every input, signal, output and register of the design (expressions by ``srepr``,
minterm lists as given), the options, and the source text of the ``spec``, ``logic`` and
``stages`` packages (so a change of the code that made it never reads a stale one). The
caller proves the network against the design on every run, hit or miss.
"""

from __future__ import annotations

from pathlib import Path

from planner.diskcache import cache_dir, key_of, remembered, source_digest

from .network import Network
from .options import SynthesisOptions
from .synthesis import synthesise


def _expr(expr) -> str | None:
    if expr is None:
        return None
    import sympy

    return sympy.srepr(expr)


def network_key(design, options: SynthesisOptions) -> str:
    """The hash naming the cache entry of ``synthesise(design, options).network``."""
    packages = Path(__file__).resolve().parent.parent
    source = source_digest(packages / name for name in ("spec", "logic", "stages"))
    return key_of(
        source, options,
        tuple((spec.name, spec.complement) for spec in design.inputs),
        tuple((s.name, _expr(s.expr)) for s in design.signals),
        tuple((o.name, _expr(o.given_expr), _expr(o.given_dont_care), o.over, o.minterms, o.dont_care_minterms)
              for o in design.outputs),
        tuple((r.name, _expr(r.next), r.reset) for r in design.registers))


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
