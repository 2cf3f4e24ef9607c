"""Bytes of a user's load file to text: byte-order marks, UTF-16 without a mark, UTF-8, Latin-1, binary refusal."""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

from core.errors import InputError

#: Largest file read (128 MiB). Reading takes about 0.5 kB of memory per row, so this caps the reader near 3 GB:
#: a year of 1-minute readings (~15 MB) or of 10-second ones (~80 MB) fits, as do a few weeks of 1-second
#: readings; a year of 1-second readings (~800 MB, 31.5 million rows) does not and must be averaged first.
MAX_FILE_BYTES = 128 << 20

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


def read_text(path: Path) -> DecodedText:
    """Read ``path`` without modifying it and decode it; raise InputError for missing, empty or binary files."""
    try:
        if not path.exists():
            raise InputError("file not found", file=str(path), hint="check the path (relative paths are "
                             "resolved from the scenario file's folder)")
        if not path.is_file():
            raise InputError("is not a file", file=str(path), hint="give the path of a CSV file")
        size = path.stat().st_size
    except (OSError, ValueError) as exc:  # a name too long, a NUL character, no permission on a folder
        raise InputError(f"cannot be opened ({getattr(exc, 'strerror', None) or exc})", file=str(path)[:300],
                         hint="check the path") from None
    if size > MAX_FILE_BYTES:
        raise InputError(f"file is {size / 2**20:.0f} MiB, more than the {MAX_FILE_BYTES >> 20} MiB this tool reads "
                         "(a year of 1-second readings is about 800 MB)", file=str(path),
                         hint="average the readings to 1 min (a year is then about 15 MB) or 10 s, or export a "
                              "shorter period")
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise InputError(f"cannot be read ({exc.strerror})", file=str(path),
                         hint="check the file's permissions") from exc
    decoded = decode_bytes(raw, str(path))
    if not decoded.text.strip():
        raise InputError("file is empty", file=str(path), where="row 1",
                         hint="export the load data again; the file should hold a table of times and values")
    return decoded


def decode_bytes(raw: bytes, file: str) -> DecodedText:
    """Decode ``raw``: a byte-order mark wins; NUL bytes on every other byte mean UTF-16; then UTF-8; then Latin-1."""
    encoding = None
    for bom, codec in _BOMS:
        if raw.startswith(bom):
            encoding = codec
            break
    if encoding is None and b"\x00" in raw[:4096]:
        encoding = _utf16_without_bom(raw[:4096])
        if encoding is None:
            row = raw[:raw.index(0)].count(10) + 1  # 10 is the newline byte
            raise InputError("looks like binary data, not a text table", file=file, where=f"row {row}",
                             hint="export the load data as CSV text")
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
            raise InputError(f"is not valid {encoding} text", file=file, where=f"row {row}",
                             hint="save the file again as UTF-8 CSV") from exc
        if encoding == "utf-8-sig":
            encoding = "utf-8 with byte-order mark"
        elif raw[:2] in (b"\xff\xfe", b"\xfe\xff"):
            text = text.lstrip("\ufeff")
    text = text.replace("\r\n", "\n").replace("\r", "\n")
    _refuse_binary(text, file)
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


def _refuse_binary(text: str, file: str) -> None:
    """Raise InputError when the decoded text holds control characters that a text table never has."""
    head = text[:20000]
    found = _CONTROL.findall(head)
    if len(found) > max(2, len(head) // 1000):
        first = _CONTROL.search(head)
        row = head[:first.start()].count("\n") + 1
        raise InputError("looks like binary data, not a text table", file=file, where=f"row {row}",
                         hint="export the load data as CSV text")
