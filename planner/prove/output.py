"""What a proof prints and writes: the terminal table, prove.json, the reports' simulation section.

Private to ``planner.prove``.
"""

from __future__ import annotations

import json
import os
import sys
import tempfile
from pathlib import Path

from tabulate import tabulate

from planner.report import (PROVE_FILE, ProofSection, claim_files, find_ngspice, replace_section, simulation_html,
                            simulation_markdown)

from .run import VECTOR_LIMIT, OutputCorner, Proof

PROOF_SCHEMA = 1


def say(message: str) -> None:
    """A progress line on standard error."""
    print(f"tubeplan prove: {message}", file=sys.stderr, flush=True)


def _volts(v: float | None) -> str:
    return "-" if v is None else f"{v:.4g} V"


def _margin(v: float | None) -> str:
    return "-" if v is None else f"{v:+.4g} V"


def _vector(r: OutputCorner) -> str:
    return " ".join(f"{n}={b}" for n, b in r.first_wrong or ())


def scope_line(proof: Proof) -> str:
    """What was run: vectors (or cycles), whether every one, and the corners."""
    if proof.clock is not None:
        period, swing, _ = proof.clock
        what = (f"{proof.vectors} clock cycles (period {period * 1e3:.4g} ms, the plan's highest safe clock; "
                f"swing {swing:.4g} V) over {'every' if proof.exhaustive else 'a seeded sample of the'} "
                f"{proof.space} input vectors")
    elif proof.exhaustive:
        what = f"every one of the {proof.vectors} input vectors"
    else:
        what = (f"a sample of {proof.vectors} of the {proof.space} input vectors (every vector is run only up "
                f"to {proof.vectors}; seed {proof.seed})")
    return f"{proof.design}: {what} at {len(proof.corners)} corners in ngspice"


def problems(proof: Proof) -> list[str]:
    """One line per output and corner that does not hold (wrong vector or negative margin), and per failure."""
    lines = [f"corner {corner}: {reason}" for corner, reason in proof.failures]
    for r in proof.results:
        if r.right < r.total:
            lines.append(f"{r.output} at corner {r.corner}: {r.total - r.right} of {r.total} vectors wrong, first "
                         f"at {_vector(r)} (simulated {r.wrong_volts:.4g} V, the plan's logic gives {r.expected})")
        elif r.margin_volts is not None and r.margin_volts < 0:
            lines.append(f"{r.output} at corner {r.corner}: margin {_margin(r.margin_volts)} (lowest high "
                         f"{_volts(r.lowest_high_volts)}, highest low {_volts(r.highest_low_volts)})")
    return lines


def _rows(proof: Proof) -> list[list[str]]:
    return [[r.output, r.corner, f"{r.right}/{r.total}", _volts(r.lowest_high_volts), _volts(r.highest_low_volts),
             _margin(r.margin_volts), "yes" if r.holds else "NO"] for r in proof.results]


HEADERS = ["output", "corner", "right", "lowest high", "highest low", "margin", "holds"]


def format_proof(proof: Proof) -> str:
    """The terminal report: what was run, the thresholds, the table, and the verdict (last line)."""
    first = proof.results[0] if proof.results else None
    out = [scope_line(proof)]
    if first is not None:
        out.append(f"thresholds: a high at least {first.high_threshold_volts:g} V, a low at most "
                   f"{first.low_threshold_volts:g} V (plan.json levels); margin = distance beyond them")
    out += ["", tabulate(_rows(proof), headers=HEADERS, tablefmt="simple", disable_numparse=True), ""]
    bad = problems(proof)
    out += bad
    out.append("proven: every vector right and every margin positive at every corner" if proof.holds
               else f"NOT PROVEN: {len(bad)} problem(s) above")
    return "\n".join(out)


def _round(v: float | None) -> float | None:
    return None if v is None else float(f"{v:.6g}")


def proof_document(proof: Proof) -> dict:
    """prove.json as a dict (schema 1); floats rounded to 6 significant digits."""
    return {
        "schema": PROOF_SCHEMA,
        "design": proof.design,
        "holds": proof.holds,
        "vectors": proof.vectors,
        "space": proof.space,
        "exhaustive": proof.exhaustive,
        "seed": proof.seed,
        "vector_limit": VECTOR_LIMIT,
        "clock": None if proof.clock is None else {"period_seconds": _round(proof.clock[0]),
                                                   "swing_volts": _round(proof.clock[1]),
                                                   "fall_seconds": _round(proof.clock[2])},
        "corners": [{"name": c.name, "against": c.against, "params": {k: _round(v) for k, v in c.settings}}
                    for c in proof.corners],
        "results": [{"output": r.output, "kind": r.kind, "corner": r.corner, "right": r.right, "total": r.total,
                     "high_threshold_volts": _round(r.high_threshold_volts),
                     "low_threshold_volts": _round(r.low_threshold_volts),
                     "lowest_high_volts": _round(r.lowest_high_volts),
                     "highest_low_volts": _round(r.highest_low_volts), "margin_volts": _round(r.margin_volts),
                     "holds": r.holds,
                     "first_wrong": None if r.first_wrong is None else {
                         "vector": dict(r.first_wrong), "volts": _round(r.wrong_volts), "expected": r.expected}}
                    for r in proof.results],
        "failures": [{"corner": c, "reason": why} for c, why in proof.failures],
    }


