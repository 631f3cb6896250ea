"""The logic family, designed once and kept on disk for later runs (:mod:`planner.diskcache`).

A family depends only on the rails, the tube types (their catalogue data and
condition), the design rules and the heater windings' elevations, yet designing one takes seconds
(:func:`planner.electrical.family.search_levels`). :func:`cached_family` keys it by
those inputs, every value of each type's catalogue entry, and the source text of the
``electrical`` and ``catalogue`` packages, so a changed tube value, rule or line of
design code never reads a stale entry. A cached family is the very object a fresh
design gives (pickled floats round-trip exactly), so plans are byte-identical either way.
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

import planner.catalogue
from planner.catalogue import TubeType
from planner.diskcache import cache_dir, key_of, remembered, source_digest

from .family import design_family
from .parts import Family
from .rules import DesignRules, Rails


def family_key(rails: Rails, tubes: Sequence[tuple[TubeType, float]], rules: DesignRules,
               elevations: Sequence[float] = (0.0,)) -> str:
    """The hash naming the cache entry of :func:`design_family` for these inputs.

    Types enter by their full catalogue record (``repr`` of the frozen dataclass:
    every value, model parameter and pin) with their condition, in name order as
    :func:`design_family` takes them; heater elevations as the set it uses.
    """
    wear: dict[str, float] = {}
    types: dict[str, TubeType] = {}
    for tube, condition in tubes:
        wear[tube.name] = min(condition, wear.get(tube.name, condition))
        types[tube.name] = tube
    source = source_digest((Path(__file__).parent, Path(planner.catalogue.__file__).parent))
    refs = tuple(sorted({float(e) for e in elevations})) or (0.0,)
    return key_of(source, rails, rules, refs, [(repr(types[name]), wear[name]) for name in sorted(types)])


def cached_family(rails: Rails, tubes: Sequence[tuple[TubeType, float]], rules: DesignRules = DesignRules(),
                  elevations: Sequence[float] = (0.0,), *, directory: Path | None | str = "environment") -> Family:
    """:func:`design_family`, read from the cache when an entry for these inputs exists.

    ``directory``: where the cache lives (default: :func:`planner.diskcache.cache_dir`;
    None: no cache).
    """
    folder = cache_dir() if directory == "environment" else (Path(directory) if directory else None)
    return remembered("family", family_key(rails, tubes, rules, elevations),
                      lambda: design_family(rails, tubes, rules, elevations), folder)
