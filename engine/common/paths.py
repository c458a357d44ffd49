"""Where the shipped data folders are: rulebooks/, templates/ and cases/; and the user's cache folder.

An installed package carries them inside itself as ``engine/_data/`` (pyproject.toml maps
them there when the wheel is built), found with importlib.resources wherever the
package was installed: a venv, ``pip install --user``, ``--prefix`` or ``--target``.
In a checkout and an editable install they are the folders at the top of the
repository, beside the engine package. Every module asks here instead of guessing
from its own path.
"""

from __future__ import annotations

import os
from importlib import resources
from pathlib import Path

SHIPPED_DATA = "_data"          # pyproject.toml: the engine._data.* packages


def _installed_data() -> Path | None:
    """``engine/_data`` of an installed package, or None (a checkout, or a package not on a file system)."""
    try:
        place = resources.files("engine").joinpath(SHIPPED_DATA)
    except (ModuleNotFoundError, TypeError):
        return None
    return place if isinstance(place, Path) and (place / "rulebooks").is_dir() else None


def _data_root() -> Path:
    installed = _installed_data()
    if installed is not None:
        return installed
    checkout = Path(__file__).resolve().parents[2]
    if (checkout / "rulebooks").is_dir():
        return checkout
    # neither: the package was installed without its data; name where it was looked for
    return Path(__file__).resolve().parents[1] / SHIPPED_DATA


DATA_ROOT = _data_root()
RULEBOOKS = DATA_ROOT / "rulebooks"
TEMPLATES = DATA_ROOT / "templates"
CASES = DATA_ROOT / "cases"


def user_cache() -> Path | None:
    """The user's cache folder for tellwave (``platformdirs.user_cache_path``), or None when there is
    none. What is kept there only spares work: schema passes (``common.passed``) and compiled report
    templates (``report.render``), each keyed by everything its result depends on; deleting it is
    safe. Each of its folders is kept to ``CACHE_FILES_MOST`` files by ``trim``."""
    try:
        from platformdirs import user_cache_path

        return user_cache_path("tellwave", appauthor=False)
    except Exception:        # no home folder or the like: do the work in full, never fail for it
        return None


# The most files one cache folder keeps. A pass or a compiled template is a few hundred bytes at most,
# so this bounds a folder to a few megabytes however many site rulebooks, template edits or upgrades
# it has seen; what is trimmed is only done again once.
CACHE_FILES_MOST = 2000


def trim(folder: Path, most: int | None = None) -> None:
    """Keep ``folder`` to ``most`` files (``CACHE_FILES_MOST`` unless given): past it, delete the
    oldest written (by modification time) down to three quarters of ``most``, so the folder is not
    listed again on every write. Called by whoever has just written there; any failure leaves the
    folder as it is, silently."""
    most = CACHE_FILES_MOST if most is None else most
    try:
        with os.scandir(folder) as it:
            files = [e for e in it if e.is_file(follow_symlinks=False)]
        if len(files) <= most:
            return
        files.sort(key=lambda e: e.stat(follow_symlinks=False).st_mtime_ns)
        for entry in files[: len(files) - (3 * most) // 4]:
            try:
                os.unlink(entry.path)
            except FileNotFoundError:      # another process trimmed it first
                pass
    except OSError:
        pass
