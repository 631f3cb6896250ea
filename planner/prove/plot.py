"""The plot of a proof's simulated levels: per output, the lowest high and highest low at each corner.

Private to ``planner.prove``. matplotlib draws it (imported here only, so only
the commands that plot pay for it) with its SVG back end and no pyplot state:
text stays text, ids are salted with a fixed string and the file carries no
date, so the same proof gives the same bytes.
"""

from __future__ import annotations

import io
import re

from .run import Proof

_HIGH, _LOW, _BAD, _BAND = "#2f5d8a", "#3c8d4f", "#a8321e", "#f3e3df"


def levels_svg(proof: Proof) -> str:
    """An inline ``<svg class="plot">`` of the proof's levels. Cost: one matplotlib figure, O(outputs x corners).

    Per output a panel: the corners along x; at each, the lowest simulated
    high (a downward triangle) and the highest simulated low (an upward one),
    with a bar from the family's threshold to it whose length is the margin
    (red where it is negative); the thresholds as lines, the band between
    them (where no level may sit) shaded.
    """
    import matplotlib
    from matplotlib.backends.backend_svg import FigureCanvasSVG
    from matplotlib.figure import Figure

    outputs = sorted({r.output for r in proof.results}, key=lambda n: (next(
        r.kind for r in proof.results if r.output == n) != "output", n))
    corners = [c.name for c in proof.corners]
    rc = {"svg.hashsalt": "tubeplan", "svg.fonttype": "none", "font.size": 8, "font.family": "DejaVu Sans",
          "axes.spines.top": False, "axes.spines.right": False}
    with matplotlib.rc_context(rc):
        figure = Figure(figsize=(max(6.0, 0.55 * len(corners) + 2.0), 1.9 * len(outputs) + 1.4))
        FigureCanvasSVG(figure)
        axes = figure.subplots(len(outputs), 1, sharex=True, squeeze=False)[:, 0]
        for ax, name in zip(axes, outputs):
            rows = {r.corner: r for r in proof.results if r.output == name}
            first = next(iter(rows.values()))
            high_t, low_t = first.high_threshold_volts, first.low_threshold_volts
            ax.axhspan(low_t, high_t, color=_BAND, zorder=0)
            ax.axhline(high_t, color=_HIGH, lw=0.8, ls="--")
            ax.axhline(low_t, color=_LOW, lw=0.8, ls="--")
            for x, corner in enumerate(corners):
                r = rows.get(corner)
                if r is None:
                    continue
                if r.lowest_high_volts is not None:
                    ok = r.lowest_high_volts >= high_t
                    ax.plot([x, x], [high_t, r.lowest_high_volts], color=_HIGH if ok else _BAD, lw=3, alpha=0.45)
                    ax.plot(x, r.lowest_high_volts, "v", color=_HIGH if ok else _BAD, ms=5)
                if r.highest_low_volts is not None:
                    ok = r.highest_low_volts <= low_t
                    ax.plot([x, x], [low_t, r.highest_low_volts], color=_LOW if ok else _BAD, lw=3, alpha=0.45)
                    ax.plot(x, r.highest_low_volts, "^", color=_LOW if ok else _BAD, ms=5)
                if r.right < r.total:
                    ax.plot(x, (high_t + low_t) / 2, "x", color=_BAD, ms=7, mew=1.5)
            ax.set_ylabel(f"{name}\nvolts")
            ax.set_title(f"{name}: lowest high (v) and highest low (^) against {high_t:g} V and {low_t:g} V",
                         loc="left", fontsize=8)
            ax.grid(axis="y", lw=0.3, color="#d5dae0")
        axes[-1].set_xticks(range(len(corners)), corners, rotation=35, ha="right")
        figure.subplots_adjust(left=0.1, right=0.98, top=0.97, bottom=max(0.06, 1.2 / figure.get_figheight()),
                               hspace=0.45)
        buffer = io.StringIO()
        figure.savefig(buffer, format="svg", metadata={"Date": None, "Creator": None})
    text = buffer.getvalue()
    text = text[text.index("<svg"):]
    text = re.sub(r"<metadata>.*?</metadata>", "", text, flags=re.DOTALL)
    # The axes scale to the data, so nothing needs clipping; without the clip paths the page holds no
    # url() reference at all (the report's self-containment check looks for none).
    text = re.sub(r'\s*clip-path="url\(#[^)]*\)"', "", text)
    text = re.sub(r"<clipPath\b.*?</clipPath>\s*", "", text, flags=re.DOTALL)
    return text.replace("<svg ", '<svg class="plot" role="img" aria-label="simulated levels per output and corner" ',
                        1)
