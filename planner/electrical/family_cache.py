"""The logic family, designed once and kept on disk for later runs.

A family depends only on the rails, the tube types (their catalogue data and
condition) and the design rules, yet designing one takes seconds
(:func:`planner.electrical.family.search_levels`). :func:`cached_family`
keeps each family in a file named by a SHA-256 hash of everything it depends
on: those inputs, every value of each type's catalogue entry, and the source
text of the ``electrical`` and ``catalogue`` packages, so a changed tube value,
rule or line of design code names a different file and the stale one is never
read. The directory is safe to delete. Files are written whole (a temporary file
renamed into place); an entry that cannot be read, or whose recorded key differs,
is ignored and designed afresh. A cached family is the very object a fresh design
gives (pickled floats round-trip exactly), so plans are byte-identical either way.

Where: ``$TUBEPLAN_CACHE_DIR`` when set (empty: no cache at all); else
``$XDG_CACHE_HOME/tubeplan``; else ``~/.cache/tubeplan``.
"""

from __future__ import annotations

import hashlib
import os
import pickle
import tempfile
from collections.abc import Sequence
from pathlib import Path

import planner.catalogue
from planner.catalogue.types import TubeType

from .family import design_family
from .parts import Family
from .rules import DesignRules, Rails

#: Bumped when the file layout changes.
CACHE_FORMAT = 1
CACHE_ENV = "TUBEPLAN_CACHE_DIR"


def cache_dir() -> Path | None:
    """The cache directory from the environment (see the module docstring); None: no cache."""
    chosen = os.environ.get(CACHE_ENV)
    if chosen is not None:
        return Path(chosen) if chosen else None
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return Path(base) / "tubeplan"


def _source_digest() -> str:
    """SHA-256 of the source files of the electrical and catalogue packages, in path order."""
    digest = hashlib.sha256()
    for package in (Path(__file__).parent, Path(planner.catalogue.__file__).parent):
        for path in sorted(package.glob("*.py")):
            digest.update(path.name.encode())
            digest.update(path.read_bytes())
    return digest.hexdigest()


def family_key(rails: Rails, tubes: Sequence[tuple[TubeType, float]], rules: DesignRules) -> str:
    """The hash naming the cache entry of :func:`design_family` for these inputs.

    Types enter by their full catalogue record (``repr`` of the frozen dataclass:
    every value, model parameter and pin) with their condition, in name order as
    :func:`design_family` takes them; floats by ``repr``, which round-trips exactly.
    """
    wear: dict[str, float] = {}
    types: dict[str, TubeType] = {}
    for tube, condition in tubes:
        wear[tube.name] = min(condition, wear.get(tube.name, condition))
        types[tube.name] = tube
    text = repr((CACHE_FORMAT, _source_digest(), rails, rules,
                 [(repr(types[name]), wear[name]) for name in sorted(types)]))
    return hashlib.sha256(text.encode()).hexdigest()


def cached_family(rails: Rails, tubes: Sequence[tuple[TubeType, float]], rules: DesignRules = DesignRules(),
                  *, directory: Path | None | str = "environment") -> Family:
    """:func:`design_family`, read from the cache when an entry for these inputs exists.

    ``directory``: where the cache lives (default: :func:`cache_dir`; None: no
    cache). A miss designs the family and stores it; a failure to store it (a
    read-only disk) only costs the next run the same work.
    """
    folder = cache_dir() if directory == "environment" else (Path(directory) if directory else None)
    if folder is None:
        return design_family(rails, tubes, rules)
    key = family_key(rails, tubes, rules)
    path = folder / f"family-{key}.pickle"
    try:
        with open(path, "rb") as handle:
            stored_key, family = pickle.load(handle)
        if stored_key == key and isinstance(family, Family):
            return family
    except Exception:  # absent, unreadable or corrupt: design it again  # noqa: BLE001
        pass
    family = design_family(rails, tubes, rules)
    _store(folder, path, (key, family))
    return family


def _store(folder: Path, path: Path, entry) -> None:
    """Write ``entry`` to ``path`` whole or not at all (temporary file, then rename)."""
    try:
        folder.mkdir(parents=True, exist_ok=True)
        handle, temporary = tempfile.mkstemp(prefix=".family-", dir=folder)
        try:
            with os.fdopen(handle, "wb") as out:
                pickle.dump(entry, out, protocol=pickle.HIGHEST_PROTOCOL)
            os.replace(temporary, path)
        except BaseException:
            os.unlink(temporary)
            raise
    except OSError:
        pass
