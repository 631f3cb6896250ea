"""Logic layer: truth tables as bitsets, two-level minimisation, equivalence.

Formulas (:mod:`planner.formula`) are the type at this layer's boundary (sympy
expressions are accepted and converted); inside, functions are integers used as
bitsets (bit ``i`` = input assignment ``i``, ``names[0]`` most significant).

Public API
----------
- :class:`TruthTable`, :func:`table_from_expr`, :func:`table_from_minterms`
- :class:`Cube`, :class:`Cover` (``literals``, ``terms``, ``to_expr()``, ``text()``)
- :func:`minimise`, :func:`minimise_complement`, :func:`prime_implicants`; :class:`BlockTooLarge`
  (a function past the minimiser's limits of work or memory)
- :class:`Forms`, :func:`forms`, :func:`expr_forms`, :func:`used_inputs`
- :func:`equivalent`, :func:`counterexample`
- :func:`design_table`, :func:`design_support` (a design's expressions with signals evaluated)
- :func:`output_table`, :func:`output_support` (a design output, minterm lists read directly)
- :func:`format_expr`, :func:`symbol_names`
- :func:`forms_document`, :func:`format_forms` (views for ``tubeplan logic``)
"""

from .cover import Cover, Cube
from .design import design_support, design_table, output_support, output_table
from .isop import BlockTooLarge
from .equivalence import EXHAUSTIVE_LIMIT, counterexample, equivalent
from .listing import format_forms, forms_document
from .minimise import Forms, expr_forms, forms, minimise, minimise_complement, used_inputs
from .primes import prime_implicants
from .table import MAX_TABLE_INPUTS, TruthTable, symbol_names, table_from_expr, table_from_minterms
from .text import format_expr

__all__ = [
    "design_support", "design_table", "output_support", "output_table",
    "BlockTooLarge", "Cover", "Cube", "EXHAUSTIVE_LIMIT", "Forms", "MAX_TABLE_INPUTS", "TruthTable", "counterexample",
    "equivalent", "expr_forms", "format_expr", "format_forms", "forms", "forms_document", "minimise",
    "minimise_complement", "prime_implicants", "symbol_names", "table_from_expr", "table_from_minterms",
    "used_inputs",
]
