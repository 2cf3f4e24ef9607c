"""Text to a table of strings: separator, preamble lines, header row(s), and every row's line number in the file.

Rows are numbered as lines of the file, starting at 1, the way a text editor shows them; every message that
names a row uses that number.
"""

from __future__ import annotations

import csv
import io
import re
import warnings
from collections import Counter
from dataclasses import dataclass

import numpy as np
import pandas as pd

from core.errors import InputError

SEPARATORS = (",", ";", "\t", "|")
SEPARATOR_NAMES = {",": "comma", ";": "semicolon", "\t": "tab", "|": "vertical bar"}
#: Lines looked at to find the separator, the header and the first data row.
SNIFF_LINES = 400
LINE_COLUMN = "__line__"
#: Widest table read. A load export has a timestamp and a few readings; thousands of columns are not a load file,
#: and scanning them would take minutes, so they are refused before any field is looked at.
MAX_COLUMNS = 256

# A field that looks like a date (2024-03-01, 01.03.2024, 3/1/24), a bare ISO date-time, or a Unix time.
_DATE_LIKE = re.compile(r"^\s*\"?(\d{4}[-./]\d{1,2}[-./]\d{1,2}|\d{1,2}[-./]\d{1,2}[-./]\d{2,4}|\d{8}T\d{4}"
                        r"|\d{10}(\.\d+)?$|\d{13}$)")
_NUMBER_LIKE = re.compile(r"^\s*[-+]?(\d+([.,]\d*)?|[.,]\d+)([eE][-+]?\d+)?\s*$")
_TIME_LIKE = re.compile(r"^\s*\d{1,2}:\d{2}")
# Characters a date-time field is made of (a field holding another separator is a wrong split).
_TIMESTAMP_CHARS = re.compile(r"^[\d :./TZ+\-]+(\s?[AaPp][Mm]|\s?UTC|\s?GMT)?$")
_UNIT_ONLY = re.compile(r"^\s*[\[(]?\s*(k?wh?|watts?|kilowatts?|kilowatt[- ]?hours?|watt[- ]?hours?|-|)\s*[\])]?\s*$",
                        re.IGNORECASE)


@dataclass(frozen=True)
class RawTable:
    """The table part of a file as strings; ``rows`` has one column per header name plus ``__line__``."""
    rows: pd.DataFrame
    names: tuple[str, ...]
    separator: str
    header_row: int | None      # line number of the (last) header row, None when the file has none
    first_data_row: int
    preamble_rows: int          # non-blank lines above the header that were skipped
    malformed_rows: np.ndarray  # line numbers skipped because they had more fields than the header
    notes: tuple[str, ...] = ()  # warnings about the table's layout, naming rows


def is_comment(line: str) -> bool:
    stripped = line.lstrip()
    return stripped.startswith("#") or stripped.startswith("//")


