"""What a user meets (issue 15): exit statuses and streams, the plan directory, hints, reasons, plurals.

Every design and stock file here is an invented fixture.
"""

from __future__ import annotations

import hashlib
import json
import os
import shutil
import subprocess
import sys
import tomllib
from pathlib import Path

import pytest

from conftest import SMALL_DESIGN, SMALL_STOCK

import planner
from planner.report import write as write_module
from planner.report.designators import counted

ROOT = Path(__file__).resolve().parent.parent

# The shared small fixture (invented data, tests/conftest.py).
DESIGN, STOCK = SMALL_DESIGN, SMALL_STOCK


def _one_line(err: str) -> str:
    assert err.endswith("\n") and err.count("\n") == 1, err
    return err.strip()


# --- exit statuses and streams ------------------------------------------------------------

def test_bare_tubeplan_prints_the_help_and_exits_0(run_cli):
    status, out, err = run_cli()
    assert status == 0 and err == ""
    assert out.startswith("usage: tubeplan") and "plan" in out and "can kill" in out


def test_version_matches_the_package_metadata(run_cli):
    declared = tomllib.loads((ROOT / "pyproject.toml").read_text())["project"]["version"]
    assert planner.__version__ == declared
    assert run_cli("--version") == (0, f"tubeplan {declared}\n", "")
    result = subprocess.run([sys.executable, "-m", "planner", "--version"], capture_output=True, text=True,
                            cwd=ROOT)
    assert result.returncode == 0 and result.stdout == f"tubeplan {declared}\n"


@pytest.mark.parametrize("args, what", [
    (["plan", "--time-limit", "-5"], "--time-limit"),
    (["plan", "--time-limit", "nan"], "--time-limit"),
    (["plan", "--time-limit", "soon"], "--time-limit"),
    (["plan", "--solver", "magic"], "--solver"),
    (["plan", "--flatten", "0"], "--flatten"),
    (["plan", "--bogus"], "--bogus"),
    (["stage", "12AU7"], "--plate-volts"),
    (["nonsense"], "nonsense"),
])
def test_option_mistakes_are_one_line_and_exit_2(run_cli, args, what):
    status, out, err = run_cli(*args)
    assert status == 2 and out == ""
    line = _one_line(err)
    assert line.startswith("<command line>:0: ") and what in line and "Traceback" not in line


def test_an_unwritable_output_directory_is_exit_2(tmp_path, write, run_cli, monkeypatch):
    """A read-only place for --out is the user's to fix: exit 2, one line naming the path."""
    design, stock = write("design.yaml", DESIGN), write("stock.yaml", STOCK)
    out = tmp_path / "plan"

    real_mkdtemp = write_module.tempfile.mkdtemp

    def refused(*args, **kwargs):  # what a read-only directory or mount answers, even for root
        if Path(kwargs.get("dir", "")) == tmp_path:
            raise PermissionError(13, "Permission denied", str(tmp_path))
        return real_mkdtemp(*args, **kwargs)

    monkeypatch.setattr(write_module.tempfile, "mkdtemp", refused)
    status, stdout, err = run_cli("plan", design, "--stock", stock, "--out", out, "--quiet")
    assert status == 2 and stdout == ""
    line = _one_line(err)
    assert line.startswith(f"{tmp_path}:0: cannot write the plan here (Permission denied)")
    assert not out.exists()


@pytest.mark.parametrize("where", ["x" * 300 + "/plan", "notes.txt/plan"])
def test_an_impossible_output_path_is_exit_2(tmp_path, write, run_cli, where):
    """A name longer than the file system allows, or a file where a directory should be."""
    design, stock = write("design.yaml", DESIGN), write("stock.yaml", STOCK)
    write("notes.txt", "mine\n")
    status, out, err = run_cli("plan", design, "--stock", stock, "--out", tmp_path / where, "--quiet")
    assert status == 2 and out == "" and _one_line(err).startswith(str(tmp_path))
    assert (tmp_path / "notes.txt").read_text() == "mine\n"


@pytest.mark.skipif(os.geteuid() == 0, reason="root writes into read-only directories")
def test_a_read_only_directory_is_refused_before_planning(tmp_path, write, run_cli):
    design, stock = write("design.yaml", DESIGN), write("stock.yaml", STOCK)
    locked = tmp_path / "locked"
    locked.mkdir()
    locked.chmod(0o555)
    try:
        status, _, err = run_cli("plan", design, "--stock", stock, "--out", locked / "plan", "--quiet")
    finally:
        locked.chmod(0o755)
    assert status == 2 and _one_line(err).startswith(f"{locked}:0: ")


def test_a_shortage_goes_to_stderr_with_exit_3(tmp_path, write, run_cli):
    """Everything held in reserve: the reason names the reserves, on stderr; nothing is written."""
    design = write("design.yaml", DESIGN)
    stock = write("stock.yaml", STOCK.replace("{count: 6}", "{count: 6, reserve: 6}")
                  .replace("{count: 4}", "{count: 4, reserve: 4}"))
    status, out, err = run_cli("plan", design, "--stock", stock, "--out", tmp_path / "plan", "--quiet")
    assert status == 3 and out == ""
    assert "needs" in err and "10 tubes are held in reserve (12AT7 6 of 6, 6AU6 4 of 4)" in err
    assert not (tmp_path / "plan").exists()


