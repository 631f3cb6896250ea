"""The report's simulation section: a placeholder that ``tubeplan prove`` replaces with its results.

``tubeplan plan`` writes the placeholder between two marker comments;
``tubeplan prove`` (``planner.prove``) puts its table and plot between them.
"""

from __future__ import annotations

from dataclasses import dataclass

from markupsafe import Markup

from .engine import render

#: The proof's file in a plan directory (written by ``tubeplan prove``; a re-plan drops it with the old plan).
PROVE_FILE = "prove.json"

HTML_BEGIN, HTML_END = "<!-- tubeplan:simulation -->", "<!-- /tubeplan:simulation -->"
MD_BEGIN, MD_END = "<!-- tubeplan:simulation -->", "<!-- /tubeplan:simulation -->"

PLACEHOLDER = ("Not simulated yet: run `tubeplan prove DIR` (it needs the ngspice simulator) to run this plan's "
               "SPICE deck over every input vector at nominal and at worst-case corners; its simulated levels "
               "are then plotted here.")


@dataclass(frozen=True)
class ProofSection:
    """What report.html's simulation section shows of a proof, as plain text (the template escapes it).

    ``scope`` says what was run; ``problems`` (empty when ``holds``) what does not hold; ``headers``,
    ``rows`` and ``numeric`` the results table (``numeric``: the right-aligned columns);
    ``corner_notes`` one line per corner; ``plot_svg`` the plot, an ``<svg>`` element written by
    matplotlib's SVG backend (``planner.prove``), which escapes every text it draws.
    """

    scope: str
    holds: bool
    problems: tuple[str, ...]
    plot_svg: str
    headers: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    numeric: tuple[int, ...]
    corner_notes: tuple[str, ...]


def simulation_html(proof: ProofSection | None = None) -> str:
    """The simulation section of report.html: what ``proof`` found, or the placeholder.

    Cost: one template render (``templates/simulation.html.j2``).

    >>> simulation_html().splitlines()[:2]
    ['<!-- tubeplan:simulation -->', '<h2 id="simulation">Simulation (ngspice)</h2>']
    """
    # Markup: the markers are our own constant comments; the plot is matplotlib's serialised SVG,
    # whose texts (output and corner names among them) its XML writer has escaped.
    return render("simulation.html.j2", begin=Markup(HTML_BEGIN), end=Markup(HTML_END), proof=proof,
                  placeholder=PLACEHOLDER.replace("`", ""), plot=None if proof is None else Markup(proof.plot_svg))


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
