"""Front end: design and stock files, checked, with file:line messages.

Public API: :func:`load_design`, :func:`load_stock`, :func:`parse_expression`,
the dataclasses they return, and :class:`InputError`.
"""

from .design import (MAX_BLOCK_INPUTS, MAX_MINTERM_INPUTS, NEXT_SUFFIX, Design, InputSpec, OutputSpec, RegisterSpec,
                     SignalSpec, load_design)
from .errors import InputError
from .expressions import MAX_EXPRESSION_CHARS, MAX_EXPRESSION_DEPTH, expression_names, is_valid_name, parse_expression
from .stock import DEFAULT_OBJECTIVE, Objective, Stock, Supply, TubeStock, Winding, load_stock
from .yamlfile import MAX_FILE_BYTES

__all__ = [
    "DEFAULT_OBJECTIVE", "MAX_BLOCK_INPUTS", "Design", "InputError", "InputSpec", "MAX_EXPRESSION_CHARS",
    "MAX_EXPRESSION_DEPTH", "MAX_FILE_BYTES", "MAX_MINTERM_INPUTS", "NEXT_SUFFIX", "Objective", "OutputSpec",
    "RegisterSpec", "SignalSpec", "Stock", "Supply",
    "TubeStock", "Winding", "expression_names", "is_valid_name", "load_design", "load_stock", "parse_expression",
]