# --- the plan directory -------------------------------------------------------------------

def test_a_replan_keeps_the_users_design_and_notes(tmp_path, write, run_cli):
    """The user keeps the design and notes in the plan directory: a re-plan keeps both byte for byte."""
    out = tmp_path / "plan"
    stock = write("stock.yaml", STOCK)
    status, _, err = run_cli("plan", write("first.yaml", DESIGN), "--stock", stock, "--out", out, "--quiet")
    assert status == 0, err
    design = out / "design.yaml"
    design.write_text(DESIGN.replace("z: ~(a | c)", "z: ~(a | b)"))
    (out / "notes").mkdir()
    (out / "notes" / "build.txt").write_bytes(b"V1 socket wired 3 May\n")
    before = {path: path.read_bytes() for path in (design, out / "notes" / "build.txt")}
    status, stdout, err = run_cli("plan", design, "--stock", stock, "--out", out, "--quiet")
    assert status == 0, err
    assert {path: path.read_bytes() for path in before} == before
    assert "kept your files" in err and "design.yaml, notes" in err
    assert stdout.splitlines()[-1] == f"plan written to {out}{os.sep}; report: {out / 'report.html'}"
    assert f"Design file `{design}`" in (out / "report.md").read_text()  # names a file that still exists
    document = json.loads((out / "plan.json").read_text())
    digest = subprocess.run(["sha256sum", str(design)], capture_output=True, text=True, check=True).stdout.split()[0]
    assert {"role": "design", "name": "design.yaml", "sha256": digest} in document["input_files"]  # coreutils
    assert document["forms"]["z"] != json.loads(json.dumps(document))["forms"]["y"]


def test_an_input_among_the_plans_files_is_refused(tmp_path, write, run_cli):
    out = tmp_path / "plan"
    stock = write("stock.yaml", STOCK)
    assert run_cli("plan", write("design.yaml", DESIGN), "--stock", stock, "--out", out, "--quiet")[0] == 0
    shutil.copy(tmp_path / "design.yaml", out / "report.md")  # the design saved under a plan file's name
    status, _, err = run_cli("plan", out / "report.md", "--stock", stock, "--out", out, "--quiet")
    assert status == 2 and "would be replaced" in _one_line(err)
    assert (out / "report.md").read_text() == DESIGN


# --- plan.json ----------------------------------------------------------------------------

def test_plan_json_records_the_tool_and_its_inputs_with_identifier_keys(tmp_path, write, run_cli):
    design, stock = write("design.yaml", DESIGN), write("stock.yaml", STOCK)
    out = tmp_path / "plan"
    assert run_cli("plan", design, "--stock", stock, "--out", out, "--quiet")[0] == 0
    document = json.loads((out / "plan.json").read_text())
    assert document["schema"] == 2 and document["tool"] == {"name": "tubeplan", "version": planner.__version__}
    assert document["input_files"] == [
        {"role": "design", "name": "design.yaml", "sha256": hashlib.sha256(DESIGN.encode()).hexdigest()},
        {"role": "stock", "name": "stock.yaml", "sha256": hashlib.sha256(STOCK.encode()).hexdigest()}]

    def keys(node):
        if isinstance(node, dict):
            for key, value in node.items():
                yield key
                yield from keys(value)
        elif isinstance(node, list):
            for value in node:
                yield from keys(value)

    assert all(key.isidentifier() for key in keys(document)), sorted(k for k in keys(document) if not k.isidentifier())
    assert "heater_watts" in document["solution"]["terms"]


# --- YAML hints ---------------------------------------------------------------------------

@pytest.mark.parametrize("text, line, hint", [
    ("design: t\ninputs: [a, b]\noutputs:\n\ty: a & b\n", 4, "tabs are not allowed in YAML, use spaces"),
    ("design: t\ninputs: [on, off]\noutputs:\n  y: a\n", 2, "put the name in quotes"),
    ("design: t\ninputs: [a, yes]\noutputs:\n  y: a\n", 2, "put the name in quotes"),
])
def test_yaml_hints(write, run_cli, text, line, hint):
    path = write("design.yaml", text)
    status, _, err = run_cli("check", path)
    assert status == 2 and _one_line(err).startswith(f"{path}:{line}: ") and hint in err


def test_swapped_design_and_stock_get_a_hint(write, run_cli, tmp_path):
    design, stock = write("design.yaml", DESIGN), write("stock.yaml", STOCK)
    status, _, err = run_cli("plan", stock, "--stock", design, "--out", tmp_path / "plan", "--quiet")
    assert status == 2 and _one_line(err).startswith(f"{stock}:1: ") and "swapped?" in err
    status, _, err = run_cli("check", design, "--stock", design)
    assert status == 2 and _one_line(err).startswith(f"{design}:1: ") and "swapped?" in err


