"""Read a measured-load CSV into mean power on a regular UTC grid, with a data-quality summary.

What is accepted: any interval from 1 s to 1 h, regular or irregular; mean power (W, kW), energy per interval
(Wh, kWh) or a cumulative energy register (readings that only go up, with resets); ``,`` ``;`` tab or ``|``
separators; decimal comma; quoted fields; title and comment lines above the table; a units row under the
header; timestamps in local clock time (naive, with the IANA zone given), with UTC offsets, in UTC, or as
Unix time; one column of date and time or a date column followed by a time column; UTF-8 with or without a
byte-order mark, UTF-16, Latin-1.

Cleaning, in this order, each counted in ``LoadQuality.rejected_reasons`` with a warning naming the first
row: rows with more fields than the header; unreadable, non-existent (skipped spring hour) or implausible
(before 1990, after 2099) timestamps; empty values; text in the value column; duplicate timestamps (the first
in the file is kept); isolated timestamps more than 60 days from the rest of the record; negative values;
mean power above ``max_power_w`` (1 MW by default: this tool is for homes and small sites); spikes (mean power
above 10 times the 99.9th percentile of the record — lower for short records, so that five values lie above
it — checked from 50 rows on). Register readings that fall out
of sequence for one row are rejected; a lasting fall is a reset: the new reading is taken as the use since the
reset when that is plausible, otherwise the interval is missing.

Gaps: runs of missing intervals up to ``max_gap_fill_s`` (2 h by default) inside the record are filled by
linear interpolation of power (for a register, the increment across the gap is spread evenly, which keeps its
energy); longer gaps stay NaN for the year builder. Timestamps label interval *starts* unless
``label="end"``. Rows are numbered as lines of the file, from 1.
"""

from __future__ import annotations

import dataclasses
import difflib
import math
import re
from collections.abc import Callable
from dataclasses import dataclass
from os import PathLike
from pathlib import Path

import numpy as np
import pandas as pd

from core.errors import InputError
from core.model.loads.base_load import base_load_w
from core.model.loads.decode import read_text
from core.model.loads.grid import MAX_CELLS, detect_interval, detect_phase, fill_short_gaps, to_grid
from core.model.loads.numbers import parse_numbers
from core.model.loads.quality import LoadQuality
from core.model.loads.table import LINE_COLUMN, SEPARATOR_NAMES, RawTable, find_table, release_string_memory
from core.model.loads.timestamps import TimeColumns, find_time_columns, parse_times, zone_or_error
from core.model.loads.units import (
    POWER_UNITS,
    REGISTER_UNITS,
    SCALE,
    decide_unit,
    normalise_unit,
)
from core.timebase import standard_offset

MAX_GAP_FILL_S = 7200
MAX_POWER_W = 1_000_000.0
MAX_INTERVAL_S = 3600
SPIKE_FACTOR = 10.0
SPIKE_QUANTILE = 0.999
SPIKE_MIN_ROWS = 50
FAR_GAP_S = 60 * 86400
FAR_SHARE = 0.01
#: Above this share of bad rows in a column, the column (or the file) is wrong rather than a few rows.
MOSTLY_BAD = 0.5

_NEGATIVE_WORDS = ("export", "feed", "pv", "solar", "generation", "production", "yield", "voltage", "volt",
                   "current", "amp", "temperature", "temp", "status", "state", "id", "frequency", "hz", "soc",
                   "battery", "irradiance", "cos", "factor", "quality", "flag", "count")
# Words that name what the household draws, not just a quantity: preferred among several power columns.
_CONSUMER_WORDS = ("load", "consumption", "house", "home", "usage", "demand", "import", "verbrauch",
                   "consommation", "consumo")
_LOAD_WORDS = ("power", "energy", "load", "consumption", "usage", "demand", "import", "leistung",
               "verbrauch", "consommation", "puissance", "consumo", "kwh", "kw", "watt", "meter", "register")


Progress = Callable[[float, str], None]


def _no_progress(fraction: float, stage: str) -> None:
    """Progress sink when the caller wants none."""


@dataclass(frozen=True, eq=False)
class MeasuredLoad:
    """Mean power (W) on a regular grid at the data's own interval: index = interval starts, UTC; NaN where
    missing (gaps longer than the fill limit)."""
    power_w: pd.Series
    quality: LoadQuality


