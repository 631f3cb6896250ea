"""Writing a plan directory atomically; a re-plan replaces only the files tubeplan wrote.

The plan directory is the tool's own only in part: its marker lists the files
the run wrote, and the next run replaces exactly those. Anything else in the
directory (a design file, build notes, photos) is kept: hard-linked (or copied
where links fail) into the new directory before it is moved into place, so the
move stays one step. A file of the user's whose name the new plan writes is
refused, and so is a design or stock file among the files that would be
replaced.

The files are built in a fresh temporary directory beside the target, then
moved into place in one step: on Linux the old plan and the new are swapped by
``renameat2(RENAME_EXCHANGE)``; elsewhere the old plan is renamed aside first
and put back if the second rename fails. A failure or an interruption before
the swap leaves the old plan as it was and removes the temporary directory.
"""

from __future__ import annotations

import ctypes
import ctypes.util
import errno
import os
import shutil
import stat
import tempfile
from collections.abc import Callable, Iterable, Mapping
from pathlib import Path

from planner.catalogue import Catalogue, builtin_catalogue
from planner.mapping import Plan
from planner.spec import InputError, Stock, load_stock

from .bom import bom_csv, bom_markdown
from .content import report_content
from .document import input_file, plan_json
from .html_report import report_html
from .markdown_report import report_markdown
from .spice import spice_deck
from .wiring import wiring_csv

#: The file that marks a directory as a plan written by tubeplan, and lists the files it wrote.
MARKER = ".tubeplan-plan"
MARKER_TEXT = ("This directory holds a plan written by tubeplan plan. The next run replaces the files\n"
               "listed below (and this marker) and keeps everything else.\n")
_FILES_HEADING = "files:"
#: The files write_plan writes.
PLAN_FILES = ("bom.csv", "bom.md", "plan.cir", "plan.json", "report.html", "report.md", "wiring.csv")

#: Errors of the output path the user can fix (permissions, read-only or full file system): exit 2.
_USER_ERRNOS = frozenset({errno.EACCES, errno.EPERM, errno.EROFS, errno.ENOSPC, errno.EDQUOT, errno.ENAMETOOLONG,
                          errno.ENOTDIR, errno.ELOOP})


def _marker_text(names: Iterable[str]) -> str:
    return MARKER_TEXT + _FILES_HEADING + "\n" + "".join(f"{name}\n" for name in sorted(names))


def _written_by_tool(out_dir: Path, default: Iterable[str]) -> frozenset[str]:
    """The files an earlier plan in ``out_dir`` wrote, read from its marker (with the marker itself).

    A marker of an older version lists no files; then the files of the new
    plan (``default``) are taken as the tool's, which is what that version wrote.
    """
    lines = (out_dir / MARKER).read_text(encoding="utf-8", errors="replace").splitlines()
    if _FILES_HEADING in lines:
        listed = lines[lines.index(_FILES_HEADING) + 1:]
    else:
        listed = list(default)
    return frozenset(name for name in listed if name and "/" not in name and name not in (".", "..")) | {MARKER}


def check_target(out_dir: Path, files: Iterable[str] = (), protect: Iterable[Path] = ()) -> bool:
    """Whether ``out_dir`` may receive a plan: True if an earlier plan is there, False if nothing is.

    An empty directory counts as nothing there. Raises InputError(path, 0, ...)
    for a file, a symbolic link, a directory that holds anything but no plan
    marker, a directory or parent the user may not write, a file of the user's
    in an earlier plan whose name the new plan writes (``files``), and a
    ``protect``-ed path (the design and stock files) among the files a re-plan
    would replace.
    """
    try:
        return _check_target(Path(out_dir), files, protect)
    except OSError as problem:  # a name too long, a file where a directory should be, ...
        raise _user_error(Path(out_dir), problem) from None


