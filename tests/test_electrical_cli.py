"""``tubeplan stage``: text, JSON, and exit status 2 when no template passes."""

import json


def test_stage_text_has_values_levels_and_caution(run_cli):
    status, out, err = run_cli("stage", "12AT7", "--plate-volts", 250, "--bias-volts", -100, "--fanout", 3)
    assert status == 0, err
    assert "plate load" in out and "divider" in out and "output low" in out
    assert "CAUTION" in out and "can kill" in out


def test_stage_json_keys(run_cli):
    status, out, err = run_cli("stage", "5915", "--plate-volts", 180, "--bias-volts", -90, "--means", "dual",
                               "--series", "E12", "--json")
    assert status == 0, err
    doc = json.loads(out)
    assert doc["tube"] == "5915" and doc["fanout_limit"] >= 1 and doc["plate_load_ohms"] > 0
    assert {"upper_ohms", "lower_ohms"} <= set(doc["divider"])
    assert {"high_volts", "low_volts"} <= set(doc["levels"])
    assert {"high_volts", "low_volts", "cutoff_volts"} <= set(doc["grid"])
    assert {"high_volts", "low_volts"} <= set(doc["margins"])
    assert doc["rules"]["series"] == "E12"


def test_stage_without_template_exits_2_with_the_reason(run_cli):
    status, out, err = run_cli("stage", "6AK5", "--plate-volts", 250, "--bias-volts", -100)
    assert status == 2 and out == ""
    assert "plate rating" in err and "82.5 V" in err  # 262.5 V worst case against 180 V (catalogue)


def test_stage_fanout_too_large_exits_2(run_cli):
    status, _, err = run_cli("stage", "12AX7", "--plate-volts", 180, "--bias-volts", -90, "--fanout", 40)
    assert status == 2 and "at most" in err


def test_stage_bad_arguments_exit_2(run_cli):
    status, _, err = run_cli("stage", "12AX9", "--plate-volts", 180, "--bias-volts", -90)
    assert status == 2 and "12AX7" in err and "Traceback" not in err
    status, _, err = run_cli("stage", "12AT7", "--plate-volts", 180, "--bias-volts", 90)
    assert status == 2 and "negative" in err
    status, _, err = run_cli("stage", "12AT7", "--plate-volts", 180, "--bias-volts", -90, "--fanout", 0)
    assert status == 2 and "--fanout" in err
