"""Truth tables of a design's expressions with its named signals evaluated, never written out."""

from __future__ import annotations

from collections.abc import Iterable

from planner.formula import FALSE, Formula

from .table import Space, TruthTable, evaluate, reindex, table_from_minterms


def design_support(design, *exprs: Formula) -> tuple[str, ...]:
    """The design inputs that ``exprs`` reach, directly or through named signals, in input order.

    Cost: linear in the size of the design's expressions.
    """
    return _inputs_among(design, design.reached_names(*exprs))


def _inputs_among(design, names: set[str]) -> tuple[str, ...]:
    """The design inputs in ``names``, in input order."""
    return tuple(name for name in design.input_names if name in names)


def design_table(design, expr: Formula, dont_care: Formula | None = None,
                 names: Iterable[str] | None = None) -> TruthTable:
    """Truth table of ``expr`` (don't-cares ``dont_care``, None: none) over the design inputs ``names``.

    Each named signal is evaluated once, bit-parallel, from the tables of the
    inputs and earlier signals, so the cost is linear in the size of the design's
    expressions times 2**len(names) / word size, however often signals are reused
    (substituting them as text can grow exponentially). ``names`` defaults to
    :func:`design_support` of the two expressions.
    """
    if dont_care is None:
        dont_care = FALSE
    reached = design.reached_names(expr, dont_care)
    names = _inputs_among(design, reached) if names is None else tuple(names)
    space = Space(len(names))
    bits = {name: space.one[len(names) - 1 - k] for k, name in enumerate(names)}
    for signal in design.signals:
        if signal.name in reached:
            bits[signal.name] = evaluate(signal.expr, bits, space.full)
    on = evaluate(expr, bits, space.full)
    dc = evaluate(dont_care, bits, space.full)
    return TruthTable(names, on & (space.full ^ dc), dc)


def output_support(design, output) -> tuple[str, ...]:
    """The design inputs a design output depends on, in input order.

    A minterm list depends on the inputs it ranges over (its ``over``); an
    expression on those it reaches (:func:`design_support`). No formula
    is built for a minterm list.
    """
    if output.minterms is not None:
        return _inputs_among(design, set(output.over))
    return design_support(design, output.expr, output.dont_care)


def output_table(design, output, names: Iterable[str] | None = None) -> TruthTable:
    """Truth table of a design output over the design inputs ``names`` (default :func:`output_support`).

    A minterm list becomes its table directly (:func:`table_from_minterms`, then
    :func:`reindex` when ``names`` differs from its ``over``): cost linear in the
    list, never a formula of 2**n terms. An expression goes through
    :func:`design_table`.
    """
    names = output_support(design, output) if names is None else tuple(names)
    if output.minterms is None:
        return design_table(design, output.expr, output.dont_care, names)
    table = table_from_minterms(output.over, output.minterms, output.dont_care_minterms or ())
    return table if table.names == names else reindex(table, names)
