"""Proving a plan directory in ngspice: every input vector (or a seeded sample) at every corner.

Private to ``planner.prove``; see docs/outputs.md ("tubeplan prove").

A combinational plan is run as DC sweeps: the deck's input sources become
behavioural sources that follow a swept index through a piecewise-linear
table (one vector per integer, vectors in Gray-code order so that one input
changes from each to the next and every operating point starts from its
neighbour's), one ``dc`` sweep per corner, all in one ngspice process. A plan
with registers is run as transients: the inputs step once a clock period, the
clock falls at mid-period with the plan's swing and period, and the
registers' and outputs' volts are read just before each falling edge.
"""

from __future__ import annotations

import random
import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from planner.report import NgspiceFailed, reset_press, run_ngspice, sanitise
from planner.spec import InputError

from .corners import Corner, corner_values, deck_params, plan_corners
from .directory import DECK_FILE, PlanDirectory, evaluate

VECTOR_LIMIT = 2 ** 12
"""Up to this many input vectors every vector is run; above it a seeded sample of this many."""

DEFAULT_SEED = 1
SWEEP_CHUNK = 256
"""Vectors per DC sweep; a corner with more is swept in chunks, with a progress line after each."""
CYCLE_LIMIT = 32
"""Most clock cycles of a register plan's transient."""


@dataclass(frozen=True)
class OutputCorner:
    """One output (or register, ``kind == "register"``) at one corner.

    ``right`` of ``total`` vectors (cycles for a register plan) read the
    plan's logic value (above or below the midpoint of the thresholds).
    ``lowest_high_volts`` / ``highest_low_volts`` over the vectors that
    should be high / low (None when there were none), against
    ``high_threshold_volts`` / ``low_threshold_volts`` (plan.json levels);
    ``margin_volts`` the smaller of the two margins. ``first_wrong`` is the
    first wrong vector (input -> bit, and register states for a register
    plan), with ``wrong_volts`` simulated and ``expected`` its logic value.
    """

    output: str
    corner: str
    kind: str
    right: int
    total: int
    high_threshold_volts: float
    low_threshold_volts: float
    lowest_high_volts: float | None
    highest_low_volts: float | None
    first_wrong: tuple[tuple[str, int], ...] | None = None
    wrong_volts: float | None = None
    expected: int | None = None

    @property
    def margin_volts(self) -> float | None:
        margins = []
        if self.lowest_high_volts is not None:
            margins.append(self.lowest_high_volts - self.high_threshold_volts)
        if self.highest_low_volts is not None:
            margins.append(self.low_threshold_volts - self.highest_low_volts)
        return min(margins) if margins else None

    @property
    def holds(self) -> bool:
        return self.right == self.total and (self.margin_volts is None or self.margin_volts >= 0)


@dataclass(frozen=True)
class Proof:
    """The proof of one plan directory.

    ``vectors``: the input vectors run at each corner (cycles for a register
    plan); ``exhaustive`` whether they are every vector, else a sample drawn
    with ``seed``; ``space`` the number of input vectors there are.
    ``corners`` in order; ``results`` per output and corner; ``failures``
    (corner, reason) where ngspice found no solution. ``clock``: for a register
    plan, (period, swing volts, fall seconds) of the clock it was run with.
    """

    design: str
    vectors: int
    space: int
    exhaustive: bool
    seed: int
    corners: tuple[Corner, ...]
    results: tuple[OutputCorner, ...]
    failures: tuple[tuple[str, str], ...] = ()
    clock: tuple[float, float, float] | None = None

    @property
    def holds(self) -> bool:
        return not self.failures and all(r.holds for r in self.results)


def _gray_rank(g: int) -> int:
    """The position of ``g`` in the Gray-code sequence (the inverse of k ^ (k >> 1))."""
    k = 0
    while g:
        k ^= g
        g >>= 1
    return k


