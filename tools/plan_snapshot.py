"""Plan a fixed set of designs into one directory, or compare two such directories.

For refactoring: take a snapshot before a step and after it; the plans must be
byte-identical unless the step fixes a defect (say which in the commit).

The set: the bundled demo, the three designs in benchmarks/designs/ on the
demo's stock, every design in tests/fixtures/synthesis/ on each of its three
stocks (invented data, see its README), and the report tests' hand-made
fixture plan written through ``write_plan``.  A design the stock cannot build
is recorded as its shortage text (``SHORTAGE.txt``), so that changes too.

Run:  python3 tools/plan_snapshot.py take DIR      (a few minutes)
      python3 tools/plan_snapshot.py compare A B   (exit 1 on any difference)
"""

from __future__ import annotations

import filecmp
import os
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
FIXTURES = ROOT / "tests" / "fixtures" / "synthesis"
DEMO_STOCK = ROOT / "inventory_demo" / "stock.yaml"


def cases() -> list[tuple[str, Path, Path]]:
    """(name, design, stock) for every plan in the snapshot, in a fixed order."""
    found = [("demo", ROOT / "inventory_demo" / "design.yaml", DEMO_STOCK)]
    for design in sorted((ROOT / "benchmarks" / "designs").glob("*.yaml")):
        found.append((f"bench-{design.stem}", design, DEMO_STOCK))
    stocks = [FIXTURES / f"{name}.yaml" for name in ("rich", "triode", "scarce")]
    for design in sorted(FIXTURES.glob("*.yaml")):
        if design in stocks:
            continue
        for stock in stocks:
            found.append((f"{design.stem}-{stock.stem}", design, stock))
    return found


def take(target: Path) -> None:
    sys.path.insert(0, str(ROOT))
    sys.path.insert(0, str(ROOT / "tests"))
    from planner.pipeline import plan_files
    from planner.report import write_plan
    from test_report_fixtures import fixture_plan

    target.mkdir(parents=True, exist_ok=False)
    for name, design, stock in cases():
        print(f"plan_snapshot: {name}", file=sys.stderr, flush=True)
        result = plan_files(design, stock, target / name, quiet=True)
        if not result.planned:
            (target / name).mkdir()
            (target / name / "SHORTAGE.txt").write_text(result.summary + "\n")
    for prices in (False, True):
        write_plan(fixture_plan(prices=prices), target / f"report-fixture-prices-{prices}")


def differences(a: Path, b: Path) -> list[str]:
    """Relative paths that differ, or exist on one side only."""
    found = []

    def walk(left: Path, right: Path, prefix: str) -> None:
        compared = filecmp.dircmp(left, right)
        found.extend(f"{prefix}{name} (only in {a})" for name in compared.left_only)
        found.extend(f"{prefix}{name} (only in {b})" for name in compared.right_only)
        for name in compared.common_files:
            if not filecmp.cmp(left / name, right / name, shallow=False):
                found.append(f"{prefix}{name}")
        for name in compared.common_dirs:
            walk(left / name, right / name, f"{prefix}{name}/")

    walk(a, b, "")
    return sorted(found)


def main(argv: list[str]) -> int:
    if len(argv) == 2 and argv[0] == "take":
        with tempfile.TemporaryDirectory() as cache:
            os.environ["TUBEPLAN_CACHE_DIR"] = cache  # a cold cache: the family and networks computed afresh
            take(Path(argv[1]))
        return 0
    if len(argv) == 3 and argv[0] == "compare":
        found = differences(Path(argv[1]), Path(argv[2]))
        for line in found:
            print(f"differs: {line}")
        print(f"{len(found)} difference(s) between {argv[1]} and {argv[2]}")
        return 1 if found else 0
    print(__doc__, file=sys.stderr)
    return 2


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
