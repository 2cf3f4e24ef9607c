"""Writing files safely: never half-written, never over a user's input."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from core.errors import InputError


def write_atomic(path: str | os.PathLike, data: bytes) -> Path:
    """Write ``data`` to ``path`` through a temporary file in the same folder and an atomic rename.

    Only a regular file (or a new name) is ever replaced: the rename would otherwise put a file in the place of
    a folder, a device such as /dev/null, or a pipe.
    """
    path = Path(path)
    if os.path.lexists(path) and not (path.is_file() and not path.is_symlink()):
        raise InputError("exists and is not a regular file; it is not replaced", file=str(path),
                         hint="give the name of a new or ordinary file")
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent or ".")
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path