# --- reasons and warnings -----------------------------------------------------------------

def test_a_plate_supply_above_every_rating_names_the_rating(write, run_cli, tmp_path):
    """1000 V B+: the reason is the plate rating, not fan-out.

    12AT7 and 6AU6 design-maximum plate voltage 300 V (the catalogue's figures; the 12AU7/ECC82
    300 V figure is from the Brimar application report VAD/513.4 in the shared reference data).
    With the rules' 5 % supply tolerance the worst case is 1050 V, 750 V over 300 V.
    """
    design = write("design.yaml", DESIGN)
    stock = write("stock.yaml", STOCK.replace("volts: 170", "volts: 1000"))
    status, out, err = run_cli("plan", design, "--stock", stock, "--out", tmp_path / "plan", "--quiet")
    assert status == 3 and out == ""
    assert "exceeds the plate rating of 12AT7 (300 V) by 750 V, 6AU6 (300 V) by 750 V" in err
    assert "at most 286 V" in err  # 300 V / 1.05
    assert "fan-out" not in err and "driver allows" not in err


SPREAD = ("design: spread\ninputs: [a, b, c]\nsignals:\n  s: ~(a | b)\noutputs:\n"
          "  y1: ~(s | c)\n  y2: ~(s | a)\n  y3: ~(s | b)\n")
# Invented bench: only a 12.6 V winding. The 6SN7's heater is 6.3 V only (6SN7 heater 6.3 V, as in
# the shared reference data), the 12AU7's 6.3 V or 12.6 V with its centre tap (Brimar 12AU7 report).
ONLY_12V = STOCK.replace("{id: H1, volts: 6.3, max_amps: 6}", "{id: H2, volts: 12.6, max_amps: 3}")


def test_why_free_sections_will_not_do(write, run_cli, tmp_path):
    """Ten 6SN7 on the shelf, but no 6.3 V winding: the purchase says why they will not do."""
    design = write("design.yaml", SPREAD)
    stock = write("stock.yaml", ONLY_12V.replace("12AT7: {count: 6}", "12AU7: {count: 0}")
                  .replace("6AU6: {count: 4}", "6SN7: {count: 10}"))
    status, out, err = run_cli("plan", design, "--stock", stock, "--out", tmp_path / "plan", "--quiet")
    assert status == 3 and out == ""
    assert "x 12AU7 (the free 6SN7 sections will not do: the 6SN7's heater fits no heater winding)" in err


def test_no_purchase_helps_is_exit_3_not_an_internal_error(write, run_cli, tmp_path):
    """Only 6SN7 and only a 12.6 V winding: buying more 6SN7 cannot help; the reason says why."""
    design = write("design.yaml", SPREAD)
    stock = write("stock.yaml", ONLY_12V.replace("12AT7: {count: 6}\n", "").replace("6AU6: {count: 4}",
                                                                                   "6SN7: {count: 10}"))
    status, out, err = run_cli("plan", design, "--stock", stock, "--out", tmp_path / "plan", "--quiet")
    assert status == 3 and out == "" and "internal error" not in err
    assert "the heaters of 6SN7 (6.3 V) fit no heater winding (H2 12.6 V)" in err


def test_a_nearly_full_winding_is_a_warning(write, run_cli, tmp_path):
    """Two 12AT7 at 0.3 A each (catalogue) on a 0.62 A winding: 97 %, above 90 % and the 25 % headroom."""
    design = write("design.yaml", DESIGN)
    stock = write("stock.yaml", STOCK.replace("max_amps: 6", "max_amps: 0.62"))
    out = tmp_path / "plan"
    status, stdout, err = run_cli("plan", design, "--stock", stock, "--out", out, "--quiet")
    assert status == 0, err
    warning = "heater winding H1 is loaded to 97 % of its 0.62 A rating (0.60 A); the BOM asks for 0.75 A"
    assert f"WARNING: {warning}" in stdout
    assert warning in (out / "report.md").read_text() and warning in (out / "report.html").read_text()


# --- plurals ------------------------------------------------------------------------------

def test_counts_agree_with_their_nouns(write, run_cli, tmp_path):
    assert (counted(1, "logic stage"), counted(2, "line"), counted(0, "follower")) == \
        ("1 logic stage", "2 lines", "0 followers")
    design = write("design.yaml", "design: one\ninputs: [a, b]\noutputs:\n  y: ~(a | b)\n")
    out = tmp_path / "plan"
    status, stdout, err = run_cli("plan", design, "--stock", write("stock.yaml", STOCK), "--out", out, "--quiet")
    assert status == 0, err
    assert "1 envelope, 1 logic stage, 0 followers" in stdout
    for name in ("wiring.csv", "report.md", "report.html", "bom.csv"):
        text = (out / name).read_text()
        assert "diode diode" not in text and "1 logic stages" not in text and "1 lines" not in text
