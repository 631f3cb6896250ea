"""The ``tubeplan`` command: argument parsing and output only; the work is in the packages.

Exit statuses: 0 done (also bare ``tubeplan``, which prints the help); 1
internal error (one line and a hint; traceback with ``--debug``); 2 a mistake
in the user's files, options or output path (one ``FILE:LINE: message`` on
stderr), or an outside program missing or failed (how to install it); 3 the
stock or supplies cannot carry the design (what is short, on stderr); 4
``prove`` (or ``plan --prove``) found a wrong vector or a negative margin.
:data:`EXIT_STATUS` maps the exception families of ``planner.errors`` to them.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import sys
import time
from pathlib import Path

from planner.errors import BadInput, StockShort, ToolError

EXIT_OK, EXIT_INTERNAL, EXIT_INPUT, EXIT_SHORT, EXIT_UNPROVEN = 0, 1, 2, 3, 4

#: The one place exceptions meet exit statuses: each user-facing family of ``planner.errors``
#: and its status. Anything else that escapes a command is an internal error (exit 1).
EXIT_STATUS = ((BadInput, EXIT_INPUT), (ToolError, EXIT_INPUT), (StockShort, EXIT_SHORT))

#: The bundled demo, planned by ``tubeplan plan`` with no arguments: package data, a link to the
#: project's top-level ``inventory_demo/`` in the source tree.
DEMO_DIR = Path(__file__).resolve().parent / "inventory_demo"
DEMO_DESIGN = DEMO_DIR / "design.yaml"
DEMO_STOCK = DEMO_DIR / "stock.yaml"
DEMO_OUT = Path("plan_out")

CAUTION = ("CAUTION: tube plate supplies are high voltage and can kill; filter capacitors hold "
           "their charge after switch-off; heater windings carry amperes; glass runs hot. Follow "
           "your local electrical codes and licensed practice.")


def exit_status(problem: BaseException) -> int:
    """The exit status of ``problem`` by its family (:data:`EXIT_STATUS`); EXIT_INTERNAL for any other."""
    return next((status for family, status in EXIT_STATUS if isinstance(problem, family)), EXIT_INTERNAL)


def _print_json(document) -> None:
    sys.stdout.write(json.dumps(document, indent=2, sort_keys=True) + "\n")


# --- check --------------------------------------------------------------------------------

def _add_check(subparsers) -> None:
    parser = subparsers.add_parser(
        "check", help="validate a design (and a stock file) and summarise them",
        description="Validate a design file, and optionally a stock file, and print a summary.")
    parser.add_argument("design", help="design file (YAML)")
    parser.add_argument("--stock", help="stock file (YAML)")
    parser.set_defaults(run=_run_check)


def _run_check(args) -> int:
    from planner.spec import load_design, load_stock

    design = load_design(args.design)
    stock = load_stock(args.stock) if args.stock else None
    from planner.report import design_summary, stock_summary

    print(design_summary(design))
    if stock is not None:
        print()
        print(stock_summary(stock))
    return EXIT_OK


# --- plan ---------------------------------------------------------------------------------

def _add_plan(subparsers) -> None:
    parser = subparsers.add_parser(
        "plan", help="plan a build from a design and a stock file (no arguments: the demo)",
        description="Plan a build: minimise, map onto stages, design resistors, choose tubes "
                    "within the stock, prove the result and write the plan. With no arguments, "
                    f"plans the bundled demo into ./{DEMO_OUT}.")
    parser.add_argument("design", nargs="?", help="design file (YAML); default: the bundled demo")
    parser.add_argument("--stock", help="stock file (YAML); default: the demo's stock")
    parser.add_argument("--out", help=f"output directory; default: ./{DEMO_OUT}")
    parser.add_argument("--time-limit", type=_positive_seconds, metavar="SECONDS",
                        help="budget of the integer solves (default 60 s); past it the best plan found "
                             "is kept and its optimality gap reported")
    parser.add_argument("--solver", choices=("cbc", "highs"), default="cbc",
                        help="integer-programming solver (default cbc, bundled with pulp; highs needs highspy)")
    parser.add_argument("--objective", choices=("weighted", "lexicographic"),
                        help="override the stock file's objective mode")
    parser.add_argument("--gates", choices=("aoi", "nand", "nor"),
                        help="stage shapes allowed: any AND-OR-INVERT (default), NAND-only or NOR-only")
    parser.add_argument("--flatten", type=int, metavar="N",
                        help="flatten named signals into blocks of at most N inputs and minimise them again")
    parser.add_argument("--quiet", action="store_true",
                        help="no progress lines on stderr; the last line still says where the report is")
    parser.add_argument("--prove", action="store_true",
                        help="then prove the plan in ngspice (as tubeplan prove OUT; skipped, with a note, when "
                             "ngspice is absent)")
    parser.set_defaults(run=_run_plan)


def _positive_seconds(text: str) -> float:
    seconds = float(text)  # argparse reports a ValueError as an invalid value
    if not math.isfinite(seconds) or seconds <= 0:
        raise argparse.ArgumentTypeError(f"must be a positive number of seconds, got {text}")
    return seconds


def _run_plan(args) -> int:
    from planner.pipeline import plan_files
    from planner.spec import InputError

    if args.design is None:
        design, stock = DEMO_DESIGN, Path(args.stock) if args.stock else DEMO_STOCK
    else:
        if not args.stock:
            raise InputError(args.design, 0, "plan needs a stock file: add --stock STOCK.yaml")
        design, stock = Path(args.design), Path(args.stock)
    from planner.mapping import DEFAULT_TIME_LIMIT_S, MappingOptions

    from planner.spec import MAX_BLOCK_INPUTS

    if args.flatten is not None and not 1 <= args.flatten <= MAX_BLOCK_INPUTS:
        raise InputError("<command line>", 0, f"--flatten must be from 1 to {MAX_BLOCK_INPUTS} inputs, "
                                              f"got {args.flatten}")
    out = Path(args.out) if args.out else DEMO_OUT
    options = MappingOptions(time_limit_s=args.time_limit or DEFAULT_TIME_LIMIT_S, solver=args.solver,
                             mode=args.objective, synthesis_mode=args.gates, flatten_limit=args.flatten)
    from planner.logic import BlockTooLarge

    try:
        result = plan_files(design, stock, out, options, quiet=args.quiet)
    except BlockTooLarge as problem:
        raise InputError(design, 0, f"a block is beyond the minimiser's limits: {problem}; "
                                    "split it into named signals") from None
    if not result.planned:
        print(result.summary, file=sys.stderr)
        return EXIT_SHORT
    print(result.summary)
    print()
    print(CAUTION)
    status = EXIT_OK
    if args.prove:
        from planner.prove import NgspiceMissing, find_ngspice

        try:
            find_ngspice()
        except NgspiceMissing as missing:
            print(f"tubeplan: --prove skipped: {missing}", file=sys.stderr)
        else:
            print()
            status = _prove(out, quiet=args.quiet)
    print(f"plan written to {out}{os.sep}; report: {out / 'report.html'}")
    return status


# --- prove --------------------------------------------------------------------------------

def _add_prove(subparsers) -> None:
    parser = subparsers.add_parser(
        "prove", help="prove a plan directory's SPICE deck in ngspice at nominal and worst-case corners",
        description="Run the plan directory's own plan.cir (as written) in ngspice over every input vector "
                    "(a seeded sample of 4096 above 4096) at nominal and at corners (tube "
                    "wear, supply and resistor tolerances); registers over clock cycles at the plan's clock. "
                    "Writes prove.json and the reports' simulation section. Exit 0 proven, 4 a wrong vector or "
                    "a negative margin, 2 a bad directory or no ngspice.")
    parser.add_argument("directory", metavar="DIR", help="a plan directory (the --out of tubeplan plan)")
    parser.add_argument("--seed", type=int, default=1, help="seed of the vector sample (default 1)")
    parser.add_argument("--ngspice", metavar="PATH", help="the ngspice executable (default: ngspice on PATH)")
    parser.add_argument("--quiet", action="store_true", help="no progress lines on stderr")
    parser.set_defaults(run=_run_prove)


def _run_prove(args) -> int:
    return _prove(Path(args.directory), quiet=args.quiet, executable=args.ngspice, seed=args.seed)


def _prove(directory: Path, *, quiet: bool, executable: str | None = None, seed: int = 1) -> int:
    from planner.prove import NgspiceFailed, format_proof, prove_directory, say

    try:
        proof, _ = prove_directory(directory, executable=executable, seed=seed, say=None if quiet else say)
    except NgspiceFailed as failed:  # said against the deck it could not run
        print(f"{directory / 'plan.cir'}:0: ngspice cannot run the deck: {failed.reason}", file=sys.stderr)
        return exit_status(failed)
    print(format_proof(proof))
    return EXIT_OK if proof.holds else EXIT_UNPROVEN


# --- tubes --------------------------------------------------------------------------------

def _add_tubes(subparsers) -> None:
    parser = subparsers.add_parser(
        "tubes", help="list the tube catalogue (type, kind, sections, heater, base, source)",
        description="List the built-in tube catalogue, with a stock file's custom types if given.")
    parser.add_argument("--stock", help="stock file (YAML) whose custom_types are listed too")
    parser.add_argument("--json", action="store_true", help="print every value and its source as JSON")
    parser.set_defaults(run=_run_tubes)


def _run_tubes(args) -> int:
    from planner.catalogue import builtin_catalogue, catalogue_document, format_catalogue

    from planner.electrical import DesignRules

    plate_volts = (150.0, 250.0)
    if args.stock:
        from planner.spec import load_stock

        stock = load_stock(args.stock)
        catalogue = stock.catalogue
        # Cut-off at the stock's plate supply: nominal and at the top of its tolerance.
        plate_volts = (stock.plate.volts, stock.plate.volts * (1 + DesignRules().supply_tolerance))
    else:
        catalogue = builtin_catalogue()
    if args.json:
        _print_json(catalogue_document(catalogue, plate_volts))
    else:
        sys.stdout.write(format_catalogue(catalogue))
    return EXIT_OK


# --- stage --------------------------------------------------------------------------------

def _add_stage(subparsers) -> None:
    parser = subparsers.add_parser(
        "stage", help="design one stage template: plate load, dividers, worst-case levels and margins",
        description="Design the DC values of one tube type driving FANOUT loads of its own kind, worst "
                    "case over resistor and supply tolerance and tube wear. Exit 2 when none passes.")
    parser.add_argument("tube", metavar="TYPE", help="tube type from the catalogue (see: tubeplan tubes)")
    parser.add_argument("--plate-volts", type=float, required=True, metavar="V", help="plate supply (B+), volts")
    parser.add_argument("--bias-volts", type=float, required=True, metavar="V", help="bias supply, negative volts")
    parser.add_argument("--fanout", type=int, default=1, metavar="N", help="loads driven (default 1)")
    parser.add_argument("--means", choices=("single", "dual", "diode"), default="single",
                        help="branch: one grid, both control grids (g1 and g3), or a diode AND on g1")
    parser.add_argument("--series", choices=("E24", "E12"), default="E24", help="resistor values (IEC 60063)")
    parser.add_argument("--heater-elevation", type=float, default=0.0, metavar="V",
                        help="DC reference of the heater winding, volts (default 0), for the follower's "
                             "heater-cathode check")
    parser.add_argument("--json", action="store_true", help="print the template as JSON")
    parser.set_defaults(run=_run_stage)


def _run_stage(args) -> int:
    from planner.catalogue import builtin_catalogue
    from planner.electrical import DesignRules, NoTemplate, Rails, design_template, format_template
    from planner.spec import InputError

    where = "<command line>"
    try:
        tube = builtin_catalogue().get(args.tube)
    except KeyError as problem:
        raise InputError(where, 0, problem.args[0]) from None
    if args.fanout < 1:
        raise InputError(where, 0, f"--fanout must be at least 1, got {args.fanout}")
    try:
        rails = Rails(args.plate_volts, args.bias_volts)
    except ValueError as problem:
        raise InputError(where, 0, f"{problem}; expected e.g. --plate-volts 250 --bias-volts -100") from None
    if not rails.bias_volts <= args.heater_elevation <= rails.plate_volts:
        raise InputError(where, 0, f"--heater-elevation must lie between the bias supply and B+, "
                                   f"got {args.heater_elevation:g} V")
    try:
        template = design_template(tube, args.means, rails, args.fanout, DesignRules(series=args.series),
                                   elevation_volts=args.heater_elevation)
    except NoTemplate as problem:  # a planning failure, but of the type and supplies the user asked for
        print(problem.reason, file=sys.stderr)
        return EXIT_INPUT
    if args.json:
        _print_json(template.to_json())
    else:
        sys.stdout.write(format_template(template))
    return EXIT_OK


# --- logic --------------------------------------------------------------------------------

def _add_logic(subparsers) -> None:
    parser = subparsers.add_parser(
        "logic", help="minimise each output of a design in both polarities",
        description="Minimise each output of a design, with its named signals substituted, as a "
                    "sum of products and as NOT of its complement's sum of products; give literal "
                    "counts and whether each form is proven minimum.")
    parser.add_argument("design", help="design file (YAML)")
    parser.add_argument("--json", action="store_true", help="print one JSON document")
    parser.add_argument("--cover-budget", type=float, default=1.0, metavar="SECONDS",
                        help="time for each exact minimum (default 1 s); past it the best cover found is "
                             "given with its gap to a proven lower bound")
    parser.add_argument("--networks", action="store_true",
                        help="also build the candidate stage networks (two-level and multi-level) and say "
                             "how many stages each needs and which is chosen")
    parser.add_argument("--stock", help="with --networks: plan on this stock file and give each candidate's "
                                        "envelopes (the chosen one is the plan's)")
    parser.set_defaults(run=_run_logic)


def _run_logic(args) -> int:
    from planner.logic import (MAX_TABLE_INPUTS, BlockTooLarge, format_forms, forms, forms_document, output_support,
                               output_table)
    from planner.spec import InputError, load_design

    start = time.monotonic()
    design = load_design(args.design).combinational()
    rows = []
    for output in design.outputs:
        names = output_support(design, output)
        if len(names) > MAX_TABLE_INPUTS:
            raise InputError(design.path, design.lines.get("outputs", {}).get(output.name, 0),
                             f"output {output.name!r} depends on {len(names)} inputs; tubeplan logic "
                             f"minimises outputs of at most {MAX_TABLE_INPUTS} inputs")
        if len(names) > 10:
            print(f"tubeplan logic: [{time.monotonic() - start:5.1f} s] minimising {output.name} over "
                  f"{len(names)} inputs (both polarities) ...", file=sys.stderr, flush=True)
        try:
            rows.append((output.name, forms(output_table(design, output, names), cover_budget_s=args.cover_budget)))
        except BlockTooLarge as problem:
            raise InputError(design.path, design.lines.get("outputs", {}).get(output.name, 0),
                             f"output {output.name!r} is beyond the minimiser's limits: {problem}; "
                             "split it into named signals") from None
    document = forms_document(rows)
    if args.stock and not args.networks:
        raise InputError("<command line>", 0, "--stock goes with --networks")
    if args.networks:
        from planner.pipeline import Shortage, network_document

        try:
            document["networks"] = network_document(Path(args.design), Path(args.stock) if args.stock else None)
        except Shortage as short:
            print(f"tubeplan logic: the stock cannot carry the design: {short.message}", file=sys.stderr)
            return exit_status(short)
    if args.json:
        _print_json(document)
        return EXIT_OK
    print(format_forms(rows))
    if args.networks:
        from tabulate import tabulate

        networks = document["networks"]
        table = [[n["network"], n["stages"], n["sections"], "" if n["envelopes"] is None else f"{n['envelopes']:g}",
                  "chosen" if n["network"] == networks["chosen"] else n["note"]] for n in networks["networks"]]
        print()
        print(f"stage network chosen: {networks['chosen']}")
        print(tabulate(table, headers=["network", "stages", "sections", "envelopes", ""]))
    print()
    print(CAUTION)
    return EXIT_OK


_SUBCOMMANDS = (_add_tubes, _add_check, _add_plan, _add_prove, _add_stage, _add_logic)


class _Parser(argparse.ArgumentParser):
    """An argument parser whose mistakes are one line, like every other mistake (exit 2)."""

    def error(self, message):
        self.exit(EXIT_INPUT, f"<command line>:0: {message}; see {self.prog} --help\n")


def build_parser() -> argparse.ArgumentParser:
    from planner import __version__

    parser = _Parser(
        prog="tubeplan",
        description="Plan digital logic built from vacuum tubes: minimise the logic, map it onto "
                    "tube stages, design every resistor, choose tube types within your stock, "
                    "prove the result and report budgets, parts and wiring.",
        epilog=CAUTION)
    parser.add_argument("--debug", action="store_true", help="show a traceback on internal errors")
    parser.add_argument("--version", action="version", version=f"tubeplan {__version__}")
    subparsers = parser.add_subparsers(dest="command", metavar="COMMAND")
    for add in _SUBCOMMANDS:
        add(subparsers)
    return parser


def main(argv=None) -> int:
    try:
        return _main(argv)
    except KeyboardInterrupt:  # also while the libraries are still being imported
        print("tubeplan: interrupted; nothing was written", file=sys.stderr)
        return EXIT_INTERNAL


def _main(argv) -> int:
    # Imported here, not at the top, so that an interrupt during start-up is caught by main().
    from planner.spec import InputError

    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as stop:  # --help, --version, or a one-line mistake already printed
        return stop.code
    if not getattr(args, "run", None):  # bare ``tubeplan``: asking what it does is no mistake
        parser.print_help()
        return EXIT_OK
    try:
        return args.run(args)
    except BrokenPipeError:
        return EXIT_OK
    except Exception as problem:  # the last line of defence: one line, no traceback
        status = exit_status(problem)
        if status != EXIT_INTERNAL:  # InputError says FILE:LINE itself
            print(problem if isinstance(problem, InputError) else f"tubeplan: {problem}", file=sys.stderr)
            return status
        if args.debug:
            raise
        print(f"tubeplan: internal error: {type(problem).__name__}: {problem}. Hint: run again with "
              "--debug for the traceback and report it with your design and stock files",
              file=sys.stderr)
        return EXIT_INTERNAL


if __name__ == "__main__":
    sys.exit(main())