def _check_target(out_dir: Path, files: Iterable[str], protect: Iterable[Path]) -> bool:
    if out_dir.is_symlink():
        raise InputError(str(out_dir), 0, "the output path is a symbolic link; give a plain directory path")
    if not out_dir.exists():
        _check_writable(_existing_ancestor(out_dir.absolute().parent), "the output directory's parent")
        return False
    if not out_dir.is_dir():
        raise InputError(str(out_dir), 0, "the output path is an existing file, not a plan directory; "
                                          "choose another --out")
    _check_writable(out_dir.absolute().parent, "the output directory's parent")
    if not (out_dir / MARKER).is_file():
        if any(out_dir.iterdir()):
            raise InputError(str(out_dir), 0, f"the output directory holds files but no {MARKER} marker, so it "
                                              "is not an earlier plan and will not be replaced; choose another --out")
        return False
    _check_writable(out_dir, "the output directory")
    files = frozenset(files)
    tools = _written_by_tool(out_dir, files)
    for name in sorted(files):
        if os.path.lexists(out_dir / name) and not _is_tool_file(out_dir / name, tools):
            raise InputError(str(out_dir / name), 0, "this file was not written by tubeplan, and the new plan "
                                                     "writes a file of that name; move or rename it, or choose "
                                                     "another --out")
    replaced = tools | files
    home = out_dir.resolve()
    for path in protect:
        resolved = Path(path).resolve()
        if resolved.parent == home and resolved.name in replaced:
            raise InputError(str(path), 0, f"this input file would be replaced by the plan's own {resolved.name}; "
                                           "move it out of the plan directory or choose another --out")
    return True


def _is_tool_file(entry: Path, tools: frozenset[str]) -> bool:
    """Whether ``entry`` of an earlier plan is one of the files tubeplan wrote (it writes no directories)."""
    return entry.name in tools and (entry.is_symlink() or not entry.is_dir())


def _existing_ancestor(path: Path) -> Path:
    while not path.exists() and path != path.parent:
        path = path.parent
    return path


def _check_writable(directory: Path, what: str) -> None:
    if directory.is_dir() and not os.access(directory, os.W_OK | os.X_OK):
        raise InputError(str(directory), 0, f"{what} cannot be written (permission denied or a read-only file "
                                            "system); choose another --out")


def claim_files(out_dir: Path, names: Iterable[str]) -> None:
    """List ``names`` in the plan marker of ``out_dir`` as files tubeplan wrote, so a re-plan replaces them.

    For a command that adds files to a plan directory after the plan
    (``tubeplan prove`` adds prove.json). Refuses (InputError) a directory
    without the marker and a name that is already there as a file of the
    user's (not listed). The marker is rewritten whole by a rename.
    """
    out_dir = Path(out_dir)
    marker = out_dir / MARKER
    if not marker.is_file():
        raise InputError(str(out_dir), 0, f"has no {MARKER} marker, so it is not a plan directory tubeplan "
                                          "wrote; give the --out directory of tubeplan plan")
    tools = _written_by_tool(out_dir, PLAN_FILES)
    for name in sorted(names):
        if name not in tools and (out_dir / name).exists():
            raise InputError(str(out_dir / name), 0, "is a file of yours (the plan marker does not list it), so it "
                                                     "will not be overwritten; move it away and run again")
    listed = sorted((tools - {MARKER}) | set(names))
    handle, temporary = tempfile.mkstemp(prefix=f"{MARKER}.", dir=out_dir)
    try:
        with os.fdopen(handle, "w", encoding="utf-8") as out:
            out.write(_marker_text(listed))
        os.chmod(temporary, 0o644)
        os.replace(temporary, marker)
    except BaseException:
        Path(temporary).unlink(missing_ok=True)
        raise


def kept_files(out_dir: Path, files: Iterable[str] = ()) -> list[str]:
    """Names in an earlier plan ``out_dir`` that a re-plan keeps (not written by tubeplan), sorted."""
    out_dir = Path(out_dir)
    if not (out_dir / MARKER).is_file():
        return []
    tools = _written_by_tool(out_dir, files)
    return sorted(entry.name for entry in out_dir.iterdir() if not _is_tool_file(entry, tools))


def _mirror(source: Path, target: Path) -> None:
    """Reproduce ``source`` at ``target`` without touching it: files hard-linked (copied where links fail)."""
    mode = os.lstat(source).st_mode
    if stat.S_ISLNK(mode):
        os.symlink(os.readlink(source), target)
    elif stat.S_ISDIR(mode):
        os.mkdir(target)
        for entry in sorted(os.listdir(source)):
            _mirror(source / entry, target / entry)
        shutil.copystat(source, target)
    elif stat.S_ISREG(mode):
        try:
            os.link(source, target)
        except OSError:  # another file system, or links not allowed: a copy keeps the bytes
            shutil.copy2(source, target)
    else:
        raise InputError(str(source), 0, "a special file (device, pipe or socket) in the plan directory cannot "
                                         "be kept across a re-plan; move it out or choose another --out")


