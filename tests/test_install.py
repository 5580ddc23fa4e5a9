"""Run from anywhere: a non-editable install, then ``python -m pulsepick`` from a clone.

The clone root holds a ``pulsepick/`` folder that shadows the installed package, and
the tables sit in the top-level ``data/`` folder there (installed, they are the package
``pulsepick.data``); both ways must find them.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
_SKIP = shutil.ignore_patterns(".venv*", ".git", "build", "dist", "*.egg-info", "__pycache__",
                               ".pytest_cache", "tests")


def _run(args: list[str], cwd: Path, site: Path) -> subprocess.CompletedProcess:
    env = {k: v for k, v in os.environ.items() if k not in ("PYTHONPATH", "COLUMNS")}
    env["PYTHONPATH"] = str(site)
    return subprocess.run([sys.executable, *args], cwd=cwd, env=env, capture_output=True,
                          text=True, timeout=300, check=False)


@pytest.fixture(scope="module")
def installed(tmp_path_factory):
    """(a copy of the clone, a non-editable install of it, the wheel it came from)."""
    base = tmp_path_factory.mktemp("install")
    clone = base / "clone"
    shutil.copytree(ROOT, clone, ignore=_SKIP)
    wheels = base / "wheels"
    built = subprocess.run(
        [sys.executable, "-m", "pip", "wheel", "-q", "--no-deps", "-w", str(wheels),
         str(clone)], capture_output=True, text=True, timeout=600, check=False)
    assert built.returncode == 0, built.stderr[-2000:]
    (wheel,) = wheels.glob("pulsepick-*.whl")
    site = base / "site"
    done = subprocess.run(
        [sys.executable, "-m", "pip", "install", "-q", "--no-deps", "--target", str(site),
         str(wheel)], capture_output=True, text=True, timeout=600, check=False)
    assert done.returncode == 0, done.stderr[-2000:]
    # the wheel carries the tables inside the package
    assert (site / "pulsepick" / "data" / "e_series" / "E24.csv").is_file()
    shutil.rmtree(clone / "build", ignore_errors=True)
    return clone, site, wheel


@pytest.mark.slow
def test_version_from_the_clone_root(installed):
    from pulsepick import __version__

    clone, site, _ = installed
    out = _run(["-m", "pulsepick", "--version"], clone, site)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == f"pulsepick {__version__}"


@pytest.mark.slow
def test_tables_from_the_clone_root_and_from_elsewhere(installed):
    clone, site, _ = installed
    code = ("import pulsepick, pulsepick.tables as t; "
            "print(pulsepick.__file__); print(len(t.load_table('e_series/E24.csv').rows))")
    # clone root: the local folder shadows the install and reads data/ beside it
    here = _run(["-c", code], clone, site)
    assert here.returncode == 0, here.stderr
    where, rows = here.stdout.split()
    assert Path(where).parent == clone / "pulsepick"
    assert int(rows) == 24  # E24 holds 24 values per decade (IEC 60063, ref:iec-60063)
    # any other folder: the installed package and its pulsepick.data
    away = _run(["-c", code], site.parent, site)
    assert away.returncode == 0, away.stderr
    where, rows = away.stdout.split()
    assert Path(where).parent == site / "pulsepick"
    assert int(rows) == 24
    # a command that reads tables, from the clone root
    values = _run(["-m", "pulsepick", "values", "4k7", "--json"], clone, site)
    assert values.returncode == 0, values.stderr
    assert "4700" in values.stdout  # 4k7 is 4.7 kΩ (RKM code, IEC 60062, ref:iec-60062-rkm)


@pytest.mark.slow
def test_tables_from_the_wheel_as_a_zip(installed, tmp_path):
    _, _, wheel = installed
    code = ("import pulsepick, pulsepick.tables as t; print(pulsepick.__file__); "
            "print(len(t.load_table('e_series/E96.csv').rows))")
    # a wheel is a zip archive Python imports from directly (zipimport)
    out = _run(["-c", code], tmp_path, wheel)
    assert out.returncode == 0, out.stderr
    where, rows = out.stdout.split()
    assert where.startswith(str(wheel))
    assert int(rows) == 96  # E96 holds 96 values per decade (IEC 60063, ref:iec-60063)


def test_every_subpackage_is_in_the_wheel_list():
    # pyproject.toml lists the packages a wheel holds: a new folder must be added there
    import tomllib

    root = Path(__file__).resolve().parent.parent
    listed = set(tomllib.loads((root / "pyproject.toml").read_text(encoding="utf-8"))
                 ["tool"]["setuptools"]["packages"])
    found = {".".join(p.parent.relative_to(root).parts)
             for p in (root / "pulsepick").rglob("__init__.py")}
    assert "pulsepick.units" in found
    assert found - listed == set()
