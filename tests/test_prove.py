"""tubeplan prove: a plan directory's own deck in ngspice at nominal and at worst-case corners.

References: ngspice (the Debian package), which runs the plan's deck as written; and the
electrical layer's worst-case figures, the family's levels in plan.json (`levels`: every high at
least `high_volts`, every low at most `low_volts` over resistor and supply tolerance and tube
wear), which every corner must keep. The designs and stocks here are test fixtures of our own
(invented data); the demo is `inventory_demo/` (invented data); the counter is the fixture of
tests/test_registers.py.
"""

from __future__ import annotations

import itertools
import json
import re
import shutil
from pathlib import Path

import pytest
from test_registers import COUNTER, SHIFT
from test_registers import STOCK as REGISTER_STOCK
from test_report_html import check_report_html, needs_chromium, render_in_chromium

from planner.catalogue import builtin_catalogue, spice_subcircuit
from planner.catalogue.models import plate_current_amps
from planner.cli import DEMO_DESIGN, DEMO_STOCK
from planner.pipeline import plan_files
from planner.prove import deck_params, input_vectors, plan_corners
from planner.report import PROVE_FILE

pytestmark = pytest.mark.ngspice

# Invented data: a two-input design (a NAND and an exclusive OR) on a box of 12AU7s.
SMALL_DESIGN = """\
design: small
inputs: [a, b]
outputs:
  n: ~(a & b)
  x: a ^ b
"""
SMALL_STOCK = """\
supplies:
  plate: {volts: 225, max_ma: 200}
  bias: {volts: -95, max_ma: 50}
  heater:
    - {id: H1, volts: 6.3, max_amps: 5}
tubes:
  12AU7: {count: 6}
diodes: solid-state
"""


def _plan(root: Path, name: str, design: str | Path, stock: str | Path) -> Path:
    if isinstance(design, str):
        (root / f"{name}.yaml").write_text(design)
        design = root / f"{name}.yaml"
    if isinstance(stock, str):
        (root / f"{name}-stock.yaml").write_text(stock)
        stock = root / f"{name}-stock.yaml"
    out = root / name
    assert plan_files(Path(design), Path(stock), out, quiet=True).planned
    return out


@pytest.fixture(scope="module")
def plans(tmp_path_factory):
    root = tmp_path_factory.mktemp("prove")
    return {"small": _plan(root, "small", SMALL_DESIGN, SMALL_STOCK), "root": root}


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    root = tmp_path_factory.mktemp("prove-demo")
    return _plan(root, "demo", DEMO_DESIGN, DEMO_STOCK)


@pytest.fixture(scope="module")
def counter(plans):
    """The counter's plan directory, proven once (prove_directory: what tubeplan prove runs)."""
    from planner.prove import prove_directory

    directory = _plan(plans["root"], "counter", COUNTER, REGISTER_STOCK)
    prove_directory(directory)
    return directory


def _copy(plan: Path, tmp_path: Path) -> Path:
    target = tmp_path / plan.name
    shutil.copytree(plan, target)
    return target


def _proof(directory: Path) -> dict:
    return json.loads((directory / PROVE_FILE).read_text())


def _by(document: dict) -> dict:
    return {(r["output"], r["corner"]): r for r in document["results"]}


def test_demo_is_proven_at_every_corner(demo, run_cli):
    status, out, err = run_cli("prove", demo)
    assert status == 0, out + err
    proof = _proof(demo)
    # Reference: ngspice runs the plan's own deck; every vector reads the plan's logic value and every
    # level keeps the family's worst-case threshold (plan.json levels) at every corner.
    assert proof["holds"] and proof["exhaustive"] and proof["vectors"] == 32
    assert len(proof["corners"]) == 12 and {c["name"] for c in proof["corners"]} >= {"nominal", "tubes worn"}
    levels = json.loads((demo / "plan.json").read_text())["levels"]
    for r in proof["results"]:
        assert r["right"] == r["total"] == 32, r
        assert r["lowest_high_volts"] >= levels["high_volts"] and r["highest_low_volts"] <= levels["low_volts"], r
    assert "every one of the 32 input vectors at 12 corners" in out
    assert out.rstrip().splitlines()[-1].startswith("proven")
    assert "corner 12 of 12 done" in err  # progress on stderr


