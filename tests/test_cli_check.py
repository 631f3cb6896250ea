"""`tubeplan check` and `--help` on the bundled demo (invented data in inventory_demo/)."""

from __future__ import annotations

import subprocess
import sys

from planner.cli import DEMO_DESIGN, DEMO_STOCK


def test_help_lists_the_commands(run_cli):
    status, out, _ = run_cli("--help")
    assert status == 0
    listed = {line.split()[0] for line in out.splitlines() if line.startswith("    ") and line.split()}
    assert {"check", "plan", "logic", "tubes", "stage"} <= listed, out
    assert "can kill" in out


def test_check_demo_summarises_both_files(run_cli):
    status, out, err = run_cli("check", DEMO_DESIGN, "--stock", DEMO_STOCK)
    assert status == 0, err
    assert "inputs (5): a1, a0, b1, b0, cin (and ~cin)" in out
    # The care set of s1 spans all 2**5 assignments of its five inputs: counted, not typed in.
    assert "32 of 32" in out
    assert "usable sections by kind" in out and "heater windings: H1 6.3 V 8 A" in out


def test_console_entry_point_runs():
    result = subprocess.run([sys.executable, "-m", "planner.cli", "check", str(DEMO_DESIGN)],
                            capture_output=True, text=True)
    assert result.returncode == 0 and "harbour-street-adder" in result.stdout