class _Rows:
    """Per-row rejection bookkeeping: the first reason that rejects a row is kept."""

    def __init__(self, lines: np.ndarray, raw_values: pd.Series, raw_times: pd.Series) -> None:
        self.lines = lines
        # Kept as Series (compact strings), read one cell at a time for messages: as arrays of Python strings
        # they would cost hundreds of MB on a file of millions of rows.
        self.raw_values = raw_values.reset_index(drop=True)
        self.raw_times = raw_times.reset_index(drop=True)
        self.reason = np.zeros(lines.size, dtype=np.int16)
        self.names: list[str] = [""]
        self.columns: list[str] = [""]

    @property
    def ok(self) -> np.ndarray:
        return self.reason == 0

    def reject(self, mask: np.ndarray, reason: str, column: str) -> None:
        mask = mask & self.ok
        if not mask.any():
            return
        if reason not in self.names:
            self.names.append(reason)
            self.columns.append(column)
        self.reason[mask] = self.names.index(reason)

    def summary(self) -> tuple[dict[str, int], list[str]]:
        counts: dict[str, int] = {}
        warnings: list[str] = []
        for code, reason in enumerate(self.names):
            if code == 0:
                continue
            hit = np.flatnonzero(self.reason == code)
            if hit.size == 0:
                continue
            counts[reason] = int(hit.size)
            first = hit[np.argmin(self.lines[hit])]
            column = self.columns[code]
            shown = self.raw_times.iloc[first] if "timestamp" in reason or "local time" in reason else \
                self.raw_values.iloc[first]
            warnings.append(f"column {column}: {hit.size} row(s) rejected, {reason} (first at row "
                            f"{int(self.lines[first])}: {str(shown)[:40]!r})")
        return counts, warnings


def read_load_csv(path: str | PathLike[str], *, column: str | None = None, unit: str | None = None,
                  timezone: str | None = None, label: str = "start", max_gap_fill_s: int = MAX_GAP_FILL_S,
                  max_power_w: float = MAX_POWER_W, latitude: float | None = None,
                  longitude: float | None = None, progress: Progress | None = None) -> MeasuredLoad:
    """Read a load CSV (see the module docstring for what is accepted and how it is cleaned).

    ``unit``: "W", "kW" (mean power), "Wh", "kWh" (energy per interval), "kWh_register" or "Wh_register"
    (cumulative readings), or None to decide from the header and the values (the reason is in
    ``quality.unit_reason``). ``timezone``: IANA name of the clock in which naive timestamps are written
    (None: taken as UTC, with a warning). ``label``: "start" or "end" — whether a row's timestamp starts or
    ends its interval (ignored for registers). ``latitude``/``longitude`` only refine the day/night split of
    the base load in the summary. ``progress(fraction, stage)`` is called as reading advances (for a progress
    bar on long files). Every bad input raises :class:`core.errors.InputError` naming the file and the row or
    column.
    """
    file = str(path)
    try:
        return _read(Path(path), file, column=column, unit=unit, timezone=timezone, label=label,
                     max_gap_fill_s=max_gap_fill_s, max_power_w=max_power_w, latitude=latitude,
                     longitude=longitude, progress=progress or _no_progress)
    except InputError as exc:
        if exc.file is None:
            raise InputError(exc.message, file=file, where=exc.where, hint=exc.hint) from exc
        raise


