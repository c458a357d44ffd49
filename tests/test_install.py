"""A regular install carries its data: the wheel is built from a copy of the checkout and
installed the two ways that put the package outside the checkout and outside ``sys.prefix``
(``pip install --target`` and ``--prefix``, as ``--user`` does), and the command then runs
from another folder with only that install on its path.

Building needs no network: setuptools from the test extra builds with --no-build-isolation.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import tarfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
# what a fresh clone does not have: tools' and runs' leftovers, and what the build does not need
NOT_COPIED = {".git", ".venv", "build", "dist", ".pytest_cache", ".hypothesis", "tests", "bench",
              "tellwave-demo", "tellwave-routes", "bench-out", "out"}

pytestmark = pytest.mark.install


def _setuptools_can_build() -> str | None:
    """Why the wheel cannot be built offline here, or None."""
    from importlib import metadata

    try:
        version = metadata.version("setuptools")
    except metadata.PackageNotFoundError:
        return "setuptools is not installed (pip install -e '.[test]' brings it)"
    if int(version.split(".")[0]) < 77:
        return f"setuptools {version} is older than the build requirement 77"
    return None


def _run(args, cwd, env=None, timeout=120, both=False):
    """What the command printed (stdout, or ``both`` streams); it must exit 0."""
    done = subprocess.run(args, cwd=cwd, env=env, capture_output=True, text=True, timeout=timeout)
    assert done.returncode == 0, f"{' '.join(map(str, args))} exited {done.returncode}\n{done.stdout}\n{done.stderr}"
    return done.stdout + done.stderr if both else done.stdout


def _pip(*args, cwd):
    return _run([sys.executable, "-m", "pip", "--disable-pip-version-check", "--no-input", *args], cwd=cwd, both=True)


@pytest.fixture(scope="module")
def source(tmp_path_factory) -> Path:
    """A copy of the checkout as a fresh clone has it."""
    why = _setuptools_can_build()
    if why:
        pytest.skip(f"cannot build the wheel offline: {why}")
    copy = tmp_path_factory.mktemp("source") / "tellwave"
    copy.mkdir()
    for item in ROOT.iterdir():
        if item.name in NOT_COPIED or item.name.endswith(".egg-info"):
            continue
        if item.is_dir():
            shutil.copytree(item, copy / item.name, ignore=shutil.ignore_patterns("__pycache__", "*.pyc"))
        else:
            shutil.copy2(item, copy / item.name)
    return copy


@pytest.fixture(scope="module")
def build(source, tmp_path_factory) -> tuple[Path, str]:
    """The wheel, and what the build printed (-v: the build backend's own messages too)."""
    out = tmp_path_factory.mktemp("wheel")
    log = _pip("wheel", ".", "-w", str(out), "--no-deps", "--no-build-isolation", "-v", cwd=source)
    (built,) = out.glob("tellwave-*.whl")
    return built, log


@pytest.fixture(scope="module")
def wheel(build) -> Path:
    return build[0]


def _environment(site: Path) -> dict:
    env = {k: v for k, v in os.environ.items() if not k.startswith("PYTHON")}
    env.update(PYTHONPATH=str(site), PYTHONNOUSERSITE="1", PYTHONDONTWRITEBYTECODE="1")
    return env


def _installed(kind: str, wheel: Path, place: Path) -> Path:
    """Install the wheel with ``--target`` or ``--prefix`` into ``place``; the folder that holds ``engine``."""
    # --ignore-installed: without it a --prefix install first uninstalls the tellwave of the running environment
    _pip("install", "--no-deps", "--no-index", "--no-compile", "--ignore-installed", f"--{kind}", str(place),
         str(wheel), cwd=place.parent)
    (paths_py,) = [p for p in place.rglob("engine/common/paths.py")]
    return paths_py.parents[2]


def _tellwave_here() -> str | None:
    """Where the running environment has tellwave installed (its metadata), or None."""
    done = subprocess.run([sys.executable, "-m", "pip", "show", "-f", "tellwave"], capture_output=True, text=True)
    return done.stdout if done.returncode == 0 else None


@pytest.mark.parametrize("kind", ["target", "prefix"])
def test_an_installed_wheel_finds_its_rulebooks_templates_and_cases(kind, wheel, tmp_path):
    before = _tellwave_here()
    site = _installed(kind, wheel, tmp_path / "install")
    assert _tellwave_here() == before, "installing elsewhere changed the running environment's tellwave"
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    env = _environment(site)

    where = _run([sys.executable, "-c", "import engine, engine.common.paths as p; "
                  "print(engine.__file__); print(p.RULEBOOKS); print(p.TEMPLATES); print(p.CASES)"],
                 cwd=elsewhere, env=env).splitlines()
    package = site / "engine"
    assert Path(where[0]).parent == package, f"engine was imported from {where[0]}, not from the install"
    for line, name in zip(where[1:], ("rulebooks", "templates", "cases")):
        assert Path(line) == package / "_data" / name
    assert (package / "_data" / "cases" / "demo").is_dir()
    assert (package / "common" / "schemas" / "rulebook.schema.json").is_file()

    out = _run([sys.executable, "-m", "engine.cli", "rulebook", "check"], cwd=elsewhere, env=env)
    assert "rulebooks are valid" in out
    listed = _run([sys.executable, "-m", "engine.cli", "rulebook", "list"], cwd=elsewhere, env=env)
    assert "bearing." in listed
    # a template, the acquisition policy and a shipped machine file, all from the install
    machine = package / "_data" / "cases" / "machines" / "rw2-raw-water-pump.yaml"
    plan = _run([sys.executable, "-m", "engine.cli", "plan", str(machine), "--no-proof"], cwd=elsewhere, env=env)
    assert "acquisition plan" in plan and "acquisition.yaml" in plan

    if kind == "prefix":       # the console script of a --prefix (or --user) install
        (script,) = (tmp_path / "install").rglob("bin/tellwave")
        assert "rulebooks are valid" in _run([str(script), "rulebook", "check"], cwd=elsewhere, env=env)


def test_the_build_warns_of_nothing_deprecated(build):
    """pyproject.toml in the form the build backend asks for (a license as an SPDX expression...)."""
    deprecated = [line.strip() for line in build[1].splitlines() if "deprecat" in line.lower()]
    assert not deprecated, "\n".join(deprecated)


def test_the_wheel_carries_the_license_and_no_data_outside_the_package(wheel):
    import zipfile

    names = zipfile.ZipFile(wheel).namelist()
    assert any(n.endswith(".dist-info/licenses/LICENSE") for n in names)
    assert not [n for n in names if ".data/" in n], "data files installed outside the package"
    for name in ("rulebooks/bearings.yaml", "rulebooks/planner/acquisition.yaml", "templates/base.html.j2",
                 "templates/diagnosis/report.html.j2",
                 "cases/machines/rw2-raw-water-pump.yaml"):
        assert f"engine/_data/{name}" in names


def test_the_sdist_carries_the_data_folders(source, tmp_path):
    """An sdist built into a wheel elsewhere (pip from an index) needs the data folders pyproject.toml maps."""
    out = _run([sys.executable, "-c", "import sys; from setuptools import build_meta; "
                "print(build_meta.build_sdist(sys.argv[1]))", str(tmp_path)], cwd=source).split()[-1]
    with tarfile.open(tmp_path / out) as sdist:
        names = {n.split("/", 1)[1] for n in sdist.getnames() if "/" in n}
    for folder in ("rulebooks", "templates", "cases"):
        shipped = {str(p.relative_to(ROOT)) for p in (ROOT / folder).rglob("*") if p.is_file()}
        assert shipped <= names, f"missing from the sdist: {sorted(shipped - names)}"
    assert {"LICENSE", "pyproject.toml"} <= names