def _same(old: Path, new: Path) -> bool:
    """Whether ``new`` (mirrored before the swap) still holds all of ``old``, so ``old`` may go."""
    try:
        old_mode, new_mode = os.lstat(old).st_mode, os.lstat(new).st_mode
    except FileNotFoundError:
        return False
    if stat.S_ISLNK(old_mode):
        return stat.S_ISLNK(new_mode) and os.readlink(old) == os.readlink(new)
    if stat.S_ISREG(old_mode):
        if not stat.S_ISREG(new_mode):
            return False
        if os.path.samefile(old, new):
            return True
        return old.read_bytes() == new.read_bytes()
    return False


def _drop_mirrored(old: Path, new: Path) -> None:
    """Remove from ``old`` what ``new`` holds as well; anything changed since the mirror stays."""
    if os.path.isdir(old) and not os.path.islink(old):
        for entry in sorted(os.listdir(old)):
            _drop_mirrored(old / entry, new / entry)
        if not os.listdir(old):
            os.rmdir(old)
    elif _same(old, new):
        os.unlink(old)


def _retire(old: Path, out_dir: Path, tools: frozenset[str]) -> Path | None:
    """Remove the earlier plan ``old`` (moved out of ``out_dir`` by the swap), losing nothing of the user's.

    Its tool files go; the user's entries, mirrored into the new plan, go where
    the new plan holds them unchanged. What remains (written in the moment
    between mirror and swap, or not removable) is kept beside the plan under a
    visible name, which is returned.
    """
    for name in sorted(os.listdir(old)):
        entry = old / name
        try:
            if _is_tool_file(entry, tools):
                os.unlink(entry)
            else:
                _drop_mirrored(entry, out_dir / name)
        except OSError:
            pass  # kept below
    if not os.listdir(old):
        os.rmdir(old)
        return None
    kept = Path(tempfile.mkdtemp(prefix=f"{out_dir.name}.tubeplan-kept-", dir=out_dir.parent))
    os.rename(old, kept)
    return kept


def _exchange(first: Path, second: Path) -> bool:
    """Swap two paths atomically with Linux renameat2(RENAME_EXCHANGE); False where unsupported."""
    libc_name = ctypes.util.find_library("c")
    if libc_name is None:
        return False
    libc = ctypes.CDLL(libc_name, use_errno=True)
    renameat2 = getattr(libc, "renameat2", None)
    if renameat2 is None:
        return False
    at_fdcwd, rename_exchange = -100, 2
    status = renameat2(at_fdcwd, os.fsencode(first), at_fdcwd, os.fsencode(second), rename_exchange)
    if status == 0:
        return True
    errno = ctypes.get_errno()
    if errno in (22, 38, 95):  # EINVAL, ENOSYS, EOPNOTSUPP: the file system or kernel cannot swap
        return False
    raise OSError(errno, os.strerror(errno), str(second))


def _install(new: Path, out_dir: Path, replace: bool) -> None:
    """Move the finished directory ``new`` to ``out_dir``, replacing an earlier plan; ``new`` then holds it."""
    if not replace:
        os.rename(new, out_dir)  # POSIX rename replaces an empty directory
        return
    if _exchange(new, out_dir):
        return
    aside = Path(tempfile.mkdtemp(prefix=".tubeplan-old-", dir=out_dir.parent))
    aside.rmdir()
    os.rename(out_dir, aside)
    try:
        os.rename(new, out_dir)
    except BaseException:
        os.rename(aside, out_dir)
        raise
    os.rename(aside, new)


