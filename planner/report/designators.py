"""Ordering and formatting of reference designators (IEEE 315 class letters: V, R, D, C), and counts."""

from __future__ import annotations

import re

_PARTS = re.compile(r"(\d+)")


def counted(number: int, singular: str, plural: str | None = None) -> str:
    """``number`` and the noun in the form that agrees with it.

    >>> counted(1, "logic stage"), counted(3, "logic stage"), counted(1, "line", "lines")
    ('1 logic stage', '3 logic stages', '1 line')
    """
    return f"{number} {singular if number == 1 else plural or singular + 's'}"


def natural_key(text: str) -> tuple:
    """Sort key that orders embedded numbers by value: V2 before V10, "n3.g1" after "n3".

    >>> sorted(["V10", "V2", "R1", "n10", "n9"], key=natural_key)
    ['R1', 'V2', 'V10', 'n9', 'n10']
    """
    return tuple((0, int(piece), "") if piece.isdigit() else (1, 0, piece)
                 for piece in _PARTS.split(text) if piece != "")


def ranges(refs) -> str:
    """Designators joined compactly, consecutive runs of one class as ranges.

    >>> ranges(["R3", "R1", "R2", "R5", "V1"])
    'R1-R3, R5, V1'
    """
    items = sorted(set(refs), key=natural_key)
    out: list[str] = []
    run: list[tuple[str, int]] = []

    def flush() -> None:
        if not run:
            return
        first, last = run[0], run[-1]
        if len(run) >= 3:
            out.append(f"{first[0]}{first[1]}-{last[0]}{last[1]}")
        else:
            out.extend(f"{p}{n}" for p, n in run)
        run.clear()

    for ref in items:
        match = re.fullmatch(r"([A-Za-z]+)(\d+)", ref)
        if match is None:
            flush()
            out.append(ref)
            continue
        prefix, number = match.group(1), int(match.group(2))
        if run and (run[-1][0] != prefix or run[-1][1] + 1 != number):
            flush()
        run.append((prefix, number))
    flush()
    return ", ".join(out)