def test_corner_parameters_move_the_levels_as_documented(demo, run_cli):
    if not (demo / PROVE_FILE).is_file():
        assert run_cli("prove", demo, "--quiet")[0] == 0
    rows = _by(_proof(demo))
    for output in ("cout", "equal", "s0", "s1"):
        nominal = rows[(output, "nominal")]
        # Reference: ngspice. The deck's header: worn tubes, B+ high and the resistors' "-1" end raise
        # the lows; new tubes, B+ low and the resistors' "+1" end lower the highs.
        assert rows[(output, "tubes worn")]["highest_low_volts"] > nominal["highest_low_volts"]
        assert rows[(output, "resistors against lows")]["highest_low_volts"] > nominal["highest_low_volts"]
        assert rows[(output, "resistors against highs")]["lowest_high_volts"] <= nominal["lowest_high_volts"]
        worst_low = max(rows[(output, f"worst for lows, bias {b} %")]["highest_low_volts"] for b in (95, 105))
        worst_high = min(rows[(output, f"worst for highs, bias {b} %")]["lowest_high_volts"] for b in (95, 105))
        assert worst_low > rows[(output, "tubes worn")]["highest_low_volts"]
        assert worst_high < nominal["lowest_high_volts"]
        assert rows[(output, "B+ 95 %, bias 95 %")]["lowest_high_volts"] < nominal["lowest_high_volts"]


def test_corner_parameters_move_a_loaded_nodes_highs_as_documented(counter):
    # The demo's outputs drive nothing, so their highs sit at B+; a register's plate carries the other
    # side's divider, so its high moves with the resistors and the tubes.
    rows = _by(_proof(counter))
    for register in ("q0", "q1"):
        nominal = rows[(register, "nominal")]
        # Reference: ngspice. The deck's header: rdir=+1 (a larger plate load, a smaller divider upper)
        # lowers the highs, rdir=-1 raises the lows; worn tubes raise the lows.
        assert rows[(register, "resistors against highs")]["lowest_high_volts"] < nominal["lowest_high_volts"]
        assert rows[(register, "resistors against lows")]["highest_low_volts"] > nominal["highest_low_volts"]
        assert rows[(register, "tubes worn")]["highest_low_volts"] > nominal["highest_low_volts"]
        worst = min(rows[(register, f"worst for highs, bias {b} %")]["lowest_high_volts"] for b in (95, 105))
        assert worst < rows[(register, "resistors against highs")]["lowest_high_volts"]


def test_the_plot_is_in_the_report_and_renders(demo, run_cli, tmp_path):
    if not (demo / PROVE_FILE).is_file():
        assert run_cli("prove", demo, "--quiet")[0] == 0
    page = (demo / "report.html").read_text()
    text = check_report_html(page)  # well formed, nothing fetched from a network
    section = page[page.index("<!-- tubeplan:simulation -->"):page.index("<!-- /tubeplan:simulation -->")]
    assert section.count('<svg class="plot"') == 1 and "Proven" in section and "Not simulated yet" not in text
    assert "lowest high (v) and highest low (^)" in section  # matplotlib wrote the axes' titles as text
    markdown = (demo / "report.md").read_text()
    assert "## Simulation (ngspice)" in markdown and "Simulated levels (text plot)" in markdown
    assert markdown.count("## Simulation (ngspice)") == 1