def find_table(text: str, file: str) -> RawTable:
    """Locate the table in ``text``: choose the separator, skip preamble lines, read the header and the rows."""
    # Only the head is split into lines here: a ten-year one-minute file has five million of them, and a list of
    # Python strings for each would cost more memory than the whole table.
    lines = text.split("\n", SNIFF_LINES * 5)[:SNIFF_LINES * 5]
    sniff = [(i, line) for i, line in enumerate(lines)
             if line.strip() and not is_comment(line)][:SNIFF_LINES]
    if not sniff:
        raise InputError("holds no table (only blank or comment lines)", file=file, where="row 1",
                         hint="export the load data again as a table of times and values")
    separator, width = _choose_separator([line for _, line in sniff], file)
    parsed = {i: _split(line, separator) for i, line in sniff}
    data_pos = next((k for k, (i, _) in enumerate(sniff)
                     if len(parsed[i]) == width and any(_DATE_LIKE.match(f) for f in parsed[i])), None)
    if data_pos is None:
        first_row, last_row = sniff[0][0] + 1, sniff[-1][0] + 1
        if len(sniff) == 1:
            raise InputError("has a single line and no data rows below it (no row with a date and time)",
                             file=file, where=f"row {first_row}", hint="export a period with readings")
        raise InputError(f"no row with a date and time found in the first {len(sniff)} rows", file=file,
                         where=f"rows {first_row}-{last_row}",
                         hint="the table needs a column of timestamps such as 2024-03-01 00:15 and a column "
                              "of readings")
    first_data_index = sniff[data_pos][0]
    header_index, header_first, names = _header(sniff[:data_pos], parsed)
    if names is None:
        names = ()
    if len(names) < width:  # rows wider than the header (e.g. a trailing separator): name the extra fields
        names = _dedupe([*names, *(f"column {k + 1}" for k in range(len(names), width))])
    top = first_data_index if header_first is None else header_first
    preamble = sum(1 for i, _ in sniff[:data_pos] if i < top)
    offset = sum(len(line) + 1 for line in lines[:first_data_index])
    fast = _read_plain_rows(text, offset, first_data_index, separator, names)
    if fast is not None:
        rows, malformed, notes = fast, np.zeros(0, dtype=np.int64), ()
    else:
        rows, malformed, notes = _read_rows(text.split("\n"), first_data_index, separator, names, file)
    if header_index is not None and rows.empty:
        raise InputError("has a header but no data rows", file=file, where=f"row {header_index + 1}",
                         hint="export a period with readings")
    return RawTable(rows=rows, names=names, separator=separator,
                    header_row=None if header_index is None else header_index + 1,
                    first_data_row=first_data_index + 1, preamble_rows=max(preamble, 0), malformed_rows=malformed,
                    notes=notes)


def _split(line: str, separator: str) -> list[str]:
    try:
        return next(csv.reader([line], delimiter=separator, skipinitialspace=True), [])
    except csv.Error:
        return line.split(separator)


