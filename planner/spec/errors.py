"""The one error type for mistakes in the user's files."""

from __future__ import annotations

from planner.errors import BadInput


class InputError(BadInput):
    """A mistake in a design or stock file, located by file and line.

    ``str(error)`` is the whole message the user sees:
    ``FILE:LINE: what is wrong, and what was expected``.

    >>> str(InputError("design.yaml", 4, "input 'a' is listed twice"))
    "design.yaml:4: input 'a' is listed twice"
    """

    def __init__(self, path: str, line: int, message: str):
        super().__init__(f"{path}:{line}: {message}")
        self.path = path
        self.line = line
        self.message = message
