"""Bytes of a user's load file to text: byte-order marks, UTF-16 without a mark, UTF-8, Latin-1, binary refusal."""

from __future__ import annotations

from pathlib import Path

from core.errors import InputError
from core.files import DecodedText, check_input_file, decode_text, read_input_bytes

#: Largest file read (128 MiB). Reading takes about 0.5 kB of memory per row, so this caps the reader near 3 GB:
#: a year of 1-minute readings (~15 MB) or of 10-second ones (~80 MB) fits, as do a few weeks of 1-second
#: readings; a year of 1-second readings (~800 MB, 31.5 million rows) does not and must be averaged first.
MAX_FILE_BYTES = 128 << 20


def read_text(path: Path) -> DecodedText:
    """Read ``path`` without modifying it and decode it; raise InputError for missing, empty or binary files."""
    path = check_input_file(path, kind="load file", max_bytes=MAX_FILE_BYTES,
                            size_hint="a year of 1-second readings is about 800 MB: average the readings to 1 min "
                                      "(a year is then about 15 MB) or 10 s, or export a shorter period")
    decoded = decode_bytes(read_input_bytes(path, kind="load file", max_bytes=MAX_FILE_BYTES), str(path))
    if not decoded.text.strip():
        raise InputError("file is empty", file=str(path), where="row 1",
                         hint="export the load data again; the file should hold a table of times and values")
    return decoded


def decode_bytes(raw: bytes, file: str) -> DecodedText:
    """Decode ``raw`` with the one text decoder shared by every CSV reader (:func:`core.files.decode_text`)."""
    return decode_text(raw, file, line_word="row")