@needs_chromium
def test_the_plot_renders_in_headless_chromium(demo, run_cli, tmp_path):
    if not (demo / PROVE_FILE).is_file():
        assert run_cli("prove", demo, "--quiet")[0] == 0
    page = (demo / "report.html").read_text()
    section = page[page.index("<!-- tubeplan:simulation -->"):page.index("<!-- /tubeplan:simulation -->")]
    alone = tmp_path / "plot.html"
    alone.write_text(page[:page.index("<body>") + 6] + "<main>" + section + "</main></body></html>")
    png = tmp_path / "plot.png"
    render_in_chromium(alone, png)
    from matplotlib.image import imread

    pixels = (imread(png)[..., :3] * 255).round().astype(int)
    # The plot's colours reach the screen: the highs' blue (#2f5d8a) and the lows' green (#3c8d4f).
    for rgb in ((0x2F, 0x5D, 0x8A), (0x3C, 0x8D, 0x4F)):
        assert (abs(pixels - rgb).sum(axis=-1) <= 6).sum() > 50, rgb


def test_counter_is_proven_over_clock_cycles_at_every_corner(counter, run_cli):
    status, out, err = run_cli("prove", counter, "--quiet")
    assert status == 0, out + err
    proof = _proof(counter)
    assert proof["clock"] is not None and proof["vectors"] == 10  # en = 0 for 5 cycles, then 1 for 5
    rows = _by(proof)
    # Reference: ngspice transient of the plan's own deck at the plan's clock; the counter's states are
    # checked against the plan's next-state logic on every edge (with en = 1 it counts 0, 1, 2, 3, 0).
    for register in ("q0", "q1"):
        for corner in (c["name"] for c in proof["corners"]):
            row = rows[(register, corner)]
            assert row["right"] == row["total"] == 10 and row["margin_volts"] >= 0, row
    assert rows[("carry", "nominal")]["lowest_high_volts"] is not None  # carry went high (q0 = q1 = en = 1)


def test_shift_register_is_proven_over_clock_cycles_at_every_corner(plans, run_cli):
    directory = _plan(plans["root"], "shift", SHIFT, REGISTER_STOCK)
    status, out, err = run_cli("prove", directory, "--quiet")
    assert status == 0, out + err
    proof = _proof(directory)
    # Reference: ngspice transient at the plan's clock; from the reset state 001 (s0 s1 s2) the register
    # shifts d = 0 in for 5 edges, then d = 1, each state checked against the plan's next-state logic.
    assert proof["vectors"] == 10 and len(proof["corners"]) == 12
    assert all(r["right"] == r["total"] == 10 and r["holds"] for r in proof["results"])
    assert {r["output"] for r in proof["results"] if r["kind"] == "register"} == {"s0", "s1", "s2"}


def test_a_one_ohm_plate_load_fails_with_the_output_and_vector(plans, run_cli, tmp_path):
    directory = _copy(plans["small"], tmp_path)
    deck = (directory / "plan.cir").read_text()
    net = json.loads((directory / "plan.json").read_text())["outputs"]["x"]
    edited, count = re.subn(rf"(?m)^(R\d+ bplus {net}) .*$", r"\1 1", deck)
    assert count == 1
    (directory / "plan.cir").write_text(edited)
    status, out, err = run_cli("prove", directory, "--quiet")
    # Reference: ngspice; with a 1 ohm plate load the node sits at B+, so x reads 1 where a = b.
    assert status == 4, out + err
    assert re.search(r"x at corner nominal: 2 of 4 vectors wrong, first at a=0 b=0 \(simulated [0-9.]+ V", out)
    assert out.rstrip().splitlines()[-1].startswith("NOT PROVEN")
    assert not _proof(directory)["holds"]


