"""Atomic output: refuse what is not an earlier plan, replace an earlier plan, never leave half a plan."""

from __future__ import annotations

import os
import re

import pytest

from planner.report import MARKER, write_plan
from planner.report import write as write_module
from planner.spec import InputError
from test_report_fixtures import fixture_plan

FILES = ["bom.csv", "bom.md", "plan.cir", "plan.json", "report.html", "report.md", "wiring.csv"]


def _snapshot(directory):
    return {p.name: p.read_bytes() for p in sorted(directory.iterdir())}


def _leftovers(parent):
    return sorted(p.name for p in parent.iterdir() if "tubeplan-" in p.name)


def test_writes_every_file_and_the_marker(tmp_path):
    out = tmp_path / "plan"
    paths = write_plan(fixture_plan(), out)
    assert [p.name for p in paths] == FILES
    assert sorted(p.name for p in out.iterdir()) == sorted(FILES + [MARKER])
    assert _leftovers(tmp_path) == []


def test_creates_missing_parents(tmp_path):
    out = tmp_path / "a" / "b" / "plan"
    write_plan(fixture_plan(), out)
    assert (out / "plan.json").is_file()


def test_refuses_a_regular_file(tmp_path):
    target = tmp_path / "notes.txt"
    target.write_text("mine")
    message = f"{target}:0: the output path is an existing file, not a plan directory; choose another --out"
    with pytest.raises(InputError, match=f"^{re.escape(message)}$") as caught:
        write_plan(fixture_plan(), target)
    assert caught.value.path == str(target) and caught.value.line == 0
    assert "file" in caught.value.message
    assert target.read_text() == "mine" and _leftovers(tmp_path) == []


def test_refuses_a_directory_without_the_marker(tmp_path):
    target = tmp_path / "photos"
    target.mkdir()
    (target / "holiday.jpg").write_bytes(b"\xff\xd8")
    message = (f"{target}:0: the output directory holds files but no {MARKER} marker, so it is not an earlier plan "
               "and will not be replaced; choose another --out")
    with pytest.raises(InputError, match=f"^{re.escape(message)}$") as caught:
        write_plan(fixture_plan(), target)
    assert MARKER in caught.value.message and caught.value.line == 0
    assert _snapshot(target) == {"holiday.jpg": b"\xff\xd8"} and _leftovers(tmp_path) == []


def test_refuses_a_symbolic_link(tmp_path):
    real = tmp_path / "real"
    write_plan(fixture_plan(), real)
    link = tmp_path / "link"
    link.symlink_to(real)
    message = f"{link}:0: the output path is a symbolic link; give a plain directory path"
    with pytest.raises(InputError, match=f"^{re.escape(message)}$"):
        write_plan(fixture_plan(), link)


def test_an_empty_directory_receives_a_plan(tmp_path):
    target = tmp_path / "empty"
    target.mkdir()
    write_plan(fixture_plan(), target)
    assert (target / MARKER).is_file()


@pytest.mark.parametrize("swap", [True, False])
def test_a_replan_replaces_only_the_tools_files(tmp_path, monkeypatch, swap):
    """The earlier plan's own files (listed in its marker) are replaced; what the user added is kept.

    Both with the atomic swap and with the rename-aside fallback.
    """
    if not swap:
        monkeypatch.setattr(write_module, "_exchange", lambda first, second: False)
    out = tmp_path / "plan"
    write_plan(fixture_plan(), out)
    assert (out / MARKER).read_text().splitlines()[-len(FILES):] == FILES  # the marker lists what it wrote
    (out / "scribble.txt").write_text("left by hand in the old plan")
    (out / "photos").mkdir()
    (out / "photos" / "chassis.jpg").write_bytes(b"\xff\xd8")
    (out / "latest").symlink_to("photos")
    (out / "plan.json").write_text("old")
    notes = []
    write_plan(fixture_plan(), out, notify=notes.append)
    assert sorted(p.name for p in out.iterdir()) == sorted(FILES + [MARKER, "latest", "photos", "scribble.txt"])
    assert (out / "plan.json").read_text().startswith("{")
    assert (out / "scribble.txt").read_text() == "left by hand in the old plan"
    assert (out / "photos" / "chassis.jpg").read_bytes() == b"\xff\xd8"
    assert os.readlink(out / "latest") == "photos"
    assert len(notes) == 1 and "latest, photos, scribble.txt" in notes[0]
    assert _leftovers(tmp_path) == []


def test_a_file_of_the_users_with_a_plan_files_name_is_refused(tmp_path):
    """A marker that does not list report.md means the user put it there: refused, not replaced."""
    out = tmp_path / "plan"
    write_plan(fixture_plan(), out)
    marker = out / MARKER
    marker.write_text(marker.read_text().replace("report.md\n", ""))
    (out / "report.md").write_text("my own report")
    message = (f"{out / 'report.md'}:0: this file was not written by tubeplan, and the new plan writes a file of "
               "that name; move or rename it, or choose another --out")
    with pytest.raises(InputError, match=f"^{re.escape(message)}$") as caught:
        write_plan(fixture_plan(), out)
    assert caught.value.path == str(out / "report.md") and "not written by tubeplan" in caught.value.message
    assert (out / "report.md").read_text() == "my own report" and _leftovers(tmp_path) == []


