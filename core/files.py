"""Files in and out, safely: user files are read as bounded regular files and decoded one way; outputs are never
half-written and never written over a user's input."""

from __future__ import annotations

import os
import re
import stat
import tempfile
from dataclasses import dataclass
from pathlib import Path

from core.errors import InputError

#: Largest file of each kind read (bytes), stated once here: the messages, the docs and the page quote these.
#: A scenario is a page of text; an outage list a few thousand lines; a weather year at one minute is ~35 MB.
MAX_SCENARIO_BYTES = 1 << 20
MAX_OUTAGES_BYTES = 8 << 20
MAX_WEATHER_BYTES = 128 << 20


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


# ----------------------------------------------------------------------------------------------------------------
# a user's file: a regular file under a stated size, read without changing it


def check_input_file(path: str | os.PathLike, *, kind: str, max_bytes: int, where: str | None = None,
                     size_hint: str = "check that it is the right file") -> Path:
    """``path`` as a Path when it names a regular file of at most ``max_bytes``; else an InputError naming it.

    Checked before anything is opened, so that a device (``/dev/zero``), a pipe (which would block) or a huge file
    is refused with a message instead of filling memory or hanging."""
    path = Path(path)
    try:
        info = path.stat()
    except FileNotFoundError:
        raise InputError(f"{kind} not found", file=str(path)[:300], where=where,
                         hint="check the path; relative paths are taken from the scenario file's folder") from None
    except (OSError, ValueError) as exc:  # a name too long, a NUL character, no permission on a folder, a loop
        raise InputError(f"{kind} cannot be opened ({getattr(exc, 'strerror', None) or exc})", file=str(path)[:300],
                         where=where, hint="check the path") from None
    if not stat.S_ISREG(info.st_mode):
        raise InputError(f"{kind} is not a file but a folder, device or pipe", file=str(path), where=where,
                         hint="give the path of an ordinary file")
    if info.st_size > max_bytes:
        raise InputError(f"{kind} is {_size_text(info.st_size)}, more than the {_size_text(max_bytes)} this tool "
                         "reads", file=str(path), where=where, hint=size_hint)
    return path


def read_input_bytes(path: str | os.PathLike, *, kind: str, max_bytes: int, where: str | None = None) -> bytes:
    """The bytes of a checked input file (:func:`check_input_file`), never more than ``max_bytes`` of them (a file
    that grows while read, or a system file that reports no size, is refused too)."""
    path = check_input_file(path, kind=kind, max_bytes=max_bytes, where=where)
    try:
        with open(path, "rb") as fh:
            data = fh.read(max_bytes + 1)
    except OSError as exc:
        raise InputError(f"{kind} cannot be read ({exc.strerror})", file=str(path), where=where,
                         hint="check the file's permissions") from None
    if len(data) > max_bytes:
        raise InputError(f"{kind} is more than the {_size_text(max_bytes)} this tool reads", file=str(path),
                         where=where, hint="check that it is the right file")
    return data


def _size_text(n: int) -> str:
    return f"{n / 2**20:.0f} MiB" if n >= 2**20 else f"{n / 2**10:.0f} KiB" if n >= 2**10 else f"{n} bytes"


# ----------------------------------------------------------------------------------------------------------------
# text of a user's file: one decoder for every CSV reader (loads, weather)

_BOMS = (
    (b"\xef\xbb\xbf", "utf-8-sig"),
    (b"\xff\xfe", "utf-16-le"),
    (b"\xfe\xff", "utf-16-be"),
)
# Control characters that never occur in a text table (tab, newline and carriage return excluded).
_CONTROL = re.compile(r"[\x00-\x08\x0e-\x1f\x7f]")


@dataclass(frozen=True)
class DecodedText:
    text: str        # newlines normalised to "\n", no byte-order mark
    encoding: str    # codec used, as Python names it


def decode_text(raw: bytes, file: str, *, line_word: str = "row") -> DecodedText:
    """Decode a text table: a byte-order mark wins; NUL bytes on every other byte mean UTF-16; then UTF-8; then
    Latin-1 (in which every byte is a character). Binary data is refused with an InputError naming the
    ``line_word`` ("row" or "line") where it starts."""
    encoding = None
    for bom, codec in _BOMS:
        if raw.startswith(bom):
            encoding = codec
            break
    if encoding is None and b"\x00" in raw[:4096]:
        encoding = _utf16_without_bom(raw[:4096])
        if encoding is None:
            row = raw[:raw.index(0)].count(10) + 1  # 10 is the newline byte
            raise InputError("looks like binary data, not a text table", file=file, where=f"{line_word} {row}",
                             hint="give comma-separated text (CSV)")
    if encoding is None:
        try:
            text = raw.decode("utf-8")
            encoding = "utf-8"
        except UnicodeDecodeError:
            text = raw.decode("latin-1")  # every byte maps to a character, so this cannot fail
            encoding = "latin-1"
    else:
        try:
            text = raw.decode(encoding)
        except UnicodeDecodeError as exc:
            row = raw[:exc.start].decode(encoding, errors="replace").count("\n") + 1
            raise InputError(f"is not valid {encoding} text", file=file, where=f"{line_word} {row}",
                             hint="save the file again as UTF-8 CSV") from exc
        if encoding == "utf-8-sig":
            encoding = "utf-8 with byte-order mark"
        elif raw[:2] in (b"\xff\xfe", b"\xfe\xff"):
            text = text.lstrip("\ufeff")
    if "\r" in text:  # each replacement copies the text: only when there is something to replace
        text = text.replace("\r\n", "\n").replace("\r", "\n")
    _refuse_binary(text, file, line_word)
    return DecodedText(text=text, encoding=encoding)


def _utf16_without_bom(head: bytes) -> str | None:
    """'utf-16-le'/'utf-16-be' when NUL bytes sit on odd/even positions of mostly-ASCII UTF-16 text, else None."""
    n = len(head) - len(head) % 2
    if n < 4:
        return None
    even_nul = head[0:n:2].count(0) / (n / 2)
    odd_nul = head[1:n:2].count(0) / (n / 2)
    if odd_nul > 0.9 and even_nul < 0.1:
        return "utf-16-le"
    if even_nul > 0.9 and odd_nul < 0.1:
        return "utf-16-be"
    return None


def _refuse_binary(text: str, file: str, line_word: str) -> None:
    """Raise InputError when the decoded text holds control characters that a text table never has."""
    head = text[:20000]
    found = _CONTROL.findall(head)
    if len(found) > max(2, len(head) // 1000):
        first = _CONTROL.search(head)
        row = head[:first.start()].count("\n") + 1 if first else 1
        raise InputError("looks like binary data, not a text table", file=file, where=f"{line_word} {row}",
                         hint="give comma-separated text (CSV)")
