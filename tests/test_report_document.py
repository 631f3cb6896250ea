"""plan.json (the contract in /work/shared/DESIGN.md, "The plan document") and the stdout summary."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

from planner.report import SCHEMA, plan_document, plan_json, plan_summary
from test_report_fixtures import fixture_plan

HERE = Path(__file__).resolve().parent


def test_required_fields_of_the_contract():
    """Every field DESIGN.md's plan document requires, with its type (contract; schema 2 since issue 15)."""
    doc = json.loads(plan_json(fixture_plan()))
    assert doc["schema"] == SCHEMA == 2
    assert doc["design"] == "fixture-gates"
    assert doc["inputs"] == [{"name": "a", "complement_available": False, "fanout_limit": None},
                             {"name": "b", "complement_available": True, "fanout_limit": None}]
    assert doc["outputs"] == {"w": "n3", "y": "n1", "z": "n2"}
    assert doc["forms"]["z"] == "~(a & ~b)"
    stages = {s["id"]: s for s in doc["stages"]}
    assert stages["S1"]["kind"] == "inverting" and stages["S1"]["output"] == "n1"
    for branch in stages["S1"]["branches"] + stages["S2"]["branches"]:
        assert set(branch) >= {"inputs", "tube", "envelope", "section", "means"}
    assert stages["S2"]["branches"][0] == {"inputs": ["a", "~b"], "tube": "5915", "envelope": "V2", "section": 1,
                                           "means": "dual", "diodes": []}
    follower = stages["S3"]
    assert (follower["kind"], follower["input"], follower["tube"], follower["envelope"], follower["section"]) == \
        ("follower", "n1", "12AU7", "V3", 1)
    assert [(e["ref"], e["tube"], e["winding"]) for e in doc["envelopes"]] == \
        [("V1", "12AU7", "H1"), ("V2", "5915", "H1"), ("V3", "12AU7", "H2")]
    budget = doc["budget"]
    assert set(budget) >= {"heater_watts", "windings", "plate_ma_worst", "plate_ma_typical", "bias_ma"}
    assert budget["windings"][0] == {"id": "H1", "volts": 6.3, "amps": 0.6, "max_amps": 8.0, "elevated_volts": 0}
    assert budget["plate_ma_worst"] == 12.7 and budget["bias_ma"] == 4.0
    assert {"tube": "5915", "on_hand": 2, "reserve": 0, "used": 1, "scarce": True, "from_memory": True} in doc["stock"]


def test_json_is_sorted_indented_and_rounds_binary_noise():
    text = plan_json(fixture_plan())
    assert text == json.dumps(plan_document(fixture_plan()), indent=2, sort_keys=True) + "\n"
    # 2 * 6.3 * 0.3 + 12.6 * 0.15 is 5.67 up to binary rounding; the document says 5.67
    assert json.loads(text)["budget"]["heater_watts"] == 5.67


def test_no_wall_clock_time_in_the_document():
    """The solver's seconds vary run to run; the document leaves them out so reruns match."""
    assert "seconds" not in json.loads(plan_json(fixture_plan()))["solution"]


def test_byte_identical_across_processes_and_hash_seeds():
    """Same Plan, two interpreters with different PYTHONHASHSEED: the same bytes."""
    code = ("import sys; sys.path.insert(0, %r); from test_report_fixtures import fixture_plan; "
            "from planner.report import plan_json; sys.stdout.write(plan_json(fixture_plan()))" % str(HERE))
    outputs = []
    for seed in ("1", "2"):
        env = dict(os.environ, PYTHONHASHSEED=seed)
        outputs.append(subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env,
                                      check=True).stdout)
    assert outputs[0] == outputs[1] == plan_json(fixture_plan())


def test_summary_tables():
    text = plan_summary(fixture_plan())
    lines = text.splitlines()
    row = next(line for line in lines if line.startswith("12AU7"))
    assert row.split()[:4] == ["12AU7", "2", "2", "1"]          # used, left in stock, reserve kept
    assert any(line.startswith("heater H1") and "0.60 A" in line and "8 A" in line for line in lines)
    assert any(line.startswith("plate B+ worst") and "12.7 mA" in line for line in lines)
    assert any(line.startswith("plate B+ typical") and "7.4 mA" in line for line in lines)
    assert any(line.startswith("bias") and "4.0 mA" in line for line in lines)
    assert "objective" in text and "LP bound" in text and "gap" in text
    solver_row = next(line for line in lines if line.startswith("CBC"))
    assert solver_row.split()[:4] == ["CBC", "Optimal", "3.25", "3.25"]