def _corner_notes(proof: Proof) -> list[str]:
    return [f"{c.name}: " + (", ".join(f"{k}={v:g}" for k, v in c.settings) or "the deck as written")
            for c in proof.corners]


def _text_plot(proof: Proof, width: int = 40) -> list[str]:
    """A text chart per output and corner: the band between the thresholds (':'), the lowest high (H) and the
    highest low (L), on a scale from the lowest to the highest level shown."""
    values = [v for r in proof.results for v in (r.lowest_high_volts, r.highest_low_volts,
                                                  r.high_threshold_volts, r.low_threshold_volts) if v is not None]
    lo, hi = min(values + [0.0]), max(values)
    span = (hi - lo) or 1.0

    def col(v: float) -> int:
        return min(width - 1, max(0, round((v - lo) / span * (width - 1))))

    lines = [f"scale {lo:.4g} V (left) to {hi:.4g} V (right); ':' the band no level may enter", "", "```"]
    name_w = max(len(r.output) for r in proof.results)
    corner_w = max(len(r.corner) for r in proof.results)
    for r in proof.results:
        row = [" "] * width
        for k in range(col(r.low_threshold_volts), col(r.high_threshold_volts) + 1):
            row[k] = ":"
        if r.highest_low_volts is not None:
            row[col(r.highest_low_volts)] = "L"
        if r.lowest_high_volts is not None:
            row[col(r.lowest_high_volts)] = "H"
        lines.append(f"{r.output:<{name_w}}  {r.corner:<{corner_w}}  |{''.join(row)}|  {_margin(r.margin_volts)}")
    return lines + ["```"]


def section_markdown(proof: Proof) -> str:
    """The Markdown body of the reports' simulation section."""
    rows = _rows(proof)
    table = ["| " + " | ".join(HEADERS) + " |", "|" + "---|" * len(HEADERS)]
    table += ["| " + " | ".join(c.replace("|", "\\|") for c in row) + " |" for row in rows]
    verdict = ("**Proven**: every vector right and every margin positive at every corner." if proof.holds
               else "**Not proven**: " + "; ".join(problems(proof)))
    return "\n".join([f"{scope_line(proof)}. {verdict}", "", *table, "", "Simulated levels (text plot):", "",
                      *_text_plot(proof), "", "Corners:", "", *[f"- {n}" for n in _corner_notes(proof)]])


def html_section(proof: Proof) -> ProofSection:
    """What report.html's simulation section shows: verdict, plot, table, corners (the report's template
    escapes the text)."""
    from .plot import levels_svg

    return ProofSection(scope_line(proof), proof.holds, tuple(problems(proof)), levels_svg(proof), tuple(HEADERS),
                        tuple(tuple(row) for row in _rows(proof)), (2, 3, 4, 5), tuple(_corner_notes(proof)))


def _replace_file(path: Path, text: str) -> None:
    """Write ``text`` to ``path`` whole or not at all (a temporary file beside it, then one rename)."""
    handle, temporary = tempfile.mkstemp(prefix=f".{path.name}.", dir=path.parent)
    try:
        with os.fdopen(handle, "w", encoding="utf-8") as out:
            out.write(text)
            out.flush()
            os.fsync(out.fileno())
        os.chmod(temporary, 0o644)
        os.replace(temporary, path)
    except BaseException:
        Path(temporary).unlink(missing_ok=True)
        raise


def write_proof(directory: Path, proof: Proof) -> list[Path]:
    """Write prove.json and the reports' simulation section into the plan ``directory``; the paths written.

    Each file is replaced atomically; a report that is absent is left absent.
    """
    directory = Path(directory)
    sections = {"report.html": (lambda: simulation_html(html_section(proof)), True),
                "report.md": (lambda: simulation_markdown(section_markdown(proof)), False)}
    updates = {PROVE_FILE: json.dumps(proof_document(proof), indent=2, sort_keys=True) + "\n"}
    for name, (section, html) in sections.items():
        path = directory / name
        if path.is_file():
            updates[name] = replace_section(path.read_text(encoding="utf-8"), section(), html=html)
    for name in sorted(updates):
        _replace_file(directory / name, updates[name])
    return [directory / name for name in sorted(updates)]


def prove_directory(directory: Path, *, executable: str | None = None, limit: int = VECTOR_LIMIT, seed: int = 1,
                    say=None) -> tuple[Proof, list[Path]]:
    """Read the plan ``directory``, prove its deck in ngspice and write prove.json and the reports' section.

    Raises InputError for a bad directory (before looking for ngspice) or a
    prove.json that is the user's, NgspiceMissing, and NgspiceFailed when
    ngspice cannot run the deck. prove.json is listed in the plan's marker, so
    a re-plan replaces it.
    """
    from .directory import read_plan_directory
    from .run import prove_plan

    plan = read_plan_directory(Path(directory))
    executable = find_ngspice(executable)
    claim_files(Path(directory), (PROVE_FILE,))  # before the work: refuses a prove.json of the user's
    proof = prove_plan(plan, executable, say=say, limit=limit, seed=seed)
    return proof, write_proof(Path(directory), proof)