def input_vectors(count: int, limit: int = VECTOR_LIMIT, seed: int = DEFAULT_SEED) -> tuple[tuple[int, ...], bool]:
    """Vectors over ``count`` inputs as integers (bit i = input i), in Gray-code order; and whether all.

    All 2**count when that is at most ``limit``, else ``limit`` distinct ones
    drawn with ``random.Random(seed)``. Cost O(vectors).

    >>> input_vectors(2)
    ((0, 1, 3, 2), True)
    >>> vectors, every = input_vectors(20, limit=5)
    >>> len(vectors), every
    (5, False)
    """
    space = 2 ** count
    if space <= limit:
        return tuple(k ^ (k >> 1) for k in range(space)), True
    sample = random.Random(seed).sample(range(space), limit)
    return tuple(sorted(sample, key=_gray_rank)), False


def _pwl_points(points: Sequence[tuple[float, float]]) -> str:
    """``x, y`` pairs for a pwl table, continued over lines of eight pairs."""
    pairs = [f"{x:.9g}, {y:.9g}" for x, y in points]
    return ",\n+ ".join(", ".join(pairs[k:k + 8]) for k in range(0, len(pairs), 8))


def _steps(bits: Sequence[int], high: float, low: float, at: Callable[[int], float], ramp: float):
    """Breakpoints of a level that takes ``bits[k]`` from ``at(k)`` on, ramping over ``ramp``."""
    points = [(at(0) - ramp - 1.0, high if bits[0] else low)]
    for k in range(1, len(bits)):
        if bits[k] != bits[k - 1]:
            points += [(at(k) - ramp, high if bits[k - 1] else low), (at(k), high if bits[k] else low)]
    points.append((at(len(bits) - 1) + 1.0, high if bits[-1] else low))
    return points


class _Deck:
    """The deck as written, taken apart for the proof: its params, input sources, outputs and clock."""

    def __init__(self, plan: PlanDirectory):
        self.plan = plan
        where = str(plan.path / DECK_FILE)
        text = plan.deck
        self.params = deck_params(text)
        for name in ("logic_high", "logic_low"):
            if name not in self.params:
                raise InputError(where, 0, f"has no .param {name}=...; re-plan or restore the deck")
        self.high, self.low = self.params["logic_high"], self.params["logic_low"]
        self.sources = {}
        for name, complement in plan.inputs:
            param = "in_" + sanitise(name)
            for inverted, prefix in ((False, "V_"), (True, "V_not_")):
                if inverted and not complement:
                    continue
                match = re.search(rf"(?mi)^{re.escape(prefix + param)}\s+(\S+)\s+(\S+)\s+.*$", text)
                if match is None:
                    raise InputError(where, 0, f"has no source {prefix + param} for input "
                                               f"{('~' if inverted else '') + name}; re-plan or restore the deck")
                self.sources[(name, inverted)] = (match.group(0), match.group(1), match.group(2))
        self.outputs = {}
        for name, _ in plan.outputs:
            node = "out_" + sanitise(name)
            if not re.search(rf"(?mi)^V_{re.escape(node)}\s+\S+\s+{re.escape(node)}\s", text):
                raise InputError(where, 0, f"has no node {node} for output {name}; re-plan or restore the deck")
            self.outputs[name] = node
        self.body = re.sub(r"(?mi)^\s*\.(op|end)\s*$", "", text)
        self.body = re.sub(r"(?mi)^\s*\.(tran|dc|ac)\b.*$", "", self.body)

    def with_sources(self, table: Callable[[int, str, bool], str]) -> str:
        """The deck body with each input source replaced by ``table(k, node, inverted)``'s line."""
        body = self.body
        for (name, inverted), (line, node, _) in sorted(self.sources.items()):
            index = [n for n, _ in self.plan.inputs].index(name)
            body = body.replace(line, table(index, node, inverted), 1)
        return body

    def corner_commands(self, corner: Corner) -> list[str]:
        return [f"alterparam {name}={value:.9g}" for name, value in corner_values(corner, self.params)] + ["reset"]


