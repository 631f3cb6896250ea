"""Reading and checking a design file: the logic the builder wants."""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from functools import cached_property
from planner.formula import FALSE, Formula, as_formula, conjoin, disjoin, negate, shape, substitute, symbol

from .errors import InputError
from .expressions import expression_names, is_valid_name, parse_expression
from .fields import (check_keys, check_not_swapped, describe, describe_name, expect_list, expect_mapping, get_bool,
                     get_int, get_text, line_of)
from .yamlfile import Mapping, YamlFile, read_yaml

#: Most inputs a minterm list may range over (2**20 assignments).
MAX_MINTERM_INPUTS = 20
#: Most names one block (a signal, an output or a next state) may use, counting the
#: signals it uses as one name each: the range of the two-level minimiser's heuristic.
MAX_BLOCK_INPUTS = 16

# The plan names its own nets n1, n2, ...; user names must not collide with them.
_RESERVED_NET = re.compile(r"n[0-9]+")


@dataclass(frozen=True)
class InputSpec:
    """A primary input; ``complement`` means its inverse is available as net ``~name``.

    ``fanout``: the most loads its source drives on each of its nets (None: an
    ideal source, any number).
    """

    name: str
    complement: bool = False
    fanout: int | None = None


@dataclass(frozen=True)
class SignalSpec:
    """A named intermediate expression over inputs and earlier signals (a sympy one is converted)."""

    name: str
    expr: Formula

    def __post_init__(self) -> None:
        object.__setattr__(self, "expr", as_formula(self.expr))


@dataclass(frozen=True)
class OutputSpec:
    """A design output: ``expr`` on the care set; ``dont_care`` where any value will do.

    For outputs given as minterm lists, ``over`` names the inputs (first = most
    significant bit) and ``minterms`` / ``dont_care_minterms`` keep the lists; the
    logic layer builds their truth tables from the lists directly
    (``planner.logic.output_table``). ``given_expr`` / ``given_dont_care`` are the
    expressions as read (None for a minterm list; ``given_dont_care`` None also means
    no don't-cares); ``expr`` and ``dont_care`` are always formulas, for a
    minterm list the sum of its minterms, built only when first asked for. Sympy
    expressions given are converted.
    """

    name: str
    given_expr: Formula | None
    given_dont_care: Formula | None = None
    text: str = ""
    over: tuple[str, ...] | None = None
    minterms: tuple[int, ...] | None = None
    dont_care_minterms: tuple[int, ...] | None = None

    def __post_init__(self) -> None:
        for name in ("given_expr", "given_dont_care"):
            if getattr(self, name) is not None:
                object.__setattr__(self, name, as_formula(getattr(self, name)))

    @cached_property
    def expr(self) -> Formula:
        """The function as a formula (for a minterm list: the OR of its minterms)."""
        if self.given_expr is not None:
            return self.given_expr
        return _sum_of_minterms(self.over, self.minterms)

    @cached_property
    def dont_care(self) -> Formula:
        """Where any value will do, as a formula (``FALSE`` when nowhere)."""
        if self.given_dont_care is not None:
            return self.given_dont_care
        if self.minterms is not None:
            return _sum_of_minterms(self.over, self.dont_care_minterms or ())
        return FALSE


@dataclass(frozen=True)
class RegisterSpec:
    """A clocked register: its output is net ``name`` (and ``~name``); ``next`` is its next state."""

    name: str
    next: Formula
    reset: int = 0

    def __post_init__(self) -> None:
        object.__setattr__(self, "next", as_formula(self.next))

    @property
    def next_output(self) -> str:
        """The name of the next-state function in the combinational view."""
        return f"{self.name}{NEXT_SUFFIX}"


#: Suffix naming a register's next-state function among the outputs of the combinational view.
NEXT_SUFFIX = "_next"