def write_directory(out_dir: Path, files: Mapping[str, Callable[[], str | bytes]], *,
                    protect: Iterable[Path] = (), notify: Callable[[str], None] | None = None) -> list[Path]:
    """Write ``files`` (name -> producer of its content) as the plan directory ``out_dir``, atomically.

    Producers run inside the temporary directory's lifetime, so an exception
    in any of them leaves ``out_dir`` untouched. An earlier plan's own files
    are replaced; everything else in it is kept, and ``notify`` (if given) is
    told which in one line. ``protect`` names the input files, which are never
    among the files replaced (see check_target). Returns the final paths,
    sorted, without the marker.

    Cost: one pass over the earlier plan's entries (hard links, not copies).
    """
    out_dir = Path(out_dir)
    check_target(out_dir, files, protect)  # refuse early, before any work
    parent = out_dir.absolute().parent
    try:
        try:
            parent.mkdir(parents=True, exist_ok=True)
        except OSError as problem:
            raise InputError(str(parent), 0, f"cannot create the output's parent directory ({problem.strerror}); "
                                             "choose another --out") from None
        new = Path(tempfile.mkdtemp(prefix=f".{out_dir.name}.tubeplan-new-", dir=parent))
    except OSError as problem:
        raise _user_error(out_dir, problem) from None
    kept: list[str] = []
    try:
        for name in sorted(files):
            content = files[name]()
            data = content.encode("utf-8") if isinstance(content, str) else content
            with open(new / name, "wb") as handle:
                handle.write(data)
                handle.flush()
                os.fsync(handle.fileno())
        (new / MARKER).write_text(_marker_text(files), encoding="utf-8")
        replace = check_target(out_dir, files, protect)  # again: the target may have changed while we wrote
        tools = _written_by_tool(out_dir, files) if replace else frozenset()
        if replace:
            kept = kept_files(out_dir, files)
            for name in kept:
                _mirror(out_dir / name, new / name)
        os.chmod(new, 0o755)
        _install(new, out_dir.absolute(), replace)
    except OSError as problem:
        shutil.rmtree(new, ignore_errors=True)
        if problem.errno in _USER_ERRNOS:
            raise _user_error(out_dir, problem) from None
        raise
    except BaseException:
        shutil.rmtree(new, ignore_errors=True)
        raise
    leftover = _retire(new, out_dir.absolute(), tools) if replace else None  # ``new`` holds the earlier plan
    if notify is not None and kept:
        notify(f"kept your files in {out_dir}: {', '.join(kept)} (a re-plan replaces only the files "
               f"tubeplan wrote, listed in {MARKER})")
    if notify is not None and leftover is not None:
        notify(f"what changed in {out_dir} while the plan was being replaced is kept in {leftover}")
    return [out_dir / name for name in sorted(files)]


def _user_error(out_dir: Path, problem: OSError) -> InputError:
    where = problem.filename or out_dir
    return InputError(str(where), 0, f"cannot write the plan here ({problem.strerror or problem}); "
                                     "choose another --out")


def write_plan(plan: Plan, out_dir: Path, *, stock: Stock | None = None, stock_path: Path | None = None,
               design_path: Path | None = None, catalogue: Catalogue | None = None,
               notify: Callable[[str], None] | None = None) -> list[Path]:
    """Write the plan's files into ``out_dir`` atomically; return their paths (sorted).

    Files: plan.json, bom.csv, bom.md, wiring.csv, plan.cir, report.html,
    report.md, plus the marker ``.tubeplan-plan``. The catalogue (for pin
    functions and SPICE models) and the unit prices come from ``stock``, else
    from the stock file at ``stock_path``, else ``catalogue`` or the built-in
    one without prices. ``design_path`` and ``stock_path`` are named in the
    reports and are never among the files replaced. Refuses (InputError,
    exit 2) a target that is a file or a directory that is not an earlier
    plan. In an earlier plan, only its own files are replaced; ``notify`` is
    told what else was kept (see write_directory).
    """
    protect = tuple(Path(p) for p in (design_path, stock_path) if p is not None)
    check_target(Path(out_dir), PLAN_FILES, protect)
    if stock is None and stock_path is not None:
        stock = load_stock(stock_path)
    if stock is not None:
        catalogue = stock.catalogue
        prices = dict(stock.prices)
        tube_prices = {t.tube: t.unit_price for t in stock.tubes if t.unit_price is not None}
    else:
        catalogue = catalogue or builtin_catalogue()
        prices, tube_prices = {}, {}
    content = report_content(plan, catalogue, prices=prices, tube_prices=tube_prices,
                             design_path=None if design_path is None else str(design_path),
                             stock_path=None if stock_path is None else str(stock_path))
    deck = spice_deck(plan, catalogue)
    inputs = [input_file(role, Path(path)) for role, path in (("design", design_path), ("stock", stock_path))
              if path is not None]
    files = {
        "plan.json": lambda: plan_json(plan, inputs),
        "bom.csv": lambda: bom_csv(content.bom),
        "bom.md": lambda: bom_markdown(content.bom, title=plan.design),
        "wiring.csv": lambda: wiring_csv(content.wiring),
        "plan.cir": lambda: deck.text,
        "report.html": lambda: report_html(content),
        "report.md": lambda: report_markdown(content),
    }
    return write_directory(Path(out_dir), files, protect=protect, notify=notify)