def test_a_deck_with_a_missing_line_fails_cleanly(plans, run_cli, tmp_path):
    directory = _copy(plans["small"], tmp_path)
    deck = (directory / "plan.cir").read_text()
    (directory / "plan.cir").write_text(re.sub(r"(?m)^\.ends .*\n", "", deck, count=1))
    status, out, err = run_cli("prove", directory, "--quiet")
    # Reference: ngspice refuses a subcircuit without its .ends: exit 2, its error on one line.
    assert status == 2 and out == ""
    assert len(err.strip().splitlines()) == 1 and "plan.cir:0: ngspice cannot run the deck" in err and ".ends" in err
    net = json.loads((directory / "plan.json").read_text())["outputs"]["x"]
    (directory / "plan.cir").write_text(re.sub(rf"(?m)^R\d+ bplus {net} .*\n", "", deck))
    status, out, err = run_cli("prove", directory, "--quiet")
    # Reference: ngspice; without its plate load the node has no pull-up and x never goes high.
    assert status == 4 and "x at corner nominal" in out


def test_bad_directories_give_one_line_and_exit_2(plans, run_cli, tmp_path):
    empty = tmp_path / "empty"
    empty.mkdir()
    status, out, err = run_cli("prove", empty)
    assert status == 2 and len(err.strip().splitlines()) == 1 and "plan.json" in err and "not found" in err
    no_deck = _copy(plans["small"], tmp_path)
    (no_deck / "plan.cir").unlink()
    status, out, err = run_cli("prove", no_deck)
    assert status == 2 and len(err.strip().splitlines()) == 1 and "plan.cir:0: not found" in err
    unreadable = _copy(plans["small"], tmp_path / "u")
    (unreadable / "plan.cir").write_bytes(b"* deck\n\xff\xfe\x00 broken\n.end\n")
    status, out, err = run_cli("prove", unreadable)
    assert status == 2 and len(err.strip().splitlines()) == 1 and "plan.cir:0: cannot be read" in err
    status, _, err = run_cli("prove", tmp_path / "nowhere")
    assert status == 2 and len(err.strip().splitlines()) == 1


def test_ngspice_absent_gives_one_line_with_how_to_install(plans, run_cli, monkeypatch, tmp_path):
    status, out, err = run_cli("prove", plans["small"], "--ngspice", tmp_path / "no-such-ngspice")
    assert status == 2 and len(err.strip().splitlines()) == 1 and "apt-get install ngspice" in err
    monkeypatch.setenv("PATH", str(tmp_path))
    status, _, err = run_cli("prove", plans["small"])
    assert status == 2 and len(err.strip().splitlines()) == 1 and "ngspice is not on PATH" in err


def test_plan_with_prove(plans, run_cli, monkeypatch, tmp_path):
    design, stock = plans["root"] / "small.yaml", plans["root"] / "small-stock.yaml"
    status, out, err = run_cli("plan", design, "--stock", stock, "--out", tmp_path / "p", "--prove", "--quiet")
    assert status == 0 and (tmp_path / "p" / PROVE_FILE).is_file() and "proven: every vector" in out
    monkeypatch.setenv("PATH", str(tmp_path))
    status, out, err = run_cli("plan", design, "--stock", stock, "--out", tmp_path / "q", "--prove", "--quiet")
    assert status == 0 and not (tmp_path / "q" / PROVE_FILE).exists()
    assert "--prove skipped" in err and "apt-get install ngspice" in err


def test_a_re_plan_drops_the_old_proof(plans, run_cli, tmp_path):
    design, stock = plans["root"] / "small.yaml", plans["root"] / "small-stock.yaml"
    assert run_cli("plan", design, "--stock", stock, "--out", tmp_path / "p", "--prove", "--quiet")[0] == 0
    assert (tmp_path / "p" / PROVE_FILE).is_file()
    assert run_cli("plan", design, "--stock", stock, "--out", tmp_path / "p", "--quiet")[0] == 0
    assert not (tmp_path / "p" / PROVE_FILE).exists()
    assert "Not simulated yet" in (tmp_path / "p" / "report.html").read_text()