@dataclass(frozen=True)
class Design:
    """A whole design: inputs, named signals (topological order), outputs and registers."""

    name: str
    path: str
    inputs: tuple[InputSpec, ...]
    signals: tuple[SignalSpec, ...] = ()
    outputs: tuple[OutputSpec, ...] = ()
    lines: dict = field(default_factory=dict, compare=False, repr=False)
    registers: tuple[RegisterSpec, ...] = ()

    def combinational(self) -> "Design":
        """The logic between the registers as a design of its own.

        Register outputs become inputs with their complement available (a
        bistable has both outputs); each register's next state becomes an
        output ``NAME_next``. A design without registers is returned as is.

        >>> d = Design("t", "-", (InputSpec("t"),), registers=(RegisterSpec("q", parse_expression("q ^ t")),))
        >>> view = d.combinational()
        >>> [(i.name, i.complement) for i in view.inputs], [o.name for o in view.outputs]
        ([('t', False), ('q', True)], ['q_next'])
        """
        if not self.registers:
            return self
        inputs = self.inputs + tuple(InputSpec(reg.name, True) for reg in self.registers)
        outputs = self.outputs + tuple(OutputSpec(reg.next_output, reg.next, FALSE,
                                                  f"next state of register {reg.name}")
                                       for reg in self.registers)
        return Design(self.name, self.path, inputs, self.signals, outputs, self.lines)

    @property
    def input_names(self) -> tuple[str, ...]:
        return tuple(spec.name for spec in self.inputs)

    @property
    def signal_names(self) -> tuple[str, ...]:
        return tuple(spec.name for spec in self.signals)

    def reached_names(self, *exprs: Formula) -> set[str]:
        """Every input and signal name that ``exprs`` (formulas; sympy ones are converted) use,
        directly or through signals.

        >>> d = Design("d", "-", (InputSpec("a"), InputSpec("b")),
        ...            (SignalSpec("s", parse_expression("a & b")),))
        >>> sorted(d.reached_names(parse_expression("s | ~a")))
        ['a', 'b', 's']
        """
        reached: set[str] = set()
        for expr in exprs:
            reached |= expression_names(as_formula(expr))
        for signal in reversed(self.signals):  # topological order, so one backward pass suffices
            if signal.name in reached:
                reached |= expression_names(signal.expr)
        return reached

    def flattened_shape(self, expr: Formula) -> tuple[int, int]:
        """(nodes, depth) of ``expr`` once its signals are written out, without writing them out.

        Cost: linear in the size of the design's expressions (shared parts counted once
        per use, computed once).

        >>> d = Design("d", "-", (InputSpec("a"), InputSpec("b")),
        ...            (SignalSpec("s", parse_expression("a & b")),))
        >>> d.flattened_shape(parse_expression("s | ~s"))
        (8, 3)
        """
        shapes: dict[str, tuple[int, int]] = {}
        for signal in self.signals:
            shapes[signal.name] = shape(signal.expr, shapes)
        return shape(as_formula(expr), shapes)

    def flatten(self, expr: Formula, *, line: int = 0) -> Formula:
        """``expr`` with every named signal replaced by its definition (inputs only).

        Refuses (InputError at ``line``) an expression that would grow past
        MAX_FLATTENED_NODES or MAX_FLATTENED_DEPTH when written out: reusing a
        signal twice in each of a chain of signals doubles the size at every
        link, and writing such a block out could take longer than any build.

        >>> d = Design("d", "-", (InputSpec("a"), InputSpec("b")),
        ...            (SignalSpec("s", parse_expression("a & b")),))
        >>> d.flatten(parse_expression("s | ~a"))
        Formula('a & b | ~a')
        """
        nodes, depth = self.flattened_shape(expr)
        if nodes > MAX_FLATTENED_NODES or depth > MAX_FLATTENED_DEPTH:
            raise InputError(self.path, line,
                             f"this expression grows to {nodes} names and operators, nested {depth} deep, when "
                             f"its named signals are written out; the limits are {MAX_FLATTENED_NODES} and "
                             f"{MAX_FLATTENED_DEPTH}: keep it under 20 inputs so it can be checked by truth "
                             "table, or use each signal fewer times")
        needed = self.reached_names(expr)
        flat: dict[str, Formula] = {}
        for signal in self.signals:
            if signal.name in needed:
                flat[signal.name] = substitute(signal.expr, flat)
        return substitute(as_formula(expr), flat)


