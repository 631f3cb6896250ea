"""The agreed lint rules (pyproject.toml, [tool.ruff]) hold over the package, the tests and the benchmarks."""

import shutil
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def test_ruff_finds_nothing():
    # ruff is in the test extra, so the README's install command brings it; run it as a module when on the path.
    command = [shutil.which("ruff")] if shutil.which("ruff") else [sys.executable, "-m", "ruff"]
    run = subprocess.run([*command, "check", "--no-cache", "planner", "tests", "benchmarks"], cwd=ROOT,
                         capture_output=True, text=True, timeout=120)
    assert run.returncode == 0, run.stdout + run.stderr
