"""pyproject.toml alone says what the wheel holds: every package folder of engine/ and every folder of
the shipped data (rulebooks/, templates/, cases/, as engine._data.*) is listed there, so a new folder
cannot be left out of an install unnoticed. tests/test_install.py builds and installs the wheel."""

from __future__ import annotations

import tomllib

from support import ROOT

SETUPTOOLS = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["tool"]["setuptools"]
DATA_FOLDERS = ("rulebooks", "templates", "cases")


def _data_packages() -> dict[str, str]:
    """{package name: folder} for every folder of the shipped data that holds a file."""
    found = {}
    for top in DATA_FOLDERS:
        for folder in [ROOT / top, *sorted(p for p in (ROOT / top).rglob("*") if p.is_dir())]:
            if "__pycache__" in folder.parts or not any(p.is_file() for p in folder.iterdir()):
                continue
            relative = folder.relative_to(ROOT)
            found["engine._data." + ".".join(relative.parts)] = str(relative)
    return found


def test_every_package_folder_of_engine_is_listed():
    on_disk = {".".join(p.parent.relative_to(ROOT).parts) for p in (ROOT / "engine").rglob("__init__.py")}
    listed = {p for p in SETUPTOOLS["packages"] if not p.startswith("engine._data")}
    assert on_disk <= listed, f"package folders not listed in pyproject.toml: {sorted(on_disk - listed)}"
    assert listed <= on_disk, f"listed in pyproject.toml, no such package folder: {sorted(listed - on_disk)}"


def test_every_data_folder_is_listed_mapped_and_shipped_whole():
    data = _data_packages()
    assert "engine._data.rulebooks.planner" in data and "engine._data.cases.demo" in data
    listed = {p for p in SETUPTOOLS["packages"] if p.startswith("engine._data")}
    assert set(data) <= listed, f"data folders not listed: {sorted(set(data) - listed)}"
    gone = [p for p in listed if not (ROOT / p.split(".", 2)[2].replace(".", "/")).is_dir()]
    assert not gone, f"listed in pyproject.toml, no such data folder: {gone}"
    for package, folder in data.items():
        top = package.split(".")[2]
        assert SETUPTOOLS["package-dir"][f"engine._data.{top}"] == top
        assert SETUPTOOLS["package-data"].get(package) == ["*"], f"{folder}: not every file is shipped"


def test_no_setup_py_or_manifest_beside_pyproject():
    assert not (ROOT / "setup.py").exists() and not (ROOT / "MANIFEST.in").exists()