#: Largest expression (names plus operators) that ``Design.flatten`` writes out.
MAX_FLATTENED_NODES = 20_000
#: Deepest operator nesting that ``Design.flatten`` writes out.
MAX_FLATTENED_DEPTH = 150


def load_design(path) -> Design:
    """Read and check the design file at ``path``; raise InputError on any mistake."""
    return design_from_yaml(read_yaml(path))


def design_from_yaml(file: YamlFile) -> Design:
    top = expect_mapping(file, file.data, 1, "the design file")
    check_not_swapped(file, top, "design")
    check_keys(file, top, ("design", "inputs", "signals", "outputs", "registers"), "the design file",
               required=("design", "inputs"))
    name = get_text(file, top, "design", "the design file")
    inputs = _read_inputs(file, top)
    input_names = {spec.name for spec in inputs}

    signal_map = _optional_mapping(file, top, "signals")
    output_map = _optional_mapping(file, top, "outputs")
    register_map = _optional_mapping(file, top, "registers")
    if not output_map and not register_map:
        raise file.error(line_of(top, "outputs"), "the design has no outputs and no registers; "
                                                  "expected at least one output")

    _check_new_names(file, register_map, "register", input_names, {})
    input_names = input_names | set(register_map)
    _check_new_names(file, signal_map, "signal", input_names, {})
    _check_new_names(file, output_map, "output", input_names, signal_map.lines)
    for register in register_map:
        taken = register + NEXT_SUFFIX
        if taken in output_map or taken in signal_map:
            raise file.error(line_of(output_map if taken in output_map else signal_map, taken),
                             f"the name {taken!r} is taken by the next state of register {register!r}; "
                             "rename it")

    parsed = {}
    for signal, value in signal_map.items():
        parsed[signal] = _expression_value(file, signal_map, signal, value, f"signal {signal!r}")
    known = input_names | set(signal_map)  # input_names includes the registers here
    for signal, expr in parsed.items():
        _check_references(file, line_of(signal_map, signal), f"signal {signal!r}", expr, known,
                          set(output_map))
    order = _topological_order(file, signal_map, parsed)
    signals = tuple(SignalSpec(signal, parsed[signal]) for signal in order)

    outputs = tuple(_read_output(file, output_map, output, value, known,
                                 [s.name for s in inputs] + list(register_map),
                                 set(output_map))
                    for output, value in output_map.items())
    registers = tuple(_read_register(file, register_map, register, value, known, set(output_map))
                      for register, value in register_map.items())
    lines = {"inputs": dict((spec.name, line) for spec, line in zip(inputs, top["inputs"].lines)),
             "signals": dict(signal_map.lines), "outputs": dict(output_map.lines)}
    return Design(name, file.path, inputs, signals, outputs, lines, registers)


def _optional_mapping(file: YamlFile, top: Mapping, key: str) -> Mapping:
    """``top[key]`` as a mapping; an empty one with the right line when absent."""
    value = top.get(key)
    if value is None:
        value = Mapping.at(line_of(top, key))
    return expect_mapping(file, value, line_of(top, key), key)


def _read_register(file: YamlFile, register_map: Mapping, name: str, value, known: set,
                   outputs: set) -> RegisterSpec:
    line = line_of(register_map, name)
    what = f"register {name!r}"
    entry = expect_mapping(file, value, line, what)
    check_keys(file, entry, ("next", "reset"), what, required=("next",))
    expr = _expression_value(file, entry, "next", entry["next"], f"{what} next")
    _check_references(file, line_of(entry, "next"), f"{what} next", expr, known, outputs)
    reset = entry.get("reset", 0)
    if reset not in (0, 1) or isinstance(reset, bool):
        raise file.error(line_of(entry, "reset"), f"{what} reset must be 0 or 1, found {describe(reset)}")
    return RegisterSpec(name, expr, int(reset))


