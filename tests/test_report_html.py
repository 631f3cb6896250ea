"""report.html and report.md: well-formed, self-contained, with the cautions; rendered in headless Chromium."""

from __future__ import annotations

import dataclasses
import json
import os
import shutil
import subprocess
import sys
import tempfile
from html.parser import HTMLParser
from pathlib import Path

import pytest

import planner
from planner.catalogue import builtin_catalogue
from planner.pipeline import plan_files
from planner.report import CAUTIONS, ProofSection, replace_section, simulation_html
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


def _page_in_fresh_process(cache: Path) -> str:
    """report.html of the fixture plan, rendered in a new interpreter with ``cache`` as the cache directory."""
    code = ("import sys\nfrom planner.catalogue import builtin_catalogue\n"
            "from planner.report.content import report_content\nfrom planner.report.html_report import report_html\n"
            "from test_report_fixtures import fixture_plan\n"
            "sys.stdout.write(report_html(report_content(fixture_plan(), builtin_catalogue(), "
            "design_path='fixture.yaml')))")
    tests = Path(__file__).resolve().parent
    env = dict(os.environ, TUBEPLAN_CACHE_DIR=str(cache),
               PYTHONPATH=os.pathsep.join([str(tests.parent), str(tests)]))
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env, timeout=300)
    assert done.returncode == 0, done.stderr
    return done.stdout


def test_compiled_templates_kept_in_the_cache_give_the_same_page(tmp_path):
    fresh = _page_in_fresh_process(tmp_path / "cache")
    kept = sorted((tmp_path / "cache" / "templates").iterdir())
    assert kept  # jinja2 stored the compiled templates
    assert _page_in_fresh_process(tmp_path / "cache") == fresh
    for path in kept:  # a corrupt entry is compiled again, not trusted
        path.write_bytes(b"not jinja2 bytecode")
    assert _page_in_fresh_process(tmp_path / "cache") == fresh
    (tmp_path / "a-file").write_text("")  # a cache that cannot be written only costs the compile
    assert _page_in_fresh_process(tmp_path / "a-file") == fresh == report_html(_content())


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


# Text a user may write where the report shows it: markup, a script and the characters HTML escapes.
HOSTILE = "<script>alert(1)</script> &\"'"


class _Elements(HTMLParser):
    """The text of every element with tag ``tag``, as the standard library's html.parser decodes it."""

    def __init__(self, tag: str):
        super().__init__(convert_charrefs=True)
        self.tag, self.depth, self.found = tag, 0, []

    def handle_starttag(self, tag, attrs):
        if tag == self.tag:
            self.depth += 1
            self.found.append("")

    def handle_endtag(self, tag):
        if tag == self.tag:
            self.depth -= 1

    def handle_data(self, data):
        if self.depth:
            self.found[-1] += data


def element_texts(page: str, tag: str) -> list[str]:
    parser = _Elements(tag)
    parser.feed(page)
    parser.close()
    return parser.found


def test_an_output_name_with_markup_is_escaped():
    """html.parser (Python's standard library) reads the name back as text, and finds no script element.

    The design parser accepts only identifiers as output names; a plan built some other way is held to the
    same page. The stage drawings stay those of the plain plan: schemdraw reads '&' in a label as markup.
    """
    content = _content()
    plan, names = content.plan, {"y": HOSTILE}
    plan = dataclasses.replace(plan, outputs=tuple((names.get(n, n), net) for n, net in plan.outputs),
                               forms=tuple((names.get(n, n), form) for n, form in plan.forms))
    page = report_html(dataclasses.replace(content, plan=plan))
    check_report_html(page)  # among its checks: no script element
    assert "<script>" not in page
    cells = element_texts(page, "td")
    assert cells[cells.index(HOSTILE):cells.index(HOSTILE) + 3] == [HOSTILE, "n1", "~(a | b)"]


# Invented data: a NAND on a box of 12AU7s; the design name, the winding's name and the file names hold markup.
HOSTILE_DESIGN = f"""\
design: {json.dumps(HOSTILE)}
inputs: [a, b]
outputs:
  n: ~(a & b)
"""
HOSTILE_WINDING = "H1 <i>&\"'"
HOSTILE_STOCK = f"""\
supplies:
  plate: {{volts: 225, max_ma: 200}}
  bias: {{volts: -95, max_ma: 50}}
  heater:
    - {{id: {json.dumps(HOSTILE_WINDING)}, volts: 6.3, max_amps: 5}}
tubes:
  12AU7: {{count: 6}}
diodes: solid-state
"""


def test_what_the_user_wrote_is_escaped_in_a_planned_report(tmp_path):
    """Design name, heater winding (table and chart) and file names come back as text through html.parser."""
    design, stock = tmp_path / "design <b>&\"'.yaml", tmp_path / "stock <b>&\"'.yaml"
    design.write_text(HOSTILE_DESIGN)
    stock.write_text(HOSTILE_STOCK)
    assert plan_files(design, stock, tmp_path / "out", quiet=True).planned
    page = (tmp_path / "out" / "report.html").read_text()
    text = check_report_html(page)  # among its checks: no script element and every caution
    assert "<script>" not in page and "<i>" not in page and "<b>&" not in page
    assert element_texts(page, "title") == [f"Tube logic plan: {HOSTILE}"]
    assert element_texts(page, "h1") == [f"Tube logic plan: {HOSTILE}"]
    assert element_texts(page, "footer")[0].startswith(f"tubeplan {planner.__version__}: plan for {HOSTILE}. ")
    assert element_texts(page, "code") == [str(design), str(stock)]
    assert HOSTILE_WINDING in element_texts(page, "td")
    assert f"heater {HOSTILE_WINDING} (6.3 V)" in element_texts(page, "text")  # the chart's SVG label
    assert text.count(HOSTILE) == 3


def test_the_simulation_section_escapes_names_and_keeps_the_plot():
    """A proof's section (what tubeplan prove puts in report.html), read back through html.parser.

    The names come as text and are escaped; the plot, matplotlib's SVG, goes in as it is.
    """
    plot = '<svg class="plot" xmlns="http://www.w3.org/2000/svg"><text>a &lt; b</text></svg>'
    proof = ProofSection(f"{HOSTILE}: every one of the 4 input vectors at 1 corners in ngspice", False,
                         (f"{HOSTILE} at corner nominal: margin -1 V",), plot,
                         ("output", "corner", "right"), ((HOSTILE, "nominal", "4/4"),), (2,), (f"{HOSTILE}: x=1",))
    section = simulation_html(proof)
    assert plot in section
    page = replace_section(report_html(_content()), section, html=True)
    text = check_report_html(page)  # among its checks: no script element and every caution
    assert "Not simulated yet" not in text
    assert element_texts(section, "p")[0] == (f"{HOSTILE}: every one of the 4 input vectors at 1 corners in "
                                              f"ngspice. Not proven: {HOSTILE} at corner nominal: margin -1 V")
    assert element_texts(section, "td") == [HOSTILE, "nominal", "4/4"]
    assert element_texts(section, "li") == [f"{HOSTILE}: x=1"]