def _check(plan, corners, expected_rows, volts_rows, labels, vector_of, kinds) -> list[OutputCorner]:
    """Per output (label) and corner: right / total, extreme levels, first wrong vector."""
    results = []
    for label in labels:
        for c, corner in enumerate(corners):
            rows = volts_rows[c]
            if rows is None:
                continue
            high_t = plan.high_volts
            low_t = plan.low_threshold(label) if kinds[label] == "output" else plan.low_volts
            middle = (high_t + low_t) / 2
            right, lowest, highest, wrong = 0, None, None, None
            for k, want in enumerate(expected_rows):
                v = rows[k][label]
                if want[label]:
                    lowest = v if lowest is None else min(lowest, v)
                else:
                    highest = v if highest is None else max(highest, v)
                if (v > middle) == bool(want[label]):
                    right += 1
                elif wrong is None:
                    wrong = (vector_of(k), v, want[label])
            results.append(OutputCorner(label, corner.name, kinds[label], right, len(expected_rows), high_t, low_t,
                                        lowest, highest, *(wrong or (None, None, None))))
    return results


def _progress_reader(say, corners, what: str, vectors: int = 0):
    """A line handler that turns the control block's markers into progress lines."""
    def on_line(line: str) -> None:
        if say is None:
            return
        if line.startswith("@@corner "):
            k = int(line.split()[1])
            say(f"corner {k + 1} of {len(corners)} done ({corners[k].name}, {what})")
        elif line.startswith("@@vectors ") and vectors > SWEEP_CHUNK:
            k, done = map(int, line.split()[1:3])
            if done < vectors:
                say(f"corner {k + 1} of {len(corners)} ({corners[k].name}): {done} of {vectors} vectors")
    return on_line


def _read_table(text: str | None, count: int) -> list[list[float]] | None:
    """Rows of numbers of a ``wrdata`` file (single scale), or None when it is missing or short."""
    if text is None:
        return None
    rows = [[float(x) for x in line.split()] for line in text.splitlines() if line.strip()]
    return rows if len(rows) >= count and all(len(r) >= 2 for r in rows) else None


def _prove_combinational(plan, deck, corners, executable, say, limit, seed) -> Proof:
    names = [n for n, _ in plan.inputs]
    vectors, every = input_vectors(len(names), limit, seed)
    count = len(vectors)

    def table(index: int, node: str, inverted: bool) -> str:
        bits = [((v >> index) & 1) ^ int(inverted) for v in vectors]
        points = _steps(bits, deck.high, deck.low, float, 0.2)
        return f"B_prove_{'not_' if inverted else ''}{sanitise(names[index])} {node} 0 V=pwl(v(prove_vec),\n+ " \
               f"{_pwl_points(points)})"

    labels = sorted(deck.outputs)
    chunks = [(start, min(start + SWEEP_CHUNK, count)) for start in range(0, count, SWEEP_CHUNK)]
    lines = [deck.with_sources(table), "V_prove_vec prove_vec 0 0", ".control", "set noaskquit",
             "set wr_singlescale"]
    for k, corner in enumerate(corners):
        lines += deck.corner_commands(corner)
        for c, (start, stop) in enumerate(chunks):  # sweeps of a chunk each, so progress comes often
            lines += [f"dc V_prove_vec {start} {stop - 1} 1",
                      f"wrdata corner{k}_{c}.txt " + " ".join(f"v({deck.outputs[n]})" for n in labels),
                      "destroy all", f"echo @@vectors {k} {stop}"]
        lines.append(f"echo @@corner {k}")
    lines += ["quit", ".endc", ".end", ""]
    if say:
        say(f"{plan.design}: {count} input vectors{'' if every else f' (a sample, seed {seed})'} at "
            f"{len(corners)} corners in ngspice")
    files = tuple(f"corner{k}_{c}.txt" for k in range(len(corners)) for c in range(len(chunks)))
    _, written = run_ngspice("\n".join(lines), executable, files=files,
                             on_line=_progress_reader(say, corners, f"{count} vectors", count),
                             timeout_s=60.0 + 2.0 * count * len(corners))
    volts_rows, failures = [], []
    for k, corner in enumerate(corners):
        parts = [_read_table(written.get(f"corner{k}_{c}.txt"), stop - start)
                 for c, (start, stop) in enumerate(chunks)]
        rows = None if None in parts else [row for part in parts for row in part]
        if rows is None:
            if k == 0:
                raise NgspiceFailed("ngspice found no operating point for the deck at nominal")
            failures.append((corner.name, "ngspice found no operating point at every vector"))
            volts_rows.append(None)
            continue
        volts_rows.append([{n: row[1 + i] for i, n in enumerate(labels)} for row in rows[:count]])
    outputs = dict(plan.outputs)
    expected = []
    for v in vectors:
        nets = evaluate(plan, {n: (v >> i) & 1 for i, n in enumerate(names)}
                        | {f"~{n}": 1 - ((v >> i) & 1) for i, n in enumerate(names)})
        expected.append({n: nets[outputs[n]] for n in labels})

    def vector_of(k: int) -> tuple[tuple[str, int], ...]:
        return tuple((n, (vectors[k] >> i) & 1) for i, n in enumerate(names))

    results = _check(plan, corners, expected, volts_rows, labels, vector_of, dict.fromkeys(labels, "output"))
    return Proof(plan.design, count, 2 ** len(names), every, seed, tuple(corners), tuple(results), tuple(failures))


