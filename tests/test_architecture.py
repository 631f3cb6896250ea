"""The package layout holds: a module reaches another package only through that package's ``__init__``."""

import ast
from pathlib import Path

import planner

ROOT = Path(planner.__file__).parent


def _package(path: Path) -> str:
    """The package a module belongs to: ``mapping`` for planner/mapping/x.py, "" for planner/cli.py."""
    parts = path.relative_to(ROOT).parts
    return parts[0] if len(parts) > 1 else ""


def _imported(node: ast.AST, path: Path) -> list[str]:
    """Absolute dotted names an import statement reaches."""
    if isinstance(node, ast.Import):
        return [alias.name for alias in node.names]
    if isinstance(node, ast.ImportFrom):
        if node.level == 0:
            base = node.module or ""
        else:
            here = ["planner", *path.relative_to(ROOT).parts[:-1]]
            base = ".".join(here[:len(here) - node.level + 1] + ([node.module] if node.module else []))
        return [base]
    return []


def reach_ins() -> list[str]:
    """Every import of another package's inner module, as ``file:line: name``."""
    found = []
    for path in sorted(ROOT.rglob("*.py")):
        own = _package(path)
        for node in ast.walk(ast.parse(path.read_text(), str(path))):
            for name in _imported(node, path):
                parts = name.split(".")
                if parts[0] != "planner" or len(parts) < 3 or parts[1] == own:
                    continue
                if (ROOT / parts[1]).is_dir():
                    found.append(f"{path.relative_to(ROOT.parent)}:{node.lineno}: {name}")
    return found


def test_no_module_reaches_into_another_package():
    assert reach_ins() == []


def test_the_check_sees_a_reach_in(tmp_path, monkeypatch):
    # A planted module that reaches into electrical's inner module must be reported.
    fake = tmp_path / "planner"
    (fake / "mapping").mkdir(parents=True)
    (fake / "electrical").mkdir()
    (fake / "mapping" / "bad.py").write_text("from planner.electrical.circuit import Load\n"
                                             "from ..electrical import Rails\n")
    monkeypatch.setattr(__import__(__name__), "ROOT", fake)
    assert reach_ins() == ["planner/mapping/bad.py:1: planner.electrical.circuit"]
