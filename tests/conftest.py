"""Shared test helpers. Files written here are test fixtures (invented data)."""

from __future__ import annotations

import re
import shutil
import textwrap
from dataclasses import dataclass

import pytest

from planner import cli
from planner.report import find_ngspice, run_ngspice

# Invented data: a minimal valid stock file used by many tests.
GOOD_STOCK = """\
supplies:
  plate: {volts: 225, max_ma: 200}
  bias: {volts: -95, max_ma: 50}
  heater:
    - {id: H1, volts: 6.3, max_amps: 5}
tubes:
  12AU7: {count: 4}
"""

# Invented data: a minimal valid design file.
GOOD_DESIGN = """\
design: tiny
inputs: [a, b]
outputs:
  y: a & ~b
"""


@pytest.fixture(autouse=True, scope="session")
def family_cache_in_tmp(tmp_path_factory):
    """The logic-family cache of every test (and the commands they start) lives in a temporary
    directory, shared by the session, never in the user's own cache."""
    with pytest.MonkeyPatch.context() as patch:
        patch.setenv("TUBEPLAN_CACHE_DIR", str(tmp_path_factory.mktemp("family-cache")))
        yield


# Invented fixture: a small design and a stock that carries it.
SMALL_DESIGN = """\
design: small
inputs: [a, b, c]
outputs:
  y: a & b | ~c
  z: ~(a | c)
"""
SMALL_STOCK = """\
supplies:
  plate: {volts: 170, max_ma: 200}
  bias: {volts: -90, max_ma: 50}
  heater:
    - {id: H1, volts: 6.3, max_amps: 6}
tubes:
  12AT7: {count: 6}
  6AU6: {count: 4}
diodes: solid-state
"""


@pytest.fixture
def write(tmp_path):
    """write(name, text) -> path of a file with dedented ``text`` in a fresh directory."""
    def _write(name: str, text: str):
        path = tmp_path / name
        path.write_text(textwrap.dedent(text))
        return path
    return _write


@pytest.fixture
def run_cli(capsys):
    """run_cli(*args) -> (exit status, stdout, stderr) of the tubeplan command in-process."""
    def _run(*args):
        status = cli.main([str(a) for a in args])
        captured = capsys.readouterr()
        return status, captured.out, captured.err
    return _run


# ---- ngspice: one marker, one fixture, one runner (planner.report.run_ngspice) ----

NGSPICE_MISSING = "ngspice is not installed (Debian package ngspice; CI installs it)"

#: A value ngspice prints as ``name = number`` (``print``, ``meas``, ``let`` vectors), at the start of its line.
_PRINTED = re.compile(r"^\s*([^\s=]+)\s*=\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)(?=\s|$)", re.M)


@pytest.hookimpl(tryfirst=True)
def pytest_collection_modifyitems(items):
    """A test that takes the ``ngspice`` fixture carries the ``ngspice`` marker (``-m 'not ngspice'`` leaves it out)."""
    for item in items:
        if "ngspice" in getattr(item, "fixturenames", ()) and item.get_closest_marker("ngspice") is None:
            item.add_marker(pytest.mark.ngspice)


@pytest.hookimpl(tryfirst=True)
def pytest_runtest_setup(item):
    """Tests marked ``ngspice`` skip, with the reason, where the simulator is absent."""
    if item.get_closest_marker("ngspice") is not None and shutil.which("ngspice") is None:
        pytest.skip(NGSPICE_MISSING)


@dataclass(frozen=True)
class SpiceRun:
    """One ngspice run: its standard output, every ``name = number`` it printed, the files it wrote."""

    stdout: str
    values: dict
    files: dict

    def __getitem__(self, name: str) -> float:
        return self.values[name]


def printed_values(stdout: str) -> dict[str, float]:
    """Every ``name = number`` line of ngspice's output (``print``, ``meas``): name -> value (the last wins)."""
    return {name: float(value) for name, value in _PRINTED.findall(stdout)}


@pytest.fixture
def ngspice():
    """ngspice(deck_text, files=(), timeout_s=300) -> SpiceRun: the deck run as ``ngspice -b`` in a fresh
    directory by the package's own runner (planner.report.run_ngspice; NgspiceFailed when ngspice reports
    a failure). ``run["v(p)"]`` is a printed value; ``run.stdout`` the whole output for other tables."""
    executable = find_ngspice()

    def _run(text: str, files: tuple[str, ...] = (), timeout_s: float = 300.0) -> SpiceRun:
        out, written = run_ngspice(text, executable, files=files, timeout_s=timeout_s)
        return SpiceRun(out, printed_values(out), written)
    return _run
