"""Output files: written whole or not at all, and never over something the user keeps.

Every file tellwave writes (reports, simulated readings with their sidecars,
the demo) goes through ``staged``: the target is checked first (not empty,
not a folder, not a symbolic link, device, pipe or socket, not one of the
run's input files), the content goes to a hidden ``.NAME.PID.XXXX.part``
file in the same folder, is flushed to the disk (fsync) and only then
renamed over the target, and the folder is synced so the rename survives a
power cut. A ``.part`` file left by an earlier run that was killed is
removed the next time the same target is written.
"""

from __future__ import annotations

import contextlib
import os
import re
import stat
import tempfile
import time
from collections.abc import Iterator
from pathlib import Path

from .errors import OutputError

STALE_PART_S = 3600.0   # a .part file this old belongs to no write still running


def _reason(exc: OSError) -> str:
    return exc.strerror or exc.__class__.__name__


def check_target(path, inputs=()) -> Path:
    """``path`` as a Path if tellwave may write a file there, else ``OutputError`` saying why.

    ``inputs`` are the files the run reads; writing over any of them (by
    name, through a link, or as a hard link of it) is refused.
    """
    if path is None or str(path).strip() == "":
        raise OutputError("the output file name is empty")
    text = str(path)
    if "\0" in text:
        raise OutputError("contains a NUL character, which no file name can hold", path=text.replace("\0", "\\x00"))
    target = Path(text)
    if text.endswith(("/", os.sep)) or target.name in ("", ".", ".."):
        raise OutputError("names a folder; give a file name", path=text)
    try:
        info = os.lstat(target)
    except FileNotFoundError:
        info = None
    except OSError as exc:
        raise OutputError(f"cannot write here ({_reason(exc)})", path=text) from None
    if info is not None:
        if stat.S_ISLNK(info.st_mode):
            raise OutputError("is a symbolic link; name the file itself", path=text)
        if stat.S_ISDIR(info.st_mode):
            raise OutputError("is a folder; give a file name", path=text)
        if not stat.S_ISREG(info.st_mode):
            raise OutputError("is not a regular file (a device, pipe or socket); tellwave writes only files",
                              path=text)
    source = known_inputs(inputs).find(target)
    if source is not None:
        raise OutputError(f"is an input of this run ({source}); tellwave never writes over its inputs",
                          path=text)
    return target


def sqlite_files(path) -> list[Path]:
    """A SQLite file (the history store) with the journal files SQLite keeps beside it."""
    return [Path(path)] + [Path(f"{path}{suffix}") for suffix in ("-wal", "-shm", "-journal")]


class Inputs:
    """The files a run reads, looked up in constant time: by identity (device and inode: a hard link
    or a link to an input is the input) and by real path (an input not yet created, a store's journal)."""

    def __init__(self, paths=()) -> None:
        self.by_id: dict[tuple[int, int], Path] = {}
        self.by_real: dict[str, Path] = {}
        for p in paths:
            p = Path(p)
            try:
                info = os.stat(p)
                self.by_id.setdefault((info.st_dev, info.st_ino), p)
            except OSError:
                pass
            self.by_real.setdefault(os.path.realpath(p), p)

    def find(self, target) -> Path | None:
        """The input ``target`` is, or None."""
        try:
            info = os.stat(target)
            hit = self.by_id.get((info.st_dev, info.st_ino))
        except OSError:
            hit = None
        return hit if hit is not None else self.by_real.get(os.path.realpath(target))


def known_inputs(inputs) -> Inputs:
    """``inputs`` as ``Inputs`` (built once: a route checks hundreds of outputs against thousands of inputs)."""
    return inputs if isinstance(inputs, Inputs) else Inputs(inputs)


def _pid_alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except OSError:     # alive but another user's, or we may not ask
        return True
    return True


def clean_stale_parts(target: Path) -> list[Path]:
    """Remove the ``.part`` files an interrupted write of ``target`` left behind; return them.

    Only files named as ``staged`` names them, for this target, whose process
    is gone or that are older than ``STALE_PART_S``.
    """
    folder = target.parent
    pattern = re.compile(r"^\." + re.escape(target.name) + r"\.(\d+)\.[A-Za-z0-9_]+\.part$")
    removed: list[Path] = []
    try:
        entries = list(os.scandir(folder))
    except OSError:
        return removed
    now = time.time()
    for entry in entries:
        m = pattern.match(entry.name)
        if not m:
            continue
        try:
            info = entry.stat(follow_symlinks=False)
            if not stat.S_ISREG(info.st_mode):
                continue
            if _pid_alive(int(m.group(1))) and now - info.st_mtime < STALE_PART_S:
                continue
            os.unlink(entry.path)
            removed.append(Path(entry.path))
        except OSError:
            continue
    return removed


def _fsync_folder(folder: Path) -> None:
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass        # some file systems cannot sync a folder; the rename itself is atomic
    finally:
        os.close(fd)


@contextlib.contextmanager
def staged(path, inputs=()) -> Iterator[Path]:
    """Yield a temporary path to write; on success it replaces ``path`` whole.

    On any failure (an exception, Ctrl-C) the temporary file is removed and
    ``path`` is left as it was. OS errors become ``OutputError``.
    """
    target = check_target(path, inputs)
    try:
        target.parent.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(f"cannot create its folder ({_reason(exc)})", path=str(target)) from None
    clean_stale_parts(target)
    try:
        fd, name = tempfile.mkstemp(prefix=f".{target.name}.{os.getpid()}.", suffix=".part", dir=target.parent)
    except OSError as exc:
        raise OutputError(f"cannot write here ({_reason(exc)})", path=str(target)) from None
    os.close(fd)
    tmp = Path(name)
    try:
        yield tmp
        with open(tmp, "rb+") as f:
            os.fsync(f.fileno())
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)
        check_target(target, inputs)     # nothing swapped in meanwhile
        os.replace(tmp, target)
        _fsync_folder(target.parent)
    except OSError as exc:
        tmp.unlink(missing_ok=True)
        raise OutputError(f"cannot write ({_reason(exc)})", path=str(target)) from None
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise


def write_whole(path, content: str | bytes, inputs=()) -> Path:
    """Write ``content`` (text as UTF-8) to ``path`` through ``staged``; return the path."""
    # a name that was not valid UTF-8 on the command line is written as its escape code
    data = content.encode("utf-8", "backslashreplace") if isinstance(content, str) else content
    with staged(path, inputs) as tmp:
        with open(tmp, "wb") as f:
            f.write(data)
    return Path(path)


def prepare_folder(path) -> Path:
    """A folder to write into, created if missing; ``OutputError`` if it cannot be."""
    if path is None or str(path).strip() == "":
        raise OutputError("the output folder name is empty")
    if "\0" in str(path):
        raise OutputError("contains a NUL character, which no folder name can hold",
                          path=str(path).replace("\0", "\\x00"))
    folder = Path(path)
    if folder.is_symlink() and not folder.is_dir():
        raise OutputError("is a broken symbolic link", path=str(folder))
    if folder.exists() and not folder.is_dir():
        raise OutputError("is a file, not a folder", path=str(folder))
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(f"cannot create the folder ({_reason(exc)})", path=str(folder)) from None
    if not os.access(folder, os.W_OK | os.X_OK):
        raise OutputError("cannot write in this folder (permission denied)", path=str(folder))
    return folder
