"""Packaging: a plain checkout and a built wheel find the bundled data files the same way.

STYLE.md: a top-level resources/ folder is left out of a wheel unless told otherwise, and
the installed program must find its device table and demo drawer from a folder other
than the checkout. Python runs with ``-S`` here (no site-packages), so neither the
editable install nor anything else installed can stand in for what is checked.
.ci/run also installs the wheel into a fresh environment and runs ``tickbin`` from it.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import tomllib
import zipfile
from pathlib import Path

import pytest
from packaging.requirements import Requirement

import core

ROOT = Path(__file__).resolve().parents[1]
DATA = ("devices.toml", "demo_drawer.csv")
PROBE = ("import sys, core, core.storage.locations as where\n"
         "print(core.__file__)\n"
         "for name in sys.argv[1:]: print(where.resource(name))\n")


def probe(path_entry: Path, cwd: Path) -> tuple[Path, list[Path]]:
    """Where ``core`` and each data file are found with only ``path_entry`` to import from."""
    env = dict(os.environ, PYTHONPATH=str(path_entry))
    done = subprocess.run([sys.executable, "-S", "-c", PROBE, *DATA], capture_output=True,
                          text=True, cwd=cwd, env=env, timeout=60)
    assert done.returncode == 0, done.stderr
    first, *rest = done.stdout.splitlines()
    return Path(first), [Path(line) for line in rest]


def test_a_checkout_finds_its_data_without_installing(tmp_path: Path) -> None:
    package, files = probe(ROOT, tmp_path)
    assert package == ROOT / "core" / "__init__.py"
    # The data stay in the top-level resources/ folder (DESIGN.md's layout).
    assert files == [ROOT / "resources" / name for name in DATA]
    assert all(f.is_file() for f in files)


@pytest.fixture(scope="module")
def wheel(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """The wheel, built from a copy of the checkout so no build/ folder is left in it."""
    source = tmp_path_factory.mktemp("source") / "tickbin"
    shutil.copytree(ROOT, source, ignore=shutil.ignore_patterns(
        ".git", ".venv", "build", "dist", "*.egg-info", "__pycache__", ".*_cache", ".hypothesis",
        "tests"))
    out = tmp_path_factory.mktemp("dist")
    # The test extra brings the build backend, so no isolated build environment is needed.
    subprocess.run([sys.executable, "-m", "pip", "wheel", "-q", "--no-deps",
                    "--no-build-isolation", "-w", str(out), str(source)],
                   check=True, capture_output=True, timeout=600)
    (built,) = out.glob("tickbin-*.whl")
    return built


def test_the_wheel_holds_every_package_and_the_data_and_nothing_else(wheel: Path) -> None:
    names = set(zipfile.ZipFile(wheel).namelist())
    # Every package of the checkout is found, none listed by hand.
    packages = [p.parent.relative_to(ROOT) for top in ("core", "gui")
                for p in (ROOT / top).rglob("__init__.py")]
    assert len(packages) >= 8
    for package in packages:
        assert f"{package.as_posix()}/__init__.py" in names, package
    for name in DATA:
        assert f"core/resources/{name}" in names
    assert not any("screenshots" in n for n in names)  # README pictures stay in the repo
    info = f"tickbin-{core.__version__}.dist-info"
    # STYLE.md: nothing but core and gui at top level.
    assert {n.split("/")[0] for n in names} == {"core", "gui", info}
    # PEP 639: an SPDX license expression, and the license text shipped with it.
    metadata = zipfile.ZipFile(wheel).read(f"{info}/METADATA").decode()
    assert "License-Expression: MIT" in metadata.splitlines()
    assert f"{info}/licenses/LICENSE" in names


def test_the_installed_layout_finds_its_data_from_elsewhere(wheel: Path, tmp_path: Path) -> None:
    site = tmp_path / "site"
    zipfile.ZipFile(wheel).extractall(site)  # a wheel installs by unpacking (PEP 427)
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    package, files = probe(site, elsewhere)
    assert package == site / "core" / "__init__.py"
    assert files == [site / "core" / "resources" / name for name in DATA]
    assert all(f.is_file() for f in files)
    assert (files[0].read_bytes() == (ROOT / "resources" / DATA[0]).read_bytes())


@pytest.mark.parametrize(("python", "pyside", "allowed"), [
    ("3.11", "6.12.0", False),  # the release that loses references (tests/test_sheet_render.py)
    ("3.11", "6.11.3", True),
    ("3.12", "6.12.0", True),   # None and True are immortal from 3.12 on (PEP 683)
    ("3.13", "6.12.0", True),
])
def test_pyside6_is_excluded_only_where_it_fails(python: str, pyside: str,
                                                 allowed: bool) -> None:
    project = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["project"]
    wanted = [r for r in map(Requirement, project["dependencies"])
              if r.name == "PySide6-Essentials"
              and (r.marker is None or r.marker.evaluate({"python_version": python}))]
    assert len(wanted) == 1
    assert wanted[0].specifier.contains(pyside) == allowed
