"""The report's simulation section: a placeholder that ``tubeplan prove`` replaces with its results.

``tubeplan plan`` writes the placeholder between two marker comments;
``tubeplan prove`` (``planner.prove``) puts its table and plot between them.
"""

from __future__ import annotations

from html import escape

#: The proof's file in a plan directory (written by ``tubeplan prove``; a re-plan drops it with the old plan).
PROVE_FILE = "prove.json"

HTML_BEGIN, HTML_END = "<!-- tubeplan:simulation -->", "<!-- /tubeplan:simulation -->"
MD_BEGIN, MD_END = "<!-- tubeplan:simulation -->", "<!-- /tubeplan:simulation -->"

PLACEHOLDER = ("Not simulated yet: run `tubeplan prove DIR` (it needs the ngspice simulator) to run this plan's "
               "SPICE deck over every input vector at nominal and at worst-case corners; its simulated levels "
               "are then plotted here.")


def simulation_html(body: str | None = None) -> str:
    """The simulation section of report.html, with ``body`` (HTML) or the placeholder."""
    inner = body if body is not None else f'<p class="note">{escape(PLACEHOLDER).replace("`", "")}</p>'
    return "\n".join([HTML_BEGIN, '<h2 id="simulation">Simulation (ngspice)</h2>', inner, HTML_END])


def simulation_markdown(body: str | None = None) -> str:
    """The simulation section of report.md, with ``body`` (Markdown) or the placeholder."""
    return "\n".join([MD_BEGIN, "## Simulation (ngspice)", "", body if body is not None else PLACEHOLDER, "",
                      MD_END])


def replace_section(text: str, section: str, *, html: bool) -> str:
    """``text`` (a report) with its simulation section replaced by ``section``.

    A report without the markers (hand-edited, or from an older tubeplan)
    gets the section before its footer (HTML) or at its end (Markdown).

    >>> replace_section("a\\n<!-- tubeplan:simulation -->\\nold\\n<!-- /tubeplan:simulation -->\\nb",
    ...                 "<!-- tubeplan:simulation -->new<!-- /tubeplan:simulation -->", html=False)
    'a\\n<!-- tubeplan:simulation -->new<!-- /tubeplan:simulation -->\\nb'
    """
    begin, end = (HTML_BEGIN, HTML_END) if html else (MD_BEGIN, MD_END)
    start, stop = text.find(begin), text.find(end)
    if start >= 0 and stop > start:
        return text[:start] + section + text[stop + len(end):]
    anchor = text.rfind("<footer") if html else -1
    if anchor < 0:
        return text.rstrip("\n") + "\n\n" + section + "\n"
    return text[:anchor] + section + "\n" + text[anchor:]
