"""Writing a plan directory atomically, and refusing to overwrite anything but an earlier plan.

The files are built in a fresh temporary directory beside the target, then
moved into place in one step: on Linux the old plan and the new are swapped by
``renameat2(RENAME_EXCHANGE)``; elsewhere the old plan is renamed aside first
and put back if the second rename fails. A failure or an interruption before
the swap leaves the old plan as it was and removes the temporary directory.
"""

from __future__ import annotations

import ctypes
import ctypes.util
import os
import shutil
import tempfile
from collections.abc import Callable, Mapping
from pathlib import Path

from planner.catalogue import Catalogue, builtin_catalogue
from planner.mapping import Plan
from planner.spec import InputError, Stock, load_stock

from .bom import bom_csv, bom_markdown
from .content import report_content
from .document import plan_json
from .html_report import report_html
from .markdown_report import report_markdown
from .proof_section import PROVE_FILE
from .spice import spice_deck
from .wiring import wiring_csv

#: The file that marks a directory as a plan written by tubeplan (safe to replace).
MARKER = ".tubeplan-plan"
MARKER_TEXT = "This directory was written by tubeplan plan and is replaced whole by the next run.\n"

#: Every file tubeplan writes into a plan directory: ``plan`` writes all but prove.json, which ``tubeplan
#: prove`` adds (rewriting the reports' simulation section); a re-plan replaces them all.
PLAN_FILES = ("plan.json", "bom.csv", "bom.md", "wiring.csv", "plan.cir", "report.html", "report.md", PROVE_FILE)


def check_target(out_dir: Path) -> bool:
    """Whether ``out_dir`` may receive a plan: True if an earlier plan is there, False if nothing is.

    An empty directory counts as nothing there. Raises InputError(path, 0, ...)
    for a file, a symbolic link, or a directory that holds anything but no
    plan marker.
    """
    if out_dir.is_symlink():
        raise InputError(str(out_dir), 0, "the output path is a symbolic link; give a plain directory path")
    if not out_dir.exists():
        return False
    if not out_dir.is_dir():
        raise InputError(str(out_dir), 0, "the output path is an existing file, not a plan directory; "
                                          "choose another --out")
    if (out_dir / MARKER).is_file():
        return True
    if any(out_dir.iterdir()):
        raise InputError(str(out_dir), 0, f"the output directory holds files but no {MARKER} marker, so it is "
                                          "not an earlier plan and will not be replaced; choose another --out")
    return False


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
    """Move the finished directory ``new`` to ``out_dir`` (replacing an earlier plan)."""
    if not replace:
        os.rename(new, out_dir)  # POSIX rename replaces an empty directory
        return
    if _exchange(new, out_dir):
        shutil.rmtree(new)  # now holds the old plan
        return
    aside = Path(tempfile.mkdtemp(prefix=".tubeplan-old-", dir=out_dir.parent))
    aside.rmdir()
    os.rename(out_dir, aside)
    try:
        os.rename(new, out_dir)
    except BaseException:
        os.rename(aside, out_dir)
        raise
    shutil.rmtree(aside)


def write_directory(out_dir: Path, files: Mapping[str, Callable[[], str | bytes]]) -> list[Path]:
    """Write ``files`` (name -> producer of its content) as the plan directory ``out_dir``, atomically.

    Producers run inside the temporary directory's lifetime, so an exception
    in any of them leaves ``out_dir`` untouched. Returns the final paths,
    sorted, without the marker.
    """
    out_dir = Path(out_dir)
    check_target(out_dir)  # refuse early, before any work
    parent = out_dir.absolute().parent
    try:
        parent.mkdir(parents=True, exist_ok=True)
    except OSError as problem:
        raise InputError(str(parent), 0, f"cannot create the output's parent directory ({problem.strerror}); "
                                         "choose another --out") from None
    new = Path(tempfile.mkdtemp(prefix=f".{out_dir.name}.tubeplan-new-", dir=parent))
    try:
        for name in sorted(files):
            content = files[name]()
            data = content.encode("utf-8") if isinstance(content, str) else content
            with open(new / name, "wb") as handle:
                handle.write(data)
                handle.flush()
                os.fsync(handle.fileno())
        (new / MARKER).write_text(MARKER_TEXT)
        os.chmod(new, 0o755)
        replace = check_target(out_dir)  # again: the target may have changed while we wrote
        _install(new, out_dir.absolute(), replace)
    except BaseException:
        shutil.rmtree(new, ignore_errors=True)
        raise
    return [out_dir / name for name in sorted(files)]


def write_plan(plan: Plan, out_dir: Path, *, stock: Stock | None = None, stock_path: Path | None = None,
               design_path: Path | None = None, catalogue: Catalogue | None = None) -> list[Path]:
    """Write the plan's files into ``out_dir`` atomically; return their paths (sorted).

    Files: plan.json, bom.csv, bom.md, wiring.csv, plan.cir, report.html,
    report.md, plus the marker ``.tubeplan-plan``. The catalogue (for pin
    functions and SPICE models) and the unit prices come from ``stock``, else
    from the stock file at ``stock_path``, else ``catalogue`` or the built-in
    one without prices. ``design_path`` and ``stock_path`` are named in the
    reports. Refuses (InputError, exit 2) a target that is a file or a
    directory that is not an earlier plan.
    """
    check_target(Path(out_dir))
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
    files = {
        "plan.json": lambda: plan_json(plan),
        "bom.csv": lambda: bom_csv(content.bom),
        "bom.md": lambda: bom_markdown(content.bom, title=plan.design),
        "wiring.csv": lambda: wiring_csv(content.wiring),
        "plan.cir": lambda: deck.text,
        "report.html": lambda: report_html(content),
        "report.md": lambda: report_markdown(content),
    }
    return write_directory(Path(out_dir), files)
