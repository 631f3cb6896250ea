"""Files are never lost or half-written, plans are deterministic, exit statuses are as documented.

The design and stock here are invented fixtures; the demo is invented data too.
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from conftest import SMALL_DESIGN, SMALL_STOCK

from planner.cli import DEMO_DESIGN, DEMO_STOCK

PLAN_FILES = {"plan.json", "bom.csv", "bom.md", "wiring.csv", "plan.cir", "report.html", "report.md"}


# Slows every file write of the plan directory so a kill lands while files are being written.
SLOW_WRITER = """\
import os, sys, time
import planner.report.write as write
real_fsync = os.fsync
def slow_fsync(fd):
    real_fsync(fd)
    time.sleep(0.4)
write.os.fsync = slow_fsync
from planner.cli import main
sys.exit(main(sys.argv[1:]))
"""


def _plan_command(*args):
    return [sys.executable, "-m", "planner.cli", "plan", *map(str, args), "--quiet"]


def _snapshot(directory: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(directory.iterdir())}


def _assert_whole_plan_or_nothing(out: Path) -> None:
    if not out.exists():
        return
    names = {p.name for p in out.iterdir()}
    assert names == PLAN_FILES | {".tubeplan-plan"}, names


def test_plans_are_byte_identical_across_hash_seeds(tmp_path):
    """Two processes with different PYTHONHASHSEED values write the same bytes (issue: determinism)."""
    runs = []
    for seed in ("0", "4242"):
        env = dict(os.environ, PYTHONHASHSEED=seed, TUBEPLAN_CACHE_DIR="")  # no cache: both compute everything
        out = tmp_path / f"plan_{seed}"
        runs.append((out, subprocess.Popen(_plan_command(DEMO_DESIGN, "--stock", DEMO_STOCK, "--out", out),
                                           env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE)))
    for _out, process in runs:
        _, err = process.communicate(timeout=600)
        assert process.returncode == 0, err.decode()
    first, second = (_snapshot(out) for out, _ in runs)
    assert set(first) == PLAN_FILES | {".tubeplan-plan"}
    for name in sorted(first):
        assert first[name] == second[name], name


def test_killed_while_writing_leaves_the_earlier_plan_intact(tmp_path, write):
    design = write("design.yaml", SMALL_DESIGN)
    stock = write("stock.yaml", SMALL_STOCK)
    out = tmp_path / "plan"
    first = subprocess.run(_plan_command(design, "--stock", stock, "--out", out), capture_output=True, text=True)
    assert first.returncode == 0, first.stderr
    before = _snapshot(out)
    # Change the design so a finished second run would differ, then kill it mid-write.
    write("design.yaml", SMALL_DESIGN.replace("z: ~(a | c)", "z: ~(a | b)"))
    script = write("slow_writer.py", SLOW_WRITER)
    process = subprocess.Popen([sys.executable, str(script), "plan", str(design), "--stock", str(stock),
                                "--out", str(out), "--quiet"], stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    deadline = time.monotonic() + 300
    while time.monotonic() < deadline:
        temporary = [p for p in tmp_path.iterdir() if ".tubeplan-new-" in p.name]
        if temporary and any(temporary[0].iterdir()):
            break
        if process.poll() is not None:
            pytest.fail(f"the run ended before it began writing: {process.stderr.read().decode()}")
        time.sleep(0.05)
    process.send_signal(signal.SIGKILL)
    process.wait(timeout=60)
    assert _snapshot(out) == before  # the earlier plan, byte for byte
    _assert_whole_plan_or_nothing(out)


@pytest.mark.parametrize("delay_s", [0.5, 2.0])
def test_interrupted_first_run_leaves_no_plan_directory(tmp_path, write, delay_s):
    design = write("design.yaml", SMALL_DESIGN)
    stock = write("stock.yaml", SMALL_STOCK)
    out = tmp_path / "plan"
    process = subprocess.Popen(_plan_command(design, "--stock", stock, "--out", out),
                               stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    time.sleep(delay_s)
    process.send_signal(signal.SIGINT)
    _, err = process.communicate(timeout=120)
    assert b"Traceback" not in err
    _assert_whole_plan_or_nothing(out)


def test_out_never_replaces_a_regular_file_or_foreign_directory(tmp_path, write, run_cli):
    design = write("design.yaml", SMALL_DESIGN)
    stock = write("stock.yaml", SMALL_STOCK)
    precious = write("notes.txt", "my notes\n")
    status, _, err = run_cli("plan", design, "--stock", stock, "--out", precious, "--quiet")
    assert status == 2 and "not a plan directory" in err
    assert precious.read_text() == "my notes\n"
    foreign = tmp_path / "photos"
    foreign.mkdir()
    (foreign / "cat.jpg").write_bytes(b"\xff\xd8")
    status, _, err = run_cli("plan", design, "--stock", stock, "--out", foreign, "--quiet")
    assert status == 2 and "not an earlier plan" in err
    assert _snapshot(foreign) == {"cat.jpg": b"\xff\xd8"}


def test_exit_statuses(tmp_path, write, run_cli, monkeypatch):
    """0 planned, 2 bad input, 3 short, 1 internal error with one line and a hint (docs/limits.md)."""
    design = write("design.yaml", SMALL_DESIGN)
    stock = write("stock.yaml", SMALL_STOCK)
    status, out, _ = run_cli("plan", design, "--stock", stock, "--out", tmp_path / "ok", "--quiet")
    assert status == 0 and "can kill" in out
    status, _, err = run_cli("plan", design, "--stock", write("bad.yaml", "supplies: 3\n"), "--quiet")
    assert status == 2 and err.startswith(str(tmp_path / "bad.yaml") + ":1:")
    short = write("short.yaml", SMALL_STOCK.replace("12AT7: {count: 6}", "12AT7: {count: 0}")
                   .replace("6AU6: {count: 4}", "6AU6: {count: 1}"))
    status, out, err = run_cli("plan", design, "--stock", short, "--out", tmp_path / "short", "--quiet")
    assert status == 3 and "needs" in err and out == ""  # the reason goes to stderr
    assert not (tmp_path / "short").exists()

    import planner.pipeline._files

    def broken(*args, **kwargs):
        raise ZeroDivisionError("simulated fault")

    monkeypatch.setattr(planner.pipeline._files, "plan_design", broken)
    status, _, err = run_cli("plan", design, "--stock", stock, "--out", tmp_path / "x", "--quiet")
    assert status == 1 and err.count("\n") == 1 and "--debug" in err and "Traceback" not in err
    with pytest.raises(ZeroDivisionError, match="^simulated fault$"):
        run_cli("--debug", "plan", design, "--stock", stock, "--out", tmp_path / "x", "--quiet")
