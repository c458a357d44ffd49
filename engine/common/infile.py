"""Input files: a path checked to be a regular file before it is opened, each problem one line.

A folder, a pipe or a device given where a file is expected would otherwise hang a read or fail
with a traceback; every reader (YAML, readings, findings CSV) asks here first.
"""

from __future__ import annotations

import os
import stat

from .errors import TellwaveError


def regular_file(path: str, error: type[TellwaveError], kind: str) -> os.stat_result:
    """``os.stat`` of ``path``; ``error`` naming the file when it is missing, cannot be opened, has a name
    no file can have, or is a folder or anything but a regular file (``kind``: "YAML file", ...)."""
    try:
        info = os.stat(path)
    except FileNotFoundError:
        raise error("no such file", path=path) from None
    except OSError as exc:
        raise error(f"cannot open ({exc.strerror or exc.__class__.__name__})", path=path) from None
    except ValueError:      # a NUL, or a character the file system cannot encode (a lone surrogate)
        raise error("cannot open: the name holds a character no file name can (a NUL or a lone surrogate)",
                    path=path) from None
    if stat.S_ISDIR(info.st_mode):
        raise error(f"is a folder, not a {kind}", path=path)
    if not stat.S_ISREG(info.st_mode):
        raise error("is not a regular file", path=path)
    return info