def _read_inputs(file: YamlFile, top: Mapping) -> tuple[InputSpec, ...]:
    items = expect_list(file, top["inputs"], line_of(top, "inputs"), "inputs")
    if not items:
        raise file.error(line_of(top, "inputs"), "inputs is empty; expected at least one input name")
    seen: dict[str, int] = {}
    inputs = []
    for item, line in zip(items, items.lines):
        if isinstance(item, Mapping):
            check_keys(file, item, ("name", "complement", "fanout"), "an input", required=("name",))
            name = item["name"]
            complement = get_bool(file, item, "complement", f"input {name!r}", default=False)
            fanout = get_int(file, item, "fanout", f"input {name!r}", default=None, minimum=1)
            line = line_of(item, "name")
        else:
            name, complement, fanout = item, False, None
        if not isinstance(name, str):
            raise file.error(line, f"an input name must be text, found {describe_name(name)}")
        _check_name(file, line, name, "input")
        if name in seen:
            raise file.error(line, f"input {name!r} is listed twice (first on line {seen[name]})")
        seen[name] = line
        inputs.append(InputSpec(name, complement, fanout))
    return tuple(inputs)


def _check_name(file: YamlFile, line: int, name: str, kind: str) -> None:
    if not is_valid_name(name):
        raise file.error(line, f"{kind} name {name!r} is not a valid name; expected letters, digits and "
                               "'_', starting with a letter or '_', and not one of not/and/or/xor")
    if _RESERVED_NET.fullmatch(name):
        raise file.error(line, f"{kind} name {name!r} is reserved: names n1, n2, ... are the plan's own nets")


def _check_new_names(file: YamlFile, mapping: Mapping, kind: str, inputs: set, signal_lines: dict) -> None:
    for name in mapping:
        line = line_of(mapping, name)
        if not isinstance(name, str):
            raise file.error(line, f"a {kind} name must be text, found {describe_name(name)}")
        _check_name(file, line, name, kind)
        if name in inputs:
            raise file.error(line, f"{kind} {name!r} has the same name as an input")
        if name in signal_lines:
            raise file.error(line, f"{kind} {name!r} has the same name as the signal on line "
                                   f"{signal_lines[name]}")


def _expression_value(file: YamlFile, mapping: Mapping, key: str, value, what: str) -> Formula:
    """Parse the expression given as the value of ``key`` (text or a bare 0 / 1)."""
    line = line_of(mapping, key)
    if isinstance(value, (str, int)):
        text = mapping.raw.get(key, value)
        if not isinstance(text, str):
            text = str(text)
        return parse_expression(text, path=file.path, line=line)
    raise file.error(line, f"{what} must be an expression such as 'a & ~b', found {describe(value)}")


def _check_references(file: YamlFile, line: int, what: str, expr, known: set, outputs: set) -> None:
    names = expression_names(expr)
    if len(names) > MAX_BLOCK_INPUTS:
        raise file.error(line, f"{what} uses {len(names)} inputs and signals; one block may use at most "
                               f"{MAX_BLOCK_INPUTS}: split it into named signals")
    for name in sorted(names):
        if name in known:
            continue
        if name in outputs:
            raise file.error(line, f"{what} uses output {name!r}; outputs cannot feed logic: "
                                   "define it under signals and use the signal")
        raise file.error(line, f"{what} uses {name!r}, which is not an input or a signal")


def _topological_order(file: YamlFile, signal_map: Mapping, parsed: dict) -> list[str]:
    """Signals ordered so each uses only earlier ones (file order where free); cycles are errors."""
    uses = {name: sorted(expression_names(expr) & set(parsed)) for name, expr in parsed.items()}
    state: dict[str, int] = {}  # 1: on the current path, 2: done
    order: list[str] = []
    for start in parsed:
        if state.get(start):
            continue
        path = [start]
        iterators = [iter(uses[start])]
        state[start] = 1
        while iterators:
            nxt = next(iterators[-1], None)
            if nxt is None:
                done = path.pop()
                iterators.pop()
                state[done] = 2
                order.append(done)
            elif state.get(nxt) == 1:
                cycle = path[path.index(nxt):] + [nxt]
                raise file.error(line_of(signal_map, nxt),
                                 "signals depend on each other in a cycle: " + " -> ".join(cycle))
            elif not state.get(nxt):
                state[nxt] = 1
                path.append(nxt)
                iterators.append(iter(uses[nxt]))
    return order


