"""The --store option the history commands share."""

from __future__ import annotations


def add_store_option(p) -> None:
    """Add ``--store``: the history store's file."""
    p.add_argument("--store", metavar="PATH",
                   help="history store (SQLite file; default: history.sqlite in the user's data folder)")


def check_store_folder(path) -> None:
    """A store named with --store must be in a folder that exists: a mistyped folder would start a new, empty
    history without a word (a UsageError, exit 2). The default store's folder is made when needed."""
    from pathlib import Path

    from ..common.errors import UsageError

    if path and not Path(path).parent.is_dir():
        raise UsageError(f"--store {path}: there is no folder {Path(path).parent}; make it first, or check the "
                         "path (a new store is started only in a folder that exists)")


def open_store(args, *, create: bool = True):
    """The store of ``--store`` (or the default one); ``create=False`` for commands that only read it:
    they never make a store or its folder, and a missing one is a StoreError (exit 8). A store that may
    be made must name a folder that exists (``check_store_folder``)."""
    from ..history.store import Store, default_store_path

    if create:
        check_store_folder(args.store)
    return Store(args.store or default_store_path(), create=create)
