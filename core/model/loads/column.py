"""Which column of a load file holds the load: the caller's choice, else the numeric column whose header best
names what the household draws."""

from __future__ import annotations

import difflib
import re

from core.errors import InputError
from core.model.loads.numbers import parse_numbers
from core.model.loads.table import LINE_COLUMN, RawTable
from core.model.loads.timestamps import TimeColumns

_NEGATIVE_WORDS = ("export", "feed", "pv", "solar", "generation", "production", "yield", "voltage", "volt",
                   "current", "amp", "temperature", "temp", "status", "state", "id", "frequency", "hz", "soc",
                   "battery", "irradiance", "cos", "factor", "quality", "flag", "count")
# Words that name what the household draws, not just a quantity: preferred among several power columns.
_CONSUMER_WORDS = ("load", "consumption", "house", "home", "usage", "demand", "import", "verbrauch",
                   "consommation", "consumo")
_LOAD_WORDS = ("power", "energy", "load", "consumption", "usage", "demand", "import", "leistung",
               "verbrauch", "consommation", "puissance", "consumo", "kwh", "kw", "watt", "meter", "register")


def _choose_column(table: RawTable, column: str | None, time_columns: TimeColumns, file: str
                   ) -> tuple[str, list[str]]:
    """The value column: the caller's choice, else the numeric column whose header best names a load."""
    candidates = [n for n in table.names if n not in time_columns.names]
    shown = ", ".join(repr(n) for n in table.names)
    if column is not None:
        wanted = str(column).strip()
        match = next((n for n in table.names if n == wanted), None)
        match = match or next((n for n in table.names if n.strip().lower() == wanted.lower()), None)
        if match is None and wanted.isdigit() and 1 <= int(wanted) <= len(table.names):
            match = table.names[int(wanted) - 1]
        if match is None:
            near = difflib.get_close_matches(wanted, table.names, n=1)
            hint = f"did you mean {near[0]!r}?" if near else "give one of the column names as load.column"
            raise InputError(f"column {wanted!r} not found; the columns are {shown}", file=file,
                             where=f"column {wanted!r}", hint=hint)
        if match in time_columns.names:
            raise InputError("holds the timestamps, not the load", file=file, where=f"column {match!r}",
                             hint="give the column of power or energy readings as load.column")
        return match, []
    numeric: list[tuple[float, int, str]] = []
    for k, name in enumerate(candidates):
        sample = table.rows[name].iloc[: min(len(table.rows), 500)]
        parsed = parse_numbers(sample)
        filled = ~parsed.empty
        if filled.any() and (~parsed.not_number[filled]).mean() >= 0.5:
            lowered = name.lower()
            tokens = [t for t in re.split(r"[^a-z0-9]+", lowered) if t]
            other = any(t == w or (len(w) >= 4 and t.startswith(w)) for t in tokens for w in _NEGATIVE_WORDS)
            score = (2.0 * any(w in lowered for w in _LOAD_WORDS) + 1.0 * any(w in lowered for w in _CONSUMER_WORDS)
                     - 5.0 * other)
            numeric.append((score, -k, name))
    if not numeric:
        first_row = int(table.rows[LINE_COLUMN].iloc[0])
        where = f"column {candidates[0]!r}" if candidates else f"row {first_row}"
        raise InputError(f"no column besides the timestamps holds numbers (columns {shown})", file=file,
                         where=where, hint="the table needs a column of power or energy readings")
    numeric.sort(reverse=True)
    chosen = numeric[0][2]
    warnings = []
    if len(numeric) > 1:
        others = ", ".join(repr(n) for _, _, n in numeric[1:])
        warnings.append(f"column {chosen!r} used as the load; other numeric columns: {others} (give "
                        "load.column to choose)")
    if table.header_row is None:
        warnings.append(f"no header row; column {chosen!r} used as the load and the unit judged from the values")
    return chosen, warnings
