"""The wider allowance for types whose data are from memory, and where a plan and a stage say so."""

import pytest

from planner.catalogue import builtin_catalogue, cutoff_grid_volts
from planner.electrical import DesignRules, Rails, design_template
from planner.electrical.context import TubeContext
from planner.report import plan_summary
from planner.report.bom import bom_lines
from test_report_fixtures import fixture_plan

CAT = builtin_catalogue()
RAILS = Rails(250.0, -100.0)


def test_only_the_unsourced_types_are_from_memory():
    # The reference data's README lists 6AU6, 6AK5, 6AS6, 6CS6, 5915 and 6AL5 as the types with no
    # reachable numeric source.
    assert {n for n in CAT.names() if CAT.get(n).model_from_memory} == {"6AU6", "6AK5", "6AS6", "6CS6", "5915",
                                                                         "6AL5"}


@pytest.mark.parametrize("name", ["6AU6", "5915", "12AU7"])
def test_allowance_widens_wear_strength_and_cutoff(name):
    tube, rules = CAT.get(name), DesignRules()
    wide = TubeContext(tube, 0.7, RAILS, rules)
    plain = TubeContext(tube, 0.7, RAILS, DesignRules(unsourced_allowance=0.0))
    a = rules.unsourced_allowance if tube.model_from_memory else 0.0
    assert wide.wear == pytest.approx(0.7 * (1 - a)) and wide.strong == pytest.approx(1 + a)
    assert wide.cutoff_volts("grid") == pytest.approx(plain.cutoff_volts("grid") * (1 + a))


def test_allowance_costs_margin_in_a_template():
    # The same 6AU6 stage designed with and without the allowance: the wider box cannot give more fan-out.
    with_it = design_template(CAT.get("6AU6"), "single", RAILS, 1, DesignRules())
    without = design_template(CAT.get("6AU6"), "single", RAILS, 1, DesignRules(unsourced_allowance=0.0))
    assert with_it.from_memory and with_it.cutoff_volts < without.cutoff_volts
    assert with_it.fanout_limit <= without.fanout_limit


def test_stage_text_states_the_cutoff_and_the_allowance(run_cli):
    status, out, _ = run_cli("stage", "12AT7", "--plate-volts", 250, "--bias-volts", -100)
    assert status == 0
    cut = cutoff_grid_volts(CAT.get("12AT7"), plate_volts=262.5)  # the catalogue's 10 uA cut-off
    line = f"cut-off          {cut:+.1f} V at a load's grid (10 uA) with the plate at the highest supply, 262.5 V"
    assert line in out
    status, out, _ = run_cli("stage", "6AU6", "--plate-volts", 250, "--bias-volts", -100)
    assert status == 0 and "15% deeper: 6AU6's data are from memory" in out


def test_plan_outputs_mark_types_from_memory():
    plan = fixture_plan()  # invented fixture: its 5915 and 6AL5 are marked from memory
    assert "5915 (data from memory: wider design allowance)" in plan_summary(plan)
    lines = bom_lines(plan)
    assert any("5915 tube" in line.description and "data from memory" in line.description for line in lines)
    assert not any("12AU7 tube" in line.description and "memory" in line.description for line in lines)
