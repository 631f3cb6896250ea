"""Results kept on disk between runs: files named by a hash of everything they depend on.

Used for work that depends only on its inputs and takes long: the logic family
(``planner.electrical.cached_family``) and the synthesised networks, two-level and
multi-level (``planner.stages.cached_network``, ``planner.stages.cached_multilevel``). Each
entry is one file ``KIND-SHA256.pickle`` holding its own key beside the value; the key
hashes the inputs and the source text of the packages that compute the value, so a changed
input or line of code names another file and a stale entry is never read. The directory is
safe to delete. Entries are written whole (a temporary file renamed into place); one that
cannot be read, or records another key, is ignored and computed again, and a failure to
write only costs the next run the work.

The same directory holds ``templates/``, jinja2's cache of the report's compiled templates
(``planner.report``; jinja2's own format and keys).

Where: ``$TUBEPLAN_CACHE_DIR`` when set (empty: no cache at all); else
``$XDG_CACHE_HOME/tubeplan``; else ``~/.cache/tubeplan``.
"""

from __future__ import annotations

import hashlib
import os
import pickle
import tempfile
from collections.abc import Callable, Iterable
from pathlib import Path
from typing import TypeVar

T = TypeVar("T")

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


def source_digest(packages: Iterable[Path]) -> str:
    """SHA-256 of the ``*.py`` files (and data files ``*.json``) of the package directories given,
    and of any single module file given."""
    digest = hashlib.sha256()
    for package in packages:
        files = [package] if package.is_file() else list(package.glob("*.py")) + list(package.glob("*.json"))
        for path in sorted(files):
            digest.update(path.name.encode())
            digest.update(path.read_bytes())
    return digest.hexdigest()


def key_of(*parts) -> str:
    """SHA-256 of the ``repr`` of ``parts`` (floats by ``repr`` round-trip exactly)."""
    return hashlib.sha256(repr((CACHE_FORMAT,) + parts).encode()).hexdigest()


def remembered(kind: str, key: str, compute: Callable[[], T], directory: Path | None) -> T:
    """The value stored under ``kind`` and ``key`` in ``directory``, else ``compute()``, stored.

    ``directory`` None: no cache, ``compute()`` every time.
    """
    if directory is None:
        return compute()
    path = directory / f"{kind}-{key}.pickle"
    try:
        with open(path, "rb") as handle:
            stored_key, value = pickle.load(handle)
        if stored_key == key:
            return value
    except Exception:  # absent, unreadable or corrupt: compute it again  # noqa: BLE001
        pass
    value = compute()
    _store(directory, path, (key, value))
    return value


def _store(directory: Path, path: Path, entry) -> None:
    """Write ``entry`` to ``path`` whole or not at all (temporary file, then rename)."""
    try:
        directory.mkdir(parents=True, exist_ok=True)
        handle, temporary = tempfile.mkstemp(prefix=f".{path.stem}-", dir=directory)
        try:
            with os.fdopen(handle, "wb") as out:
                pickle.dump(entry, out, protocol=pickle.HIGHEST_PROTOCOL)
            os.replace(temporary, path)
        except BaseException:
            os.unlink(temporary)
            raise
    except OSError:
        pass
