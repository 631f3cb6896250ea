"""Shared test helpers. Files written here are test fixtures (invented data)."""

from __future__ import annotations

import textwrap

import pytest

from planner import cli

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
