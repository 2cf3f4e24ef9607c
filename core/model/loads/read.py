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
import math
from collections.abc import Callable
from dataclasses import dataclass
from os import PathLike
from pathlib import Path

import numpy as np
import pandas as pd

from core.errors import InputError
from core.model.loads.base_load import base_load_w
from core.model.loads.column import _choose_column
from core.model.loads.decode import read_text
from core.model.loads.grid import MAX_CELLS, detect_interval, detect_phase, fill_short_gaps, to_grid
from core.model.loads.numbers import parse_numbers
from core.model.loads.quality import LoadQuality
from core.model.loads.rows import (  # noqa: F401 - FAR_GAP_S, FAR_SHARE, MOSTLY_BAD re-exported
    FAR_GAP_S,
    FAR_SHARE,
    MOSTLY_BAD,
    _refuse_mostly_bad,
    _reject_duplicates,
    _reject_far_rows,
    _Rows,
    _runs,
    _time_order,
    _too_few_rows,
)
from core.model.loads.spans import (  # noqa: F401 - the spike constants re-exported
    SPIKE_FACTOR,
    SPIKE_MIN_ROWS,
    SPIKE_QUANTILE,
    _gap_warnings,
    _interval_spans,
    _register_spans,
)
from core.model.loads.table import LINE_COLUMN, SEPARATOR_NAMES, find_table, release_string_memory
from core.model.loads.timestamps import find_time_columns, parse_times, zone_or_error
from core.model.loads.units import (
    REGISTER_UNITS,
    decide_unit,
    normalise_unit,
)
from core.timebase import standard_offset

MAX_GAP_FILL_S = 7200
MAX_POWER_W = 1_000_000.0
MAX_INTERVAL_S = 3600


Progress = Callable[[float, str], None]


def _no_progress(fraction: float, stage: str) -> None:
    """Progress sink when the caller wants none."""


@dataclass(frozen=True, eq=False)
class MeasuredLoad:
    """Mean power (W) on a regular grid at the data's own interval: index = interval starts, UTC; NaN where
    missing (gaps longer than the fill limit)."""
    power_w: pd.Series
    quality: LoadQuality


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
