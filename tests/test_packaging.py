"""A normal install works: a wheel and an sdist carry the demo, and an installed tubeplan plans it.

The project is built here from a copy of the source tree, installed into a fresh virtual
environment without network access (``--no-index --no-deps``; the dependencies come from the
environment running the tests through a path file), and run from another directory with no
``PYTHONPATH``, so nothing of the source tree can stand in for what the wheel lacks. The demo
is invented data (inventory_demo/).
"""

from __future__ import annotations

import importlib.util
import os
import shutil
import site
import subprocess
import sys
import tarfile
import venv
import zipfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
DEMO_FILES = {"planner/inventory_demo/design.yaml", "planner/inventory_demo/stock.yaml"}
# The report's jinja2 templates (package data of planner.report): report.html is made from them.
TEMPLATE_FILES = {f"planner/report/templates/{path.name}"
                  for path in (ROOT / "planner" / "report" / "templates").iterdir()}
SKIP = shutil.ignore_patterns(".git", ".venv", "build", "dist", "*.egg-info", "__pycache__", ".pytest_cache",
                              ".hypothesis", "plan_out", "test-artifacts")


def _run(command, **kwargs):
    result = subprocess.run([str(part) for part in command], capture_output=True, text=True, **kwargs)
    assert result.returncode == 0, f"{command}\n{result.stdout}\n{result.stderr}"
    return result


def _can_build_without_isolation() -> bool:
    """Whether this environment's setuptools builds wheels itself (70.1 and later, or with ``wheel``)."""
    if importlib.util.find_spec("setuptools") is None:
        return False
    if importlib.util.find_spec("wheel") is not None:
        return True
    return importlib.util.find_spec("setuptools.command.bdist_wheel") is not None


def _build_wheel(source: Path, into: Path) -> Path:
    isolation = [] if not _can_build_without_isolation() else ["--no-build-isolation"]
    _run([sys.executable, "-m", "pip", "wheel", "--no-deps", *isolation, "-q", "-w", into, source])
    (wheel,) = into.glob("tubeplan-*.whl")
    return wheel


def _wheel_files(wheel: Path) -> set[str]:
    with zipfile.ZipFile(wheel) as archive:
        return {name for name in archive.namelist() if ".dist-info/" not in name}


@pytest.fixture(scope="module")
def builds(tmp_path_factory):
    """(wheel from the tree, wheel from the sdist, sdist) built from a copy of the source tree."""
    work = tmp_path_factory.mktemp("build")
    source = work / "source"
    shutil.copytree(ROOT, source, symlinks=True, ignore=SKIP)
    wheel = _build_wheel(source, work / "wheel")
    _run([sys.executable, "-c", "import sys; from setuptools import build_meta; "
                                "build_meta.build_sdist(sys.argv[1])", work / "sdist"], cwd=source)
    (sdist,) = (work / "sdist").glob("tubeplan-*.tar.gz")
    with tarfile.open(sdist) as archive:
        safe = {"filter": "data"} if hasattr(tarfile, "data_filter") else {}  # Python 3.11.4 and later
        archive.extractall(work / "unpacked", **safe)
    (unpacked,) = (work / "unpacked").iterdir()
    return wheel, _build_wheel(unpacked, work / "from_sdist"), sdist


def test_wheel_and_sdist_carry_the_demo_and_the_report_templates(builds):
    wheel, from_sdist, sdist = builds
    assert DEMO_FILES | TEMPLATE_FILES <= _wheel_files(wheel)
    assert _wheel_files(from_sdist) == _wheel_files(wheel)  # the sdist loses nothing on the way
    with tarfile.open(sdist) as archive:
        members = {name.split("/", 1)[1] for name in archive.getnames() if "/" in name}
    assert DEMO_FILES | TEMPLATE_FILES <= members and "planner/__main__.py" in members


def test_an_installed_wheel_plans_the_demo(builds, tmp_path):
    wheel, _, _ = builds
    env_dir = tmp_path / "venv"
    venv.create(env_dir, with_pip=False)
    python = env_dir / "bin" / "python"
    purelib = Path(_run([python, "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"]).stdout.strip())
    # The dependencies, from the environment running the tests (no network); added after the
    # venv's own site-packages, and their .pth files are not run, so no editable tubeplan creeps in.
    outer = [path for path in site.getsitepackages() if Path(path).is_dir()]
    (purelib / "outer_dependencies.pth").write_text("".join(f"{path}\n" for path in outer))
    clean = {key: value for key, value in os.environ.items() if key not in ("PYTHONPATH", "PYTHONHOME")}
    _run([python, "-m", "pip", "install", "-q", "--no-index", "--no-deps", "--ignore-installed", wheel], env=clean)
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    found = _run([python, "-c", "import planner; print(planner.__file__)"], cwd=elsewhere, env=clean).stdout
    assert Path(found.strip()).is_relative_to(env_dir), found  # the installed copy, not the source tree
    version = wheel.name.split("-")[1]
    assert _run([python, "-m", "planner", "--version"], cwd=elsewhere, env=clean).stdout.strip() \
        == f"tubeplan {version}"
    result = _run([env_dir / "bin" / "tubeplan", "plan", "--quiet"], cwd=elsewhere, env=clean)
    assert result.stdout.strip().splitlines()[-1].endswith(str(Path("plan_out") / "report.html"))
    assert (elsewhere / "plan_out" / "plan.json").is_file() and (elsewhere / "plan_out" / "report.html").is_file()


def _readme_commands() -> list[str]:
    """The one-line commands of the README's Set-up section, in order."""
    text = (ROOT / "README.md").read_text()
    setup = text.split("## Set-up", 1)[1].split("\n## ", 1)[0]
    blocks = setup.split("```")[1::2]
    return [block.strip() for block in blocks]


def test_readme_commands_use_a_virtual_environment_and_ci_runs_the_test_command():
    plan, test = _readme_commands()[:2]
    for command in (plan, test):
        assert "\n" not in command and command.startswith("python3 -m venv .venv && . .venv/bin/activate && ")
    assert plan.endswith("pip install -e . && tubeplan plan")
    ci = (ROOT / ".ci" / "run").read_text().splitlines()
    assert test in ci  # CI runs the README's test command word for word
