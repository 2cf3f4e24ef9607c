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
        # mkstemp makes the file private (0600); give it the mode a plain new file would get under the umask
        os.fchmod(fd, 0o666 & ~_umask())
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path


def _umask() -> int:
    """The process's umask, read without changing it (os.umask would, for a moment, in every thread)."""
    try:
        for line in Path("/proc/self/status").read_text().splitlines():
            if line.startswith("Umask:"):
                return int(line.split()[1], 8)
    except (OSError, ValueError):
        pass
    return 0o022