def _read(path: Path, file: str, *, column: str | None, unit: str | None, timezone: str | None, label: str,
          max_gap_fill_s: int, max_power_w: float, latitude: float | None, longitude: float | None,
          progress: Progress) -> MeasuredLoad:
    if unit is not None:
        unit = normalise_unit(unit)
    if timezone is not None:
        zone_or_error(timezone)
    if label not in ("start", "end"):
        raise InputError(f"label must be 'start' or 'end', not {label!r}", where="label",
                         hint="'start' when a row's timestamp opens its interval, 'end' when it closes it")
    progress(0.0, "reading the file")
    decoded = read_text(path)
    progress(0.1, "finding the table")
    table = find_table(decoded.text, file)
    encoding = decoded.encoding
    del decoded  # the file's text is no longer needed once it is a table (it is as large as the file)
    progress(0.4, "reading timestamps and values")
    rows = table.rows
    time_columns = find_time_columns(rows, table.names, file)
    value_column, column_warnings = _choose_column(table, column, time_columns, file)
    time_label = " + ".join(repr(n) for n in time_columns.names)
    value_label = repr(value_column)
    lines = rows[LINE_COLUMN].to_numpy(dtype=np.int64)
    times = parse_times(rows, time_columns, timezone, file)
    numbers = parse_numbers(rows[value_column])
    raw_times = rows[time_columns.names[0]]
    if len(time_columns.names) == 2:
        raw_times = raw_times + " " + rows[time_columns.names[1]]
    book = _Rows(lines, rows[value_column], raw_times)
    warnings: list[str] = [*table.notes, *column_warnings, *times.warnings]

    _refuse_mostly_bad(times.unparseable, lines, raw_times, f"column {time_label}",
                       "could not be read as date and time", file,
                       "timestamps such as 2024-03-01 00:15 or 2024-03-01T00:15:00+01:00 are understood")
    book.reject(times.unparseable, "timestamp unreadable", time_label)
    book.reject(times.nonexistent, "local time that does not exist (skipped spring hour)", time_label)
    book.reject(times.out_of_range, "timestamp before 1990 or after 2099", time_label)
    nonempty = ~numbers.empty
    _refuse_mostly_bad(numbers.not_number[nonempty], lines[nonempty], rows[value_column][nonempty],
                       f"column {value_label}", "are not numbers", file,
                       "choose the column of power or energy readings with load.column")
    if (numbers.empty & book.ok).sum() > MOSTLY_BAD * max(book.ok.sum(), 1) and not (nonempty & book.ok).any():
        raise InputError("holds no values", file=file, where=f"column {value_label}",
                         hint="choose a column with readings (load.column)")
    book.reject(numbers.empty, "empty value", value_label)
    book.reject(numbers.not_number, "not a number", value_label)
    if times.nonexistent.any():
        warnings.append(f"column {time_label}: clock times inside the skipped spring hour of {timezone} do not "
                        "exist; if the logger keeps standard time all year, give a fixed-offset zone instead"
                        f"{_fixed_zone_example(timezone)}")

    progress(0.7, "cleaning rows")
    t = times.utc_s
    v = numbers.values
    order = _time_order(t, book, lines, time_label, warnings)
    _reject_duplicates(t, v, order, book, time_label)
    order = order[book.ok[order]]
    _reject_far_rows(t, order, book, time_label)
    order = order[book.ok[order]]
    if order.size < 2:
        _too_few_rows(book, lines, file, order.size, time_label, value_label)

    interval = detect_interval(np.unique(t[np.isfinite(t)]))  # every readable timestamp, whatever its value
    if interval.median_s > 1.5 * MAX_INTERVAL_S:
        raise InputError(f"readings are {interval.median_s / 3600:.1f} h apart; load data need an interval "
                         "of one hour or less", file=file, where=f"column {time_label}",
                         hint="give monthly totals as load.monthly_kwh if only coarse readings exist")
    step = interval.step_s
    if interval.regular_share < 0.5:
        warnings.append(f"column {time_label}: timestamps are irregular (only {interval.regular_share:.0%} of "
                        f"steps equal the {step} s interval they were gridded to)")
    decision = decide_unit(value_column, v[order], interval.median_s, explicit=unit,
                           suffix=numbers.unit_suffix, file=file)
    warnings.extend(decision.warnings)
    unit_used = decision.unit

    if unit_used in REGISTER_UNITS:
        spans, register_warnings = _register_spans(t, v, order, book, unit_used, step, max_gap_fill_s,
                                                   max_power_w, value_label, lines)
        warnings.extend(register_warnings)
    else:
        spans = _interval_spans(t, v, order, book, unit_used, step, label, max_power_w, value_label)
    start, end, energy, stretched, span_lines = spans
    if start.size < 2:
        _too_few_rows(book, lines, file, int(start.size), time_label, value_label)
    cells = (end[-1] - start[0]) / step
    if cells > MAX_CELLS:
        raise InputError(f"{cells:.0f} intervals of {step} s are too many to hold", file=file,
                         where=f"column {time_label}",
                         hint="aggregate the readings to a coarser interval (e.g. 1 min) first")
    # Every row is judged by now: summarise the rejections, then let the file's strings go (on a file of millions
    # of rows they are hundreds of MB, and the grid below needs room of its own).
    counts, reject_warnings = book.summary()
    rows_read = int(len(rows) + table.malformed_rows.size)
    table = dataclasses.replace(table, rows=table.rows.iloc[:0])
    book.raw_values = book.raw_times = None
    del rows, raw_times
    release_string_memory()
    progress(0.8, "placing readings on a regular grid")
    phase = detect_phase(t[order], step)
    grid = to_grid(start, end, energy, stretched, step, phase)
    power, measured, stretched_cells = grid.power_w, grid.measured, grid.stretched
    known = np.flatnonzero(~np.isnan(power))
    if known.size == 0:
        _too_few_rows(book, lines, file, 0, time_label, value_label)
    first, last = known[0], known[-1] + 1
    power, measured, stretched_cells = power[first:last], measured[first:last], stretched_cells[first:last]
    origin = grid.origin_s + first * step
    max_fill_cells = max(int(max_gap_fill_s // step), 0)
    gaps = fill_short_gaps(power, max_fill_cells)
    warnings.extend(_gap_warnings(gaps, stretched_cells, origin, step, start, end, span_lines,
                                  max_gap_fill_s, time_label))

    index = pd.date_range(pd.Timestamp(origin, unit="s", tz="UTC"), periods=power.size,
                          freq=pd.Timedelta(seconds=step), name="time_utc")
    series = pd.Series(gaps.power_w, index=index, name="power_w")
    if table.malformed_rows.size:
        counts = {"more fields than the header": int(table.malformed_rows.size), **counts}
        reject_warnings.insert(0, f"{table.malformed_rows.size} row(s) with more fields than the header "
                                  f"skipped (first at row {int(table.malformed_rows[0])})")
    warnings = reject_warnings + warnings
    span_days = power.size * step / 86400.0
    if span_days < 21:
        warnings.append(f"the record covers {span_days:.1f} days; a year cannot be built from less than 21 "
                        "days (three weeks)")
    base = base_load_w(series, tz=timezone or "UTC", latitude=latitude, longitude=longitude)
    filled_cells = int(gaps.filled.sum() + stretched_cells.sum())
    missing_cells = int(np.isnan(gaps.power_w).sum())
    stretched_runs = _runs(stretched_cells)
    longest = max((n for _, n in gaps.gaps_left), default=0) * step / 3600.0
    finite = gaps.power_w[np.isfinite(gaps.power_w)]
    quality = LoadQuality(
        span_days=span_days,
        coverage_pct=100.0 * float(measured.sum()) / power.size,
        interval_s=step,
        unit=unit_used,
        unit_reason=decision.reason,
        energy_kwh=float(np.nansum(gaps.power_w)) * step / 3.6e6,
        gaps_filled=gaps.gaps_filled + stretched_runs,
        rows_rejected=int(sum(counts.values())),
        rejected_reasons=counts,
        warnings=tuple(warnings),
        base_load_w=_monthly(base["all_w"]),
        file=file,
        start_utc=index[0].isoformat(),
        end_utc=(index[-1] + pd.Timedelta(seconds=step)).isoformat(),
        timestamp_handling=times.handling,
        timestamp_format=times.time_format,
        timezone=timezone,
        time_column=" + ".join(time_columns.names),
        column=value_column,
        encoding=encoding,
        separator=SEPARATOR_NAMES[table.separator],
        decimal=numbers.decimal,
        header_row=table.header_row,
        first_data_row=table.first_data_row,
        preamble_rows=table.preamble_rows,
        rows_read=rows_read,
        rows_used=int(span_lines.size),
        regular_pct=100.0 * interval.regular_share,
        filled_intervals=filled_cells,
        missing_intervals=missing_cells,
        gaps_left=len(gaps.gaps_left),
        longest_gap_h=longest,
        mean_power_w=float(finite.mean()) if finite.size else math.nan,
        peak_power_w=float(finite.max()) if finite.size else math.nan,
        base_load_day_w=_monthly(base["day_w"]),
        base_load_night_w=_monthly(base["night_w"]),
        base_load_method=str(base.attrs.get("method", "")),
        max_gap_fill_s=int(max_gap_fill_s),
        label=label,
    )
    progress(1.0, "done")
    return MeasuredLoad(power_w=series, quality=quality)


def _fixed_zone_example(timezone: str) -> str:
    """' (for this site: 'Etc/GMT-1', i.e. UTC+01:00)' — the IANA fixed-offset zone of its standard time."""
    offset_h = standard_offset(timezone).utcoffset(None).total_seconds() / 3600.0
    if offset_h != int(offset_h):
        return ""
    name = "Etc/GMT" if offset_h == 0 else f"Etc/GMT{-int(offset_h):+d}"  # Etc/ names invert the sign
    return f" (for this zone: {name!r}, i.e. UTC{int(offset_h):+03d}:00)"


def _monthly(values: pd.Series) -> tuple[float | None, ...]:
    """Twelve monthly values, None where a month has too little data."""
    return tuple(None if not np.isfinite(x) else float(x) for x in values.to_numpy(dtype=float))


def _runs(mask: np.ndarray) -> int:
    if not mask.any():
        return 0
    return int(np.count_nonzero(np.diff(np.concatenate([[0], mask.astype(np.int8)])) == 1))


def _refuse_mostly_bad(bad: np.ndarray, lines: np.ndarray, raw: pd.Series, where: str, what: str, file: str,
                       hint: str) -> None:
    if bad.size and bad.mean() > MOSTLY_BAD:
        first = int(np.argmax(bad))
        shown = str(raw.iloc[first])[:40]
        raise InputError(f"{bad.sum()} of {bad.size} values {what} (row {int(lines[first])}: {shown!r})",
                         file=file, where=where, hint=hint)


def _too_few_rows(book: _Rows, lines: np.ndarray, file: str, usable: int, time_label: str,
                  value_label: str) -> None:
    counts, _ = book.summary()
    if counts:
        worst = max(counts, key=counts.get)
        code = book.names.index(worst)
        row = int(lines[np.flatnonzero(book.reason == code)].min())
        raise InputError(f"only {usable} usable row(s); rejected: " +
                         ", ".join(f"{n} {r}" for r, n in counts.items()), file=file,
                         where=f"row {row}, column {book.columns[code]}",
                         hint="at least two readings are needed; check the column, unit and time zone")
    rows = f"row {int(lines[0])}" if lines.size == 1 else f"rows {int(lines[0])}-{int(lines[-1])}"
    raise InputError(f"{lines.size} data row(s) ({rows}) give {usable} usable interval(s); at least two "
                     "readings a step apart are needed", file=file, where=f"row {int(lines[0])}",
                     hint="export a longer period")


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


def _time_order(t: np.ndarray, book: _Rows, lines: np.ndarray, time_label: str, warnings: list[str]
                ) -> np.ndarray:
    """Indices of the usable rows in time order (stable: equal times keep file order)."""
    usable = np.flatnonzero(book.ok & np.isfinite(t))
    steps = np.diff(t[usable])
    if (steps < 0).any():
        first_back = usable[int(np.argmax(steps < 0)) + 1]
        warnings.append(f"column {time_label}: rows are not in time order (first at row {int(lines[first_back])}, "
                        f"{int((steps < 0).sum())} step(s) back in time); sorted by time")
    return usable[np.argsort(t[usable], kind="stable")]


def _reject_duplicates(t: np.ndarray, v: np.ndarray, order: np.ndarray, book: _Rows, time_label: str) -> None:
    if order.size < 2:
        return
    same = np.concatenate([[False], np.abs(np.diff(t[order])) < 1e-3])
    mask = np.zeros(t.size, dtype=bool)
    mask[order[same]] = True
    book.reject(mask, "duplicate timestamp (the first row with it is kept)", time_label)


def _reject_far_rows(t: np.ndarray, order: np.ndarray, book: _Rows, time_label: str) -> None:
    """Reject small clusters of rows separated from the bulk of the record by more than 60 days."""
    if order.size < 10:
        return
    ts = t[order]
    breaks = np.flatnonzero(np.diff(ts) > FAR_GAP_S) + 1
    if breaks.size == 0:
        return
    bounds = np.concatenate([[0], breaks, [ts.size]])
    sizes = np.diff(bounds)
    mask = np.zeros(t.size, dtype=bool)
    for a, b, n in zip(bounds[:-1], bounds[1:], sizes, strict=True):  # loop over clusters, not rows
        if n < FAR_SHARE * ts.size:
            mask[order[a:b]] = True
    book.reject(mask, "timestamp more than 60 days away from the rest of the record", time_label)


def _interval_spans(t: np.ndarray, v: np.ndarray, order: np.ndarray, book: _Rows, unit: str, step: int,
                    label: str, max_power_w: float, value_label: str):
    """Spans for mean-power and per-interval-energy rows; rejects negative, impossible and spike values."""
    times = t[order]
    values = v[order]
    if label == "start":
        start = times
        end = np.minimum(times + step, np.concatenate([times[1:], [np.inf]]))
    else:
        end = times
        start = np.maximum(times - step, np.concatenate([[-np.inf], times[:-1]]))
    duration = end - start
    scale = SCALE[unit]
    if unit in POWER_UNITS:
        power = values * scale
        nominal = power
    else:
        power = values * scale * 3600.0 / duration
        nominal = values * scale * 3600.0 / step
    bad = np.zeros(t.size, dtype=bool)
    bad[order[values < 0]] = True
    book.reject(bad, "negative value", value_label)
    bad[:] = False
    bad[order[nominal > max_power_w]] = True
    book.reject(bad, f"mean power above {max_power_w / 1000:g} kW (impossible for this tool)", value_label)
    keep = book.ok[order]
    _reject_spikes(nominal, keep, order, book, value_label)
    keep = book.ok[order]
    energy = power * duration / 3600.0
    del power, nominal, values, duration, bad  # five arrays of a row each, before the kept rows are copied
    if keep.all():  # the usual file: every row kept, nothing to copy
        return start, end, energy, np.zeros(keep.size, dtype=bool), book.lines[order]
    return (start[keep], end[keep], energy[keep], np.zeros(int(keep.sum()), dtype=bool),
            book.lines[order[keep]])


def _reject_spikes(power: np.ndarray, keep: np.ndarray, order: np.ndarray, book: _Rows, value_label: str
                   ) -> None:
    if keep.sum() < SPIKE_MIN_ROWS:
        return
    # A short record's 99.9th percentile would sit on the spike itself: keep at least five values above it.
    quantile = min(SPIKE_QUANTILE, 1.0 - 5.0 / keep.sum())
    reference = float(np.quantile(power[keep], quantile))
    if reference <= 0:
        return
    spikes = keep & (power > SPIKE_FACTOR * reference)
    mask = np.zeros(book.lines.size, dtype=bool)
    mask[order[spikes]] = True
    book.reject(mask, f"spike (more than {SPIKE_FACTOR:g} times the record's {100 * quantile:.1f}th "
                      f"percentile, {reference:.0f} W)", value_label)


def _register_spans(t: np.ndarray, v: np.ndarray, order: np.ndarray, book: _Rows, unit: str, step: int,
                    max_gap_fill_s: int, max_power_w: float, value_label: str, lines: np.ndarray):
    """Spans between consecutive register readings, with out-of-sequence readings, resets and gaps handled."""
    warnings: list[str] = []
    scale = SCALE[unit]
    values = v[order]
    negative = values < 0
    bad = np.zeros(t.size, dtype=bool)
    bad[order[negative]] = True
    book.reject(bad, "negative value", value_label)
    order = order[book.ok[order]]
    values = v[order]
    if values.size >= 3:
        prev = np.concatenate([[np.nan], values[:-1]])
        nxt = np.concatenate([values[1:], [np.nan]])
        bracket = prev <= nxt
        low = bracket & (values < prev)
        high = bracket & (values > nxt)
        for mask_rows, reason in ((low, "register reading lower than its neighbours"),
                                  (high, "register reading higher than its neighbours")):
            bad = np.zeros(t.size, dtype=bool)
            bad[order[mask_rows]] = True
            book.reject(bad, reason, value_label)
        order = order[book.ok[order]]
        values = v[order]
    times = t[order]
    rise = np.diff(values) * scale
    duration = np.diff(times)
    reset = rise < 0
    restart_power = values[1:] * scale * 3600.0 / np.maximum(duration, 1e-9)
    plausible_restart = reset & (restart_power <= max_power_w)
    increment = np.where(plausible_restart, values[1:] * scale, rise)
    usable = ~(reset & ~plausible_restart)
    if reset.any():
        first = int(np.argmax(reset)) + 1
        kinds = []
        if plausible_restart.any():
            kinds.append(f"{int(plausible_restart.sum())} taken as a reset to zero (the new reading is the use "
                         "since the reset)")
        if (reset & ~plausible_restart).any():
            kinds.append(f"{int((reset & ~plausible_restart).sum())} left as missing intervals")
        warnings.append(f"column {value_label}: the register falls {int(reset.sum())} time(s) (first at row "
                        f"{int(lines[order[first]])}: {values[first - 1]:g} to {values[first]:g}); "
                        + "; ".join(kinds))
    long_span = duration > max_gap_fill_s + step
    if (long_span & usable).any():
        lost = float(increment[long_span & usable].sum()) / 1000.0
        first = int(np.argmax(long_span & usable)) + 1
        warnings.append(f"column {value_label}: {int((long_span & usable).sum())} gap(s) between readings "
                        f"longer than {max_gap_fill_s / 3600:g} h (first before row {int(lines[order[first]])}); "
                        f"their {lost:.3f} kWh cannot be placed in time and are left out")
    usable &= ~long_span & (duration > 0)
    power = increment * 3600.0 / np.maximum(duration, 1e-9)
    bad = np.zeros(t.size, dtype=bool)
    bad[order[1:][usable & (power > max_power_w)]] = True
    book.reject(bad, f"mean power above {max_power_w / 1000:g} kW (impossible for this tool)", value_label)
    usable &= book.ok[order[1:]]
    nominal = np.where(usable, power, np.nan)
    _reject_spikes(np.nan_to_num(nominal, nan=0.0), usable, order[1:], book, value_label)
    usable &= book.ok[order[1:]]
    start, end = times[:-1][usable], times[1:][usable]
    stretched = (end - start) > 1.5 * step
    return (start, end, increment[usable], stretched, book.lines[order[1:][usable]]), warnings


def _gap_warnings(gaps, stretched: np.ndarray, origin: float, step: int, start: np.ndarray, end: np.ndarray,
                  span_lines: np.ndarray, max_gap_fill_s: int, time_label: str) -> list[str]:
    """Warnings for filled and left gaps, naming the rows on either side."""
    out = []

    def row_before(cell: int) -> int:
        when = origin + cell * step
        k = max(int(np.searchsorted(end, when, side="right")) - 1, 0)
        return int(span_lines[k])

    def row_after(cell: int) -> int:
        when = origin + cell * step
        k = min(int(np.searchsorted(start, when, side="left")), span_lines.size - 1)
        return int(span_lines[k])

    limit_h = f"{max_gap_fill_s / 3600:g} h"
    if gaps.gaps_filled:
        first = int(np.argmax(gaps.filled))
        out.append(f"column {time_label}: {gaps.gaps_filled} gap(s) of up to {limit_h} ({int(gaps.filled.sum())} "
                   f"interval(s)) filled by linear interpolation (first after row {row_before(first)})")
    if stretched.any():
        first = int(np.argmax(stretched))
        out.append(f"column {time_label}: {_runs(stretched)} gap(s) of up to {limit_h} between register readings "
                   f"spread evenly ({int(stretched.sum())} interval(s); first after row {row_before(first)})")
    if gaps.gaps_left:
        cell, n = max(gaps.gaps_left, key=lambda g: g[1])
        out.append(f"column {time_label}: {len(gaps.gaps_left)} gap(s) longer than {limit_h} left missing; the "
                   f"longest is {n * step / 3600:.1f} h, from row {row_before(cell)} to row {row_after(cell + n)}")
    return out

