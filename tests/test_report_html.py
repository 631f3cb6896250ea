"""report.html and report.md: well-formed, self-contained, with the cautions; rendered in headless Chromium."""

from __future__ import annotations

import shutil
import subprocess
import tempfile
from html.parser import HTMLParser
from pathlib import Path

import pytest

from planner.catalogue import builtin_catalogue
from planner.report import CAUTIONS
from planner.report.content import report_content
from planner.report.html_report import report_html
from planner.report.markdown_report import report_markdown
from test_report_fixtures import fixture_diode_plan, fixture_plan

ARTIFACTS = Path(__file__).resolve().parent.parent / "test-artifacts"
VOID = {"meta", "br", "hr", "img", "input", "link", "wbr", "col", "area", "base", "source"}


class _Checker(HTMLParser):
    """Tag balance, external references and the text, by the standard library's html.parser."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.stack, self.errors, self.refs, self.text, self.tags = [], [], [], [], set()

    def handle_starttag(self, tag, attrs):
        self.tags.add(tag)
        for name, value in attrs:
            if name in ("src", "href", "xlink:href", "action", "data") and value and not value.startswith("#"):
                self.refs.append((tag, name, value))
        if tag not in VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag, attrs):
        self.tags.add(tag)
        for name, value in attrs:
            if name in ("src", "href", "xlink:href") and value and not value.startswith("#"):
                self.refs.append((tag, name, value))

    def handle_endtag(self, tag):
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"</{tag}> closes {self.stack[-1:] or 'nothing'}")
        else:
            self.stack.pop()

    def handle_data(self, data):
        self.text.append(data)


def _content(plan=None):
    return report_content(plan or fixture_plan(), builtin_catalogue(), design_path="fixture.yaml")


def check_report_html(page: str) -> str:
    """Parse ``page`` (html.parser); assert balance, no external references, the cautions. Returns its text."""
    checker = _Checker()
    checker.feed(page)
    checker.close()
    assert checker.errors == [] and checker.stack == []
    assert checker.refs == []
    assert not {"script", "link", "img", "iframe"} & checker.tags
    assert "url(" not in page and "@import" not in page
    text = " ".join(" ".join(checker.text).split())
    for heading, caution in CAUTIONS:
        assert heading in text and " ".join(caution.split()) in text
    return text


def test_report_parses_and_holds_the_cautions():
    page = report_html(_content())
    text = check_report_html(page)
    assert page.startswith("<!DOCTYPE html>")
    for needle in ("Bill of materials", "Wiring list", "NOR-2 on 12AU7", "NAND-2 on 5915", "follower on 12AU7",
                   "cold resistance", "common practice", "R1 47k", "heat to get rid of"):
        assert needle in text, needle
    assert page.count('<svg class="schematic"') == 3 and page.count('<svg class="chart"') == 1


def test_report_is_deterministic():
    assert report_html(_content()) == report_html(_content())
    assert report_markdown(_content()) == report_markdown(_content())


def test_markdown_report_holds_the_cautions_and_tables():
    md = report_markdown(_content())
    for heading, caution in CAUTIONS:
        assert f"**{heading}.** {caution}" in md
    assert "| n1 | V1.6 | s1 plate | 12AU7 tube | S1 |" in md
    assert "## Bill of materials" in md and "## Wiring list" in md
    assert md.count("## Safety first") == 2


def render_in_chromium(page_path: Path, png: Path) -> None:
    """Screenshot ``page_path`` with headless Chromium (Debian package chromium)."""
    binary = shutil.which("chromium") or shutil.which("chromium-browser")
    with tempfile.TemporaryDirectory(prefix="tubeplan-chromium-") as profile:
        done = subprocess.run(
            [binary, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
             "--disable-background-networking", "--disable-component-update", "--disable-sync",
             f"--user-data-dir={profile}", f"--screenshot={png}", "--window-size=1280,2000",
             page_path.resolve().as_uri()], capture_output=True, text=True, timeout=120)
    assert png.is_file() and png.stat().st_size > 10_000, done.stderr[-2000:]
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


needs_chromium = pytest.mark.skipif(shutil.which("chromium") is None and shutil.which("chromium-browser") is None,
                                    reason="headless Chromium is not installed (Debian package chromium)")


@needs_chromium
def test_report_renders_in_headless_chromium(tmp_path):
    page = tmp_path / "report.html"
    page.write_text(report_html(_content()))
    ARTIFACTS.mkdir(exist_ok=True)
    render_in_chromium(page, ARTIFACTS / "report_fixture.png")


def test_diode_and_stage_is_drawn():
    page = report_html(_content(fixture_diode_plan()))
    text = check_report_html(page)
    assert "NAND-3 on 6AU6" in text and all(f"D{i}" in text for i in (1, 2, 3))
    assert "R4 1.3M" in text and "R3 100k" in text  # the gate's pull-up and the screen shunt are drawn


def test_speedup_capacitors_are_named_in_the_drawing():
    import dataclasses

    from planner.mapping import Part
    plan = fixture_plan()
    cap = Part("C1", "capacitor", "22p", (("1", "a"), ("2", "S1.g1")), "speed-up", "S1", farads=22e-12)
    text = check_report_html(report_html(_content(dataclasses.replace(plan, parts=plan.parts + (cap,)))))
    assert "R2 220k + C1 22p across" in text
