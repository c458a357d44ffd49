"""One build step beyond pyproject.toml: the data folders at the top of the repository
(rulebooks/, templates/, cases/) are copied into the built package as ``engine/_data/``,
so that every install (a venv, ``--user``, ``--prefix``, ``--target``) carries them inside
the package, where ``engine/common/paths.py`` finds them with importlib.resources.

An editable install copies nothing: there ``engine/common/paths.py`` reads the checkout's folders.
"""

import shutil
from pathlib import Path

from setuptools import setup
from setuptools.command.build_py import build_py

HERE = Path(__file__).resolve().parent
DATA_FOLDERS = ("rulebooks", "templates", "cases")
PACKAGE_DATA = Path("engine") / "_data"          # engine/common/paths.py: SHIPPED_DATA


class build_py_with_data(build_py):
    def run(self):
        super().run()
        if getattr(self, "editable_mode", False):
            return
        for name in DATA_FOLDERS:
            source = HERE / name
            if not source.is_dir():
                raise FileNotFoundError(f"{source}: a data folder of the package is missing")
            target = Path(self.build_lib) / PACKAGE_DATA / name
            if target.exists():
                shutil.rmtree(target)                  # nothing stale from an earlier build
            shutil.copytree(source, target, ignore=shutil.ignore_patterns("__pycache__", "*.py[cod]", ".*"))


setup(cmdclass={"build_py": build_py_with_data})
