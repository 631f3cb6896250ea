"""Typed field access on YAML mappings, each failure an InputError with its line."""

from __future__ import annotations

import difflib
import math

from .yamlfile import Mapping, Sequence, YamlFile

_MISSING = object()


def describe(value) -> str:
    """A short name for the type the user wrote, for messages."""
    if isinstance(value, Mapping):
        return "a mapping"
    if isinstance(value, Sequence):
        return "a list"
    if value is None:
        return "nothing"
    if isinstance(value, bool):
        return f"the boolean {str(value).lower()}"
    return repr(value)


def describe_name(value) -> str:
    """describe() for a place that wants a name: a boolean gets the hint to quote it.

    >>> print(describe_name(True))  # doctest: +ELLIPSIS
    the boolean true (YAML reads unquoted yes, no, on, off, true and false as booleans: put the name in ...
    """
    if isinstance(value, bool):
        return (f"{describe(value)} (YAML reads unquoted yes, no, on, off, true and false as booleans: put the "
                "name in quotes, e.g. 'on')")
    return describe(value)


#: Top-level keys that only a design file has, and those that only a stock file has.
DESIGN_KEYS = ("design", "inputs", "signals", "outputs", "registers")
STOCK_KEYS = ("supplies", "tubes", "diodes", "custom_types")


def check_not_swapped(file: YamlFile, top: Mapping, kind: str) -> None:
    """Refuse a stock file given as the design (``kind`` "design"), or a design given as the stock.

    Only when the file has none of its own kind's keys and some of the other's.
    """
    own, other, other_kind = (DESIGN_KEYS, STOCK_KEYS, "stock") if kind == "design" \
        else (STOCK_KEYS, DESIGN_KEYS, "design")
    foreign = [key for key in top if key in other]
    if foreign and not any(key in own for key in top):
        raise file.error(line_of(top, foreign[0]),
                         f"this looks like a {other_kind} file (it has {foreign[0]!r}), not a {kind} file: "
                         "were the design and stock files swapped? Give the design first and the stock "
                         "with --stock")


def line_of(mapping: Mapping, key: str) -> int:
    return mapping.lines.get(key, mapping.line)


def expect_mapping(file: YamlFile, value, line: int, what: str) -> Mapping:
    if not isinstance(value, Mapping):
        raise file.error(line, f"{what} must be a mapping of names to values, found {describe(value)}")
    return value


def expect_list(file: YamlFile, value, line: int, what: str) -> Sequence:
    if not isinstance(value, Sequence):
        raise file.error(line, f"{what} must be a list, found {describe(value)}")
    return value


def _absent(file: YamlFile, mapping: Mapping, key: str, what: str, default=_MISSING):
    """The value of an absent ``key``: ``default``, or an InputError when it is required."""
    if default is _MISSING:
        raise file.error(mapping.line, f"{what} is missing the required key {key!r}")
    return default


def check_keys(file: YamlFile, mapping: Mapping, allowed: tuple[str, ...], what: str,
               required: tuple[str, ...] = ()) -> None:
    """Refuse unknown keys (suggesting the nearest allowed one) and missing required keys."""
    for key in mapping:
        if key not in allowed:
            near = difflib.get_close_matches(key, allowed, n=1)
            hint = f"; did you mean {near[0]!r}?" if near else ""
            raise file.error(line_of(mapping, key),
                             f"unknown key {key!r} in {what}{hint} Expected one of: {', '.join(allowed)}")
    for key in required:
        if key not in mapping:
            _absent(file, mapping, key, what)


def get_number(file: YamlFile, mapping: Mapping, key: str, what: str, *, default=_MISSING,
               minimum: float | None = None, maximum: float | None = None,
               positive: bool = False, negative: bool = False) -> float:
    """A finite number (int or float, never a boolean) within the stated bounds."""
    if key not in mapping:
        return _absent(file, mapping, key, what, default)
    value = mapping[key]
    line = line_of(mapping, key)
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise file.error(line, f"{what}.{key} must be a number, found {describe(value)}")
    if positive and not value > 0:
        raise file.error(line, f"{what}.{key} must be greater than 0, found {value}")
    if negative and not value < 0:
        raise file.error(line, f"{what}.{key} must be negative (below 0), found {value}")
    if minimum is not None and value < minimum:
        raise file.error(line, f"{what}.{key} must be at least {minimum}, found {value}")
    if maximum is not None and value > maximum:
        raise file.error(line, f"{what}.{key} must be at most {maximum}, found {value}")
    return float(value)


def get_int(file: YamlFile, mapping: Mapping, key: str, what: str, *, default=_MISSING,
            minimum: int | None = None) -> int:
    """A whole number (never a boolean) of at least ``minimum``."""
    if key not in mapping:
        return _absent(file, mapping, key, what, default)
    value = mapping[key]
    line = line_of(mapping, key)
    if isinstance(value, bool) or not isinstance(value, int):
        raise file.error(line, f"{what}.{key} must be a whole number, found {describe(value)}")
    if minimum is not None and value < minimum:
        raise file.error(line, f"{what}.{key} must be at least {minimum}, found {value}")
    return value


def get_bool(file: YamlFile, mapping: Mapping, key: str, what: str, *, default: bool) -> bool:
    if key not in mapping:
        return default
    value = mapping[key]
    if not isinstance(value, bool):
        raise file.error(line_of(mapping, key), f"{what}.{key} must be true or false, found {describe(value)}")
    return value


def get_text(file: YamlFile, mapping: Mapping, key: str, what: str, *, default=_MISSING,
             choices: tuple[str, ...] | None = None) -> str:
    """Non-empty text, optionally one of ``choices``."""
    if key not in mapping:
        return _absent(file, mapping, key, what, default)
    value = mapping[key]
    line = line_of(mapping, key)
    if not isinstance(value, str) or not value.strip():
        raise file.error(line, f"{what}.{key} must be non-empty text, found {describe_name(value)}")
    if choices is not None and value not in choices:
        raise file.error(line, f"{what}.{key} must be one of {', '.join(choices)}; found {value!r}")
    return value