def test_an_older_marker_without_a_list_means_the_plan_files(tmp_path):
    out = tmp_path / "plan"
    write_plan(fixture_plan(), out)
    (out / MARKER).write_text("This directory was written by tubeplan plan and is replaced whole by the next run.\n")
    (out / "notes.txt").write_text("mine")
    write_plan(fixture_plan(), out)
    assert (out / "notes.txt").read_text() == "mine" and "bom.csv" in (out / MARKER).read_text()


def test_an_input_file_among_the_replaced_files_is_refused(tmp_path):
    """The design and stock files are never inside what is replaced."""
    out = tmp_path / "plan"
    write_plan(fixture_plan(), out)
    design = out / "plan.json"  # the user's design saved under a name the plan writes
    message = (f"{design}:0: this input file would be replaced by the plan's own plan.json; move it out of the "
               "plan directory or choose another --out")
    with pytest.raises(InputError, match=f"^{re.escape(message)}$") as caught:
        write_plan(fixture_plan(), out, design_path=design)
    assert caught.value.path == str(design) and "would be replaced" in caught.value.message
    kept = out / "design.yaml"
    kept.write_text("design: mine\n")
    write_plan(fixture_plan(), out, design_path=kept)
    assert kept.read_text() == "design: mine\n"


def test_what_changes_during_the_swap_is_kept_beside(tmp_path, monkeypatch):
    """A file written into the old plan between mirror and swap is not deleted with the old plan."""
    out = tmp_path / "plan"
    write_plan(fixture_plan(), out)
    real_install = write_module._install

    def late_writer(new, out_dir, replace):
        (out_dir / "late.txt").write_text("written at the last moment")
        real_install(new, out_dir, replace)

    monkeypatch.setattr(write_module, "_install", late_writer)
    notes = []
    write_plan(fixture_plan(), out, notify=notes.append)
    kept = [p for p in tmp_path.iterdir() if ".tubeplan-kept-" in p.name]
    assert len(kept) == 1 and (kept[0] / "late.txt").read_text() == "written at the last moment"
    assert str(kept[0]) in notes[-1]


def test_replacement_without_an_atomic_swap(tmp_path, monkeypatch):
    """Where renameat2 cannot swap, the old plan is renamed aside and removed after the new one is in."""
    monkeypatch.setattr(write_module, "_exchange", lambda first, second: False)
    out = tmp_path / "plan"
    write_plan(fixture_plan(), out)
    (out / "plan.json").write_text("old")
    write_plan(fixture_plan(), out)
    assert (out / "plan.json").read_text().startswith("{") and _leftovers(tmp_path) == []


@pytest.mark.parametrize("problem", [RuntimeError("disk trouble"), KeyboardInterrupt()])
def test_a_failure_mid_write_leaves_the_old_plan_intact(tmp_path, monkeypatch, problem):
    out = tmp_path / "plan"
    write_plan(fixture_plan(), out)
    before = _snapshot(out)

    def broken(content):
        raise problem

    monkeypatch.setattr(write_module, "report_html", broken)  # written after plan.cir and plan.json
    with pytest.raises(type(problem), match=f"^{re.escape(str(problem))}$"):
        write_plan(fixture_plan(), out)
    assert _snapshot(out) == before
    assert _leftovers(tmp_path) == []


def test_a_failure_on_a_first_run_leaves_nothing(tmp_path, monkeypatch):
    monkeypatch.setattr(write_module, "report_markdown", lambda content: 1 / 0)
    with pytest.raises(ZeroDivisionError, match="^division by zero$"):
        write_plan(fixture_plan(), tmp_path / "plan")
    assert list(tmp_path.iterdir()) == []


def test_a_failed_swap_restores_the_old_plan(tmp_path, monkeypatch):
    """If the second rename of the fallback fails, the old plan is renamed back."""
    out = tmp_path / "plan"
    write_plan(fixture_plan(), out)
    before = _snapshot(out)
    monkeypatch.setattr(write_module, "_exchange", lambda first, second: False)
    real_rename = os.rename
    calls = []

    def flaky(src, dst):
        calls.append((src, dst))
        if len(calls) == 2:
            raise OSError(5, "I/O error")
        return real_rename(src, dst)

    monkeypatch.setattr(write_module.os, "rename", flaky)
    with pytest.raises(OSError, match=r"^\[Errno 5\] I/O error$"):
        write_plan(fixture_plan(), out)
    monkeypatch.setattr(write_module.os, "rename", real_rename)
    assert _snapshot(out) == before and _leftovers(tmp_path) == []


def test_a_directory_is_never_taken_for_a_plan_file(tmp_path):
    """tubeplan writes no directories: one named in the marker (edited by hand) is still kept."""
    out = tmp_path / "plan"
    write_plan(fixture_plan(), out)
    (out / MARKER).write_text((out / MARKER).read_text() + "photos\n")
    (out / "photos").mkdir()
    (out / "photos" / "v1.jpg").write_bytes(b"\xff\xd8")
    write_plan(fixture_plan(), out)
    assert (out / "photos" / "v1.jpg").read_bytes() == b"\xff\xd8" and _leftovers(tmp_path) == []