def test_the_deck_as_written_is_the_nominal_corner(plans):
    deck = (plans["small"] / "plan.cir").read_text()
    params = deck_params(deck)
    # The defaults are nominal: supplies at 1, resistors at 0, every tube new.
    assert params["supply_bplus"] == params["supply_bias"] == 1 and params["rdir"] == 0
    assert params["wear_12au7"] == 1 and params["worn_12au7"] == pytest.approx(0.7)
    assert [c.name for c in plan_corners(params)][:2] == ["nominal", "tubes worn"]
    assert "* corner parameters" in deck and "rdir" in deck.split(".param supply_bplus")[0]


def test_wear_scales_a_sections_current_in_ngspice(ngspice):
    tube = builtin_catalogue().get("12AU7")
    lines = ["* wear", "V1 p 0 150", "V2 g 0 -2", "Vm p pp 0", "X1 pp g 0 TP_12AU7_TRIODE wear=0.7",
             spice_subcircuit(tube, "triode"), ".op", ".end"]
    run = ngspice("\n".join(lines) + "\n", timeout_s=60)
    amps = abs(float(re.search(r"vm#branch\s+(\S+)", run.stdout).group(1)))
    # Reference: ngspice operating point; the planner's model of a worn tube is 0.7 x its current.
    assert amps == pytest.approx(0.7 * plate_current_amps(tube, plate_volts=150, grid_volts=-2), rel=0.01)


def test_vectors_above_the_limit_are_a_seeded_sample():
    first, every = input_vectors(13)
    again, _ = input_vectors(13)
    assert not every and len(first) == 4096 == len(set(first)) and first == again
    assert input_vectors(13, seed=2)[0] != first
    gray, every = input_vectors(12)
    assert every and len(gray) == 4096
    assert all((a ^ b).bit_count() == 1 for a, b in itertools.pairwise(gray))  # one input changes at a time


def test_proving_twice_gives_the_same_bytes(plans, run_cli, tmp_path):
    directory = _copy(plans["small"], tmp_path)
    assert run_cli("prove", directory, "--quiet")[0] == 0
    first = {name: (directory / name).read_bytes() for name in (PROVE_FILE, "report.html", "report.md")}
    assert run_cli("prove", directory, "--quiet")[0] == 0
    # The plot is matplotlib's SVG with fixed ids and no date; the section is replaced, not added again.
    assert all((directory / name).read_bytes() == data for name, data in first.items())
    assert first["report.html"].count(b'<svg class="plot"') == 1


def test_a_sample_is_run_and_stated_when_the_vectors_exceed_the_limit(plans):
    from planner.prove import find_ngspice, format_proof, prove_plan, read_plan_directory

    proof = prove_plan(read_plan_directory(plans["small"]), find_ngspice(), limit=3, seed=5)
    # Reference: ngspice; three of the four vectors, drawn with the seed, each right at every corner.
    assert not proof.exhaustive and proof.vectors == 3 and proof.space == 4 and proof.holds
    assert all(r.total == 3 == r.right for r in proof.results)
    assert "a sample of 3 of the 4 input vectors (every vector is run only up to 3; seed 5)" in format_proof(proof)


def test_a_corner_swept_in_chunks_gives_the_same_levels(plans, monkeypatch):
    import planner.prove.run as run
    from planner.prove import find_ngspice, prove_plan, read_plan_directory

    plan = read_plan_directory(plans["small"])
    whole = prove_plan(plan, find_ngspice())
    monkeypatch.setattr(run, "SWEEP_CHUNK", 3)  # vectors 0-2 in one sweep, 3 in another
    lines = []
    chunked = prove_plan(plan, find_ngspice(), say=lines.append)
    assert any("3 of 4 vectors" in line for line in lines)  # progress after each chunk
    # Reference: ngspice; an operating point does not depend on which sweep it was reached in.
    for a, b in zip(whole.results, chunked.results, strict=True):
        assert (a.output, a.corner, a.right) == (b.output, b.corner, b.right)
        assert a.lowest_high_volts == pytest.approx(b.lowest_high_volts, abs=1e-3)
        assert a.highest_low_volts == pytest.approx(b.highest_low_volts, abs=1e-3)