def _read_output(file: YamlFile, output_map: Mapping, name: str, value, known: set,
                 input_order: list[str], outputs: set) -> OutputSpec:
    line = line_of(output_map, name)
    what = f"output {name!r}"
    if not isinstance(value, Mapping):
        expr = _expression_value(file, output_map, name, value, what)
        _check_references(file, line, what, expr, known, outputs)
        return OutputSpec(name, expr, None, str(output_map.raw.get(name, value)))
    if "minterms" not in value and "expr" in value:
        check_keys(file, value, ("expr", "dont_care"), what, required=("expr",))
        expr = _expression_value(file, value, "expr", value["expr"], what)
        _check_references(file, line, what, expr, known, outputs)
        dont_care = None
        if "dont_care" in value:
            dont_care = _expression_value(file, value, "dont_care", value["dont_care"], f"{what} dont_care")
            _check_references(file, line_of(value, "dont_care"), f"{what} dont_care", dont_care, known, outputs)
        return OutputSpec(name, expr, dont_care, str(value.raw.get("expr", value["expr"])))
    check_keys(file, value, ("minterms", "dont_care", "over"), what, required=("minterms", "over"))
    over_list = expect_list(file, value["over"], line_of(value, "over"), f"{what} over")
    if not over_list:
        raise file.error(line_of(value, "over"), f"{what} over is empty; expected input names")
    if len(over_list) > MAX_MINTERM_INPUTS:
        raise file.error(line_of(value, "over"),
                         f"{what} ranges over {len(over_list)} inputs; the limit for a minterm list is "
                         f"{MAX_MINTERM_INPUTS}: split the block into named signals")
    over: list[str] = []
    for item, item_line in zip(over_list, over_list.lines):
        if not isinstance(item, str) or item not in input_order:
            raise file.error(item_line, f"{what} over lists {describe_name(item)}, which is not an input; "
                                        f"expected one of: {', '.join(input_order)}")
        if item in over:
            raise file.error(item_line, f"{what} over lists {item!r} twice")
        over.append(item)
    size = 1 << len(over)
    on = _read_indices(file, value, "minterms", what, size)
    dc = _read_indices(file, value, "dont_care", what, size) if "dont_care" in value else ()
    both = sorted(set(on) & set(dc))
    if both:
        raise file.error(line_of(value, "dont_care"),
                         f"{what}: minterm {both[0]} is listed both as a minterm and as a don't-care")
    text = f"minterms {list(on)} over {', '.join(over)}"
    return OutputSpec(name, None, None, text, tuple(over), on, dc)


def _read_indices(file: YamlFile, mapping: Mapping, key: str, what: str, size: int) -> tuple[int, ...]:
    items = expect_list(file, mapping[key], line_of(mapping, key), f"{what} {key}")
    seen = set()
    for item, line in zip(items, items.lines):
        if isinstance(item, bool) or not isinstance(item, int):
            raise file.error(line, f"{what} {key} must list whole numbers, found {describe(item)}")
        if not 0 <= item < size:
            raise file.error(line, f"{what} {key}: index {item} is out of range; with "
                                   f"{size.bit_length() - 1} inputs the indices run from 0 to {size - 1}")
        if item in seen:
            raise file.error(line, f"{what} {key}: index {item} is listed twice")
        seen.add(item)
    return tuple(sorted(seen))


def _sum_of_minterms(names, indices) -> Formula:
    """OR of the minterms ``indices`` over inputs ``names`` (first = most significant bit).

    Built only when a formula of a minterm list is asked for (proofs by SAT above
    20 inputs, flattening); truth tables come from the lists themselves.
    """
    width = len(names)
    return disjoin(*(conjoin(*(symbol(name) if (index >> (width - 1 - position)) & 1 else negate(symbol(name))
                               for position, name in enumerate(names))) for index in indices))


__all__ = ["NEXT_SUFFIX", "Design", "InputSpec", "OutputSpec", "RegisterSpec", "SignalSpec", "load_design"]
