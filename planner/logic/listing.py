"""Text and JSON views of minimised forms (for the ``tubeplan logic`` command)."""

from __future__ import annotations

from typing import Sequence

from tabulate import tabulate

from .minimise import Forms


def forms_document(rows: Sequence[tuple[str, Forms]]) -> dict:
    """``{"outputs": {name: {"sop", "inverted", "literals": {...}, "exact", "gap": {...}}}}``.

    Both expressions are in design-file syntax and equal the output on its
    care set; ``exact`` is True when both are proven minimum; ``gap`` per form is
    (literals - proven lower bound) / literals, 0 when proven, null when no bound
    is known (the heuristic's forms).

    >>> from .table import table_from_minterms
    >>> from .minimise import forms
    >>> forms_document([("y", forms(table_from_minterms(("a", "b"), [3])))])["outputs"]["y"]["inverted"]
    '~(~a | ~b)'
    """
    return {"outputs": {
        name: {
            "sop": fm.sop_text,
            "inverted": fm.inverted_text,
            "literals": {"sop": fm.sop.literals, "inverted": fm.inverted.literals},
            "exact": fm.exact,
            "gap": {"sop": fm.sop.gap, "inverted": fm.inverted.gap},
        } for name, fm in rows}}


def format_forms(rows: Sequence[tuple[str, Forms]]) -> str:
    """A table: per output, its SOP and its inverted form, literals, proven minimum or not.

    >>> from .table import table_from_minterms
    >>> from .minimise import forms
    >>> print(format_forms([("y", forms(table_from_minterms(("a", "b"), [1, 2])))]))
    output      inputs  polarity    form                  literals  minimum
    --------  --------  ----------  ------------------  ----------  ---------
    y                2  sum         a & ~b | ~a & b              4  proven
                        inverted    ~(a & b | ~a & ~b)           4  proven
    """
    table = []
    for name, fm in rows:
        n = len(fm.sop.names)
        table.append([name, n, "sum", fm.sop_text, fm.sop.literals, _proof(fm.sop)])
        table.append(["", "", "inverted", fm.inverted_text, fm.inverted.literals, _proof(fm.inverted)])
    return tabulate(table, headers=["output", "inputs", "polarity", "form", "literals", "minimum"])


def _proof(cover) -> str:
    """"proven", "gap 4.2 %" (an exact cover stopped by its budget) or "heuristic"."""
    if cover.exact:
        return "proven"
    return "heuristic" if cover.gap is None else f"gap {cover.gap * 100:.1f} %"