def _prove_registers(plan, deck, corners, executable, say, seed) -> Proof:
    names = [n for n, _ in plan.inputs]
    clock = plan.clock
    if clock is None:
        raise InputError(str(plan.path / "plan.json"), 0, "has registers but no clock; re-plan")
    match = re.search(r"(?mi)^V_clk\s+(\S+)\s+(\S+)\s+.*$", deck.body)
    if match is None:
        raise InputError(str(plan.path / DECK_FILE), 0, "has no clock source V_clk; re-plan or restore the deck")
    hold = min(2 ** len(plan.registers), 4) + 1  # one more than the counter wraps in, up to 5
    space = 2 ** len(names)
    if space * hold <= CYCLE_LIMIT:
        sequence = [k ^ (k >> 1) for k in range(space) for _ in range(hold)]
        every = True
    else:
        rng = random.Random(seed)
        sequence = [v for v in (rng.randrange(space) for _ in range(CYCLE_LIMIT // hold)) for _ in range(hold)]
        every = False
    cycles, period = len(sequence), clock.period_seconds
    fall = min(clock.fall_seconds, period / 50)
    ramp = period / 200

    def table(index: int, node: str, inverted: bool) -> str:
        bits = [((v >> index) & 1) ^ int(inverted) for v in sequence]
        points = _steps(bits, deck.high, deck.low, lambda k: k * period + ramp, ramp)
        points = [(max(t, 0.0), y) for t, y in points]
        points = [p for k, p in enumerate(points) if k == 0 or p[0] > points[k - 1][0]]
        return f"V_prove_{'not_' if inverted else ''}{sanitise(names[index])} {node} 0 PWL(\n+ " \
               f"{_pwl_points(points).replace(',', '')})"

    body = deck.with_sources(table) if names else deck.body
    pulse = (f"V_clk {match.group(1)} {match.group(2)} PULSE({clock.swing_volts:.9g} 0 {period / 2:.9g} "
             f"{fall:.9g} {fall:.9g} {period / 2 - fall:.9g} {period:.9g})")
    body = body.replace(match.group(0), pulse, 1)
    # The reset contact, pressed from the start to a fifth of the first period.
    body += "\n" + reset_press(sanitise(clock.reset_net), "bias", period / 5, ramp)
    registers = {r.name: r for r in plan.registers}
    nodes = {name: sanitise(reg.output) for name, reg in registers.items()}
    labels = sorted(deck.outputs) + sorted(registers)
    probes = [f"v({deck.outputs[n]})" for n in sorted(deck.outputs)] + [f"v({nodes[n]})" for n in sorted(registers)]
    lines = [body, ".control", "set noaskquit", "set wr_singlescale"]
    for k, corner in enumerate(corners):
        lines += deck.corner_commands(corner)
        lines += [f"tran {period / 400:.9g} {cycles * period:.9g}", "linearize",
                  f"wrdata corner{k}.txt " + " ".join(probes), "destroy all", f"echo @@corner {k}"]
    lines += ["quit", ".endc", ".end", ""]
    if say:
        say(f"{plan.design}: {cycles} clock cycles of {period * 1e3:.4g} ms at {len(corners)} corners in ngspice "
            "(transient)")
    files = tuple(f"corner{k}.txt" for k in range(len(corners)))
    _, written = run_ngspice("\n".join(lines), executable, files=files,
                             on_line=_progress_reader(say, corners, f"{cycles} cycles"),
                             timeout_s=120.0 + 60.0 * cycles * len(corners))
    state = {name: reg.reset for name, reg in registers.items()}
    expected, vectors = [], []
    outputs = dict(plan.outputs)
    for v in sequence:
        values = {n: (v >> i) & 1 for i, n in enumerate(names)} | {f"~{n}": 1 - ((v >> i) & 1)
                                                                    for i, n in enumerate(names)}
        for name, reg in registers.items():
            values[reg.output], values[reg.complement] = state[name], 1 - state[name]
        nets = evaluate(plan, values)
        expected.append({n: nets[outputs[n]] for n in deck.outputs} | dict(state))
        vectors.append(tuple((n, (v >> i) & 1) for i, n in enumerate(names)) + tuple(sorted(state.items())))
        state = {name: nets[reg.next] for name, reg in registers.items()}
    volts_rows, failures = [], []
    for k, corner in enumerate(corners):
        rows = _read_table(written.get(f"corner{k}.txt"), 2)
        if rows is None:
            if k == 0:
                raise NgspiceFailed("ngspice could not run the deck's transient at nominal")
            failures.append((corner.name, "ngspice could not run the transient"))
            volts_rows.append(None)
            continue
        volts_rows.append(_sample(rows, labels, [(c + 0.47) * period for c in range(cycles)]))
    kinds = dict.fromkeys(deck.outputs, "output") | dict.fromkeys(registers, "register")
    results = _check(plan, corners, expected, volts_rows, labels, lambda k: vectors[k], kinds)
    return Proof(plan.design, cycles, space, every, seed, tuple(corners), tuple(results), tuple(failures),
                 (period, clock.swing_volts, fall))


def _sample(rows: list[list[float]], labels: list[str], times: list[float]) -> list[dict[str, float]]:
    """Each label's volts at each time, interpolated linearly in a transient's rows (time first)."""
    out, j = [], 0
    for t in times:
        while j + 1 < len(rows) - 1 and rows[j + 1][0] < t:
            j += 1
        a, b = rows[j], rows[min(j + 1, len(rows) - 1)]
        w = 0.0 if b[0] == a[0] else min(max((t - a[0]) / (b[0] - a[0]), 0.0), 1.0)
        out.append({n: a[1 + i] + w * (b[1 + i] - a[1 + i]) for i, n in enumerate(labels)})
    return out


def prove_plan(plan: PlanDirectory, executable: str, *, say: Callable[[str], None] | None = None,
               limit: int = VECTOR_LIMIT, seed: int = DEFAULT_SEED) -> Proof:
    """Run the plan's own deck in ngspice at nominal and every corner; the proof.

    Raises InputError when the deck lacks what the proof drives or reads
    (input sources, output nodes, the clock source) and NgspiceFailed when
    ngspice cannot run it at all. Cost: one ngspice process; a DC point per
    vector and corner (a transient of the clock cycles per corner for a plan
    with registers).
    """
    deck = _Deck(plan)
    corners = plan_corners(deck.params) or (Corner("nominal", ()),)
    if plan.registers:
        return _prove_registers(plan, deck, corners, executable, say, seed)
    return _prove_combinational(plan, deck, corners, executable, say, limit, seed)
