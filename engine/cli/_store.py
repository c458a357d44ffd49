"""The --store option the history commands share."""

from __future__ import annotations


def add_store_option(p) -> None:
    """Add ``--store``: the history store's file."""
    p.add_argument("--store", metavar="PATH",
                   help="history store (SQLite file; default: history.sqlite in the user's data folder)")


def open_store(args, *, create: bool = True):
    """The store of ``--store`` (or the default one); ``create=False`` for commands that only read it:
    they never make a store or its folder, and a missing one is a StoreError (exit 8)."""
    from ..history.store import Store, default_store_path

    return Store(args.store or default_store_path(), create=create)
