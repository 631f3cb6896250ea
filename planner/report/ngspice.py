"""Running ngspice in batch mode: one process for a whole deck, its output read as it comes.

The one runner of the package: ``run_deck`` (vectors through a plan's deck) and
``planner.prove`` (corner sweeps of a plan directory's deck) both run ngspice through
``run_ngspice``, and the tests through their ``ngspice`` fixture.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import tempfile
from collections.abc import Callable
from pathlib import Path

from planner.errors import ToolError

INSTALL_HINT = "install it (Debian and Ubuntu: apt-get install ngspice) or put it on PATH"
_CONTROL_ONLY = "no simulations run"


class NgspiceMissing(ToolError):
    """ngspice is not on PATH (or the executable given does not exist)."""

    def __init__(self, executable: str | None = None):
        where = f"{executable!r} is not an executable" if executable else "ngspice is not on PATH"
        super().__init__(f"tubeplan prove needs the ngspice simulator: {where}; {INSTALL_HINT}")


class NgspiceFailed(ToolError):
    """ngspice could not run a deck: ``reason`` is its first error line (or the status)."""

    def __init__(self, reason: str):
        super().__init__(reason)
        self.reason = reason


def find_ngspice(executable: str | None = None) -> str:
    """The ngspice executable: ``executable`` when given (a path or a name on PATH), else ``ngspice``.

    Raises NgspiceMissing when it cannot be found.
    """
    found = shutil.which(executable or "ngspice")
    if found is None:
        raise NgspiceMissing(executable)
    return found


def _first_error(text: str) -> str | None:
    """The first line of ngspice's output that reports an error, stripped."""
    for line in text.splitlines():
        low = line.lower()
        if "error" in low or "unknown subckt" in low:
            return line.strip()
    return None


def run_ngspice(text: str, executable: str | None = None, *, files: tuple[str, ...] = (),
                on_line: Callable[[str], None] | None = None, timeout_s: float = 3600.0) -> tuple[str, dict[str, str]]:
    """Run ``text`` with ``ngspice -b`` in a fresh temporary directory; (stdout, files it wrote).

    ``executable``: as for ``find_ngspice`` (NgspiceMissing when it cannot be
    found). ``files`` names files the deck's control block writes (``wrdata``) into
    its working directory; their text is returned by name (absent ones are
    left out). ``on_line`` sees each line of ngspice's standard output as it
    comes (for progress). Raises NgspiceFailed with ngspice's first error line
    when it exits with a failure status or reports an error (asked for
    ``files``, only when it wrote none: an error at one corner of a sweep
    leaves the others' files), and on a timeout. Cost: one ngspice process.
    """
    executable = find_ngspice(executable)
    with tempfile.TemporaryDirectory(prefix="tubeplan-ngspice-") as tmp:
        deck = Path(tmp) / "deck.cir"
        deck.write_text(text)
        errors = Path(tmp) / "stderr.txt"
        with open(errors, "w") as err:
            process = subprocess.Popen([executable, "-b", str(deck)], stdout=subprocess.PIPE, stderr=err, text=True,
                                       cwd=tmp, env={**os.environ, "LC_ALL": "C"})
            lines = []
            try:
                for line in process.stdout:
                    lines.append(line)
                    if on_line is not None:
                        on_line(line.rstrip("\n"))
                status = process.wait(timeout=timeout_s)
            except subprocess.TimeoutExpired:
                process.kill()
                process.wait()
                raise NgspiceFailed(f"ngspice did not finish within {timeout_s:.0f} s") from None
            except BaseException:
                process.kill()
                process.wait()
                raise
        out, err_text = "".join(lines), errors.read_text(errors="replace")
        written = {name: (Path(tmp) / name).read_text() for name in files if (Path(tmp) / name).is_file()}
    reason = _first_error(out + "\n" + err_text)
    # In batch mode ngspice exits 1 after a control block that ran when the netlist itself holds no
    # analysis (its note "no simulations run"); that deck ran, unless it reported an error.
    only_control = status == 1 and reason is None and _CONTROL_ONLY in err_text
    if (status != 0 and not only_control) or (reason is not None and not written):
        raise NgspiceFailed(reason or f"ngspice stopped with status {status}")
    return out, written