def _choose_separator(lines: list[str], file: str) -> tuple[str, int]:
    """The separator that splits most lines into the same number (≥ 2) of fields that look like data."""
    best: tuple[float, str, int] | None = None
    body = lines[len(lines) // 3:] if len(lines) >= 6 else lines
    too_wide: tuple[int, str] | None = None
    for sep in SEPARATORS:
        # A cheap count first: a separator that would give more than MAX_COLUMNS fields is not split at all.
        counts = Counter(line.count(sep) + 1 for line in body)
        if counts.most_common(1)[0][0] > MAX_COLUMNS:
            too_wide = max(too_wide or (0, sep), (counts.most_common(1)[0][0], sep))
            continue
        split = [_split(line, sep) for line in body]
        width, n_same = Counter(len(f) for f in split).most_common(1)[0]
        if width < 2:
            continue
        fields = [f for line_fields in split if len(line_fields) == width for f in line_fields]
        looks = sum(1 for f in fields if _NUMBER_LIKE.match(f) or (_TIMESTAMP_CHARS.match(f) and (
            _DATE_LIKE.match(f) or _TIME_LIKE.match(f))))
        score = n_same * (0.5 + looks / max(len(fields), 1))
        if best is None or score > best[0]:
            best = (score, sep, width)
    if best is None and too_wide is not None:
        raise InputError(f"has {too_wide[0]:,} columns ({SEPARATOR_NAMES[too_wide[1]]} separated); this tool reads "
                         f"tables of at most {MAX_COLUMNS} columns", file=file, where="row 1",
                         hint="export only the timestamp and load columns")
    if best is None:
        raise InputError("no columns found: no line splits into fields at a comma, semicolon, tab or "
                         "vertical bar", file=file, where="row 1",
                         hint="the table needs a timestamp column and a value column separated by , or ;")
    return best[1], best[2]


def _header(above: list[tuple[int, str]], parsed: dict[int, list[str]]
            ) -> tuple[int | None, int | None, tuple[str, ...] | None]:
    """(last header line, first header line, names) from the line(s) just above the first data row.

    ``(None, None, None)`` when there is no header. A second line of units under the names (e.g. ``;kW``)
    is merged into the names.
    """
    if not above:
        return None, None, None
    index, _ = above[-1]
    fields = parsed[index]
    if len(fields) < 2 or all(_NUMBER_LIKE.match(f) or not f.strip() for f in fields):
        return None, None, None
    names = [f.strip().strip('"').strip() for f in fields]
    first = index
    if _is_units_row(fields) and len(above) >= 2:
        names_index, _ = above[-2]
        top = [f.strip() for f in parsed[names_index]]
        if len(top) >= 2:
            units = names + [""] * (len(top) - len(names))
            names = [f"{name} [{unit.strip('[]() ')}]" if unit.strip() else name
                     for name, unit in zip(top, units, strict=False)]
            first = names_index
    return index, first, _dedupe(names)


def _is_units_row(fields: list[str]) -> bool:
    return len(fields) >= 2 and all(_UNIT_ONLY.match(f) for f in fields) and any(f.strip() for f in fields)


def _dedupe(names: list[str]) -> tuple[str, ...]:
    out: list[str] = []
    seen: Counter[str] = Counter()
    for k, name in enumerate(names):
        name = name or f"column {k + 1}"
        seen[name] += 1
        out.append(name if seen[name] == 1 else f"{name} ({seen[name]})")
    return tuple(out)


def _read_plain_rows(text: str, offset: int, start: int, separator: str, names: tuple[str, ...]
                     ) -> pd.DataFrame | None:
    """The rows of a plain table (``text`` from character ``offset``, line ``start``) in one pass of pandas'
    pyarrow engine, or None when the body is not plain.

    Plain: no quote characters, no blank or comment lines, no space after a separator, and every line with the
    header's number of fields (the parser refuses any other). Then line *k* of the body is row ``start + 1 + k``
    of the file, and no per-line bookkeeping is needed; anything else takes :func:`_read_rows`. The body is
    searched in place, not copied: a ten-year one-minute file is over 100 MB of text."""
    end = len(text)
    while end > offset and text[end - 1] == "\n":
        end -= 1
    if end <= offset or text[offset] in "#/ ":
        return None
    # A quote is searched in the text (one fast scan); the other signs of a body that is not plain are looked for
    # in the parsed fields below, which is several times quicker than a scan of the text for each.
    if text.find('"', offset, end) != -1:
        return None
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            rows = pd.read_csv(io.BytesIO(text.encode("utf-8")), sep=separator, header=None, names=list(names),
                               skiprows=start, dtype="str", keep_default_na=False, engine="pyarrow")
    except Exception:  # noqa: BLE001 - any irregular line: the careful reader below handles and names it
        return None
    if len(rows) != text.count("\n", offset, end) + 1 or list(rows.columns) != list(names):
        return None  # a blank line (skipped by the parser) or a line of another width
    if _fields_not_plain(rows):
        return None
    rows.insert(0, LINE_COLUMN, np.arange(start + 1, start + 1 + len(rows), dtype=np.int64))
    return rows


def _fields_not_plain(rows: pd.DataFrame) -> bool:
    """Whether a parsed plain body hides a comment line (``#`` or ``//`` at a line's start), a line that starts
    with a space, or a space after a separator — what the careful reader treats its own way. The same as searching
    the text for them, since without quotes every separator splits fields and every line starts a row."""
    first, *others = rows.columns
    try:
        import pyarrow as pa
        import pyarrow.compute as pc

        def starts(column: str, prefix: str) -> bool:
            return bool(pc.any(pc.starts_with(pa.Array.from_pandas(rows[column]), prefix)).as_py())

        return (any(starts(first, p) for p in ("#", "//", " "))
                or any(starts(c, " ") for c in others))
    except Exception:  # noqa: BLE001 - columns not held by pyarrow: the same test in pandas
        head = rows[first].astype("str")
        return bool(head.str.startswith(("#", "//", " ")).any()
                    or any(rows[c].astype("str").str.startswith(" ").any() for c in others))


def _read_rows(lines: list[str], start: int, separator: str, names: tuple[str, ...], file: str
               ) -> tuple[pd.DataFrame, np.ndarray, tuple[str, ...]]:
    """Read every line from ``start`` on with pandas' C parser, each prefixed by its line number.

    Blank and comment lines are dropped first; lines with more fields than the header are skipped by the
    parser and returned as ``malformed`` line numbers; missing trailing fields read as empty strings.
    """
    body = pd.Series(lines[start:], dtype="str")
    numbers = np.arange(start + 1, start + 1 + len(body))
    stripped = body.str.strip()
    keep = ((stripped != "") & ~stripped.str.startswith("#") & ~stripped.str.startswith("//")).to_numpy()
    kept_numbers = numbers[keep]
    kept_lines = body[keep].reset_index(drop=True)
    prefixed = pd.Series(kept_numbers.astype(str), dtype="str") + separator + kept_lines
    blob = "\n".join(prefixed.tolist())
    # A line with an odd number of quote characters would open a quoted field that swallows the lines after
    # it: then quotes are not treated as quoting at all, and stripped from the fields afterwards.
    odd = (kept_lines.str.count('"') % 2 == 1).to_numpy()
    notes: list[str] = []
    quoting = csv.QUOTE_MINIMAL
    if odd.any():
        quoting = csv.QUOTE_NONE
        notes.append(f"{int(odd.sum())} row(s) hold an unmatched quote character (first at row "
                     f"{int(kept_numbers[np.argmax(odd)])}); quote characters were ignored")
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", pd.errors.ParserWarning)  # short rows are handled below
            rows = pd.read_csv(io.StringIO(blob), sep=separator, header=None, names=[LINE_COLUMN, *names],
                               dtype="str", keep_default_na=False, na_filter=False, on_bad_lines="skip",
                               index_col=False, skipinitialspace=True, engine="c", skip_blank_lines=True,
                               quoting=quoting)
    except (pd.errors.ParserError, ValueError, csv.Error) as exc:
        raise InputError(f"the table cannot be read ({exc})", file=file, where=f"row {start + 1}",
                         hint="export the file again as a plain CSV table") from exc
    if quoting == csv.QUOTE_NONE:
        for name in names:
            rows[name] = rows[name].str.replace('"', "", regex=False)
    line_numbers = pd.to_numeric(rows[LINE_COLUMN], errors="coerce").to_numpy(dtype=float, na_value=np.nan)
    expected = np.zeros(len(lines) + 2, dtype=bool)
    expected[kept_numbers] = True
    whole = np.isfinite(line_numbers) & (line_numbers >= 1) & (line_numbers <= len(lines))
    whole[whole] &= expected[line_numbers[whole].astype(np.int64)]
    rows = rows.loc[whole].copy()
    rows[LINE_COLUMN] = line_numbers[whole].astype(np.int64)
    rows = rows.reset_index(drop=True)
    seen = np.zeros(len(lines) + 2, dtype=bool)
    seen[rows[LINE_COLUMN].to_numpy()] = True
    missing = kept_numbers[~seen[kept_numbers]]
    if len(rows) < 0.5 * len(kept_numbers) and len(kept_numbers) > 4:
        raise InputError("most rows cannot be split into the header's columns; an unmatched quote "
                         "character may have joined them", file=file, where=f"row {int(missing[0])}",
                         hint="remove the stray quote or export the file again")
    return rows, missing, tuple(notes)


def release_string_memory() -> None:
    """Hand the memory of freed pyarrow strings back to the system. The table's strings live in pyarrow's memory
    pool, which keeps freed blocks for reuse; once a reader has turned them into numbers (hundreds of MB on a
    file of millions of rows) the pool is told to return them, so that the arrays built next do not come on top."""
    try:
        import pyarrow as pa

        pa.default_memory_pool().release_unused()
    except Exception:  # noqa: BLE001 - an older pyarrow without it: the memory is only held longer
        pass
