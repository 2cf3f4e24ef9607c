"""Grid outages: from a file of intervals, or drawn by a seeded random process."""

from __future__ import annotations

import io

import numpy as np
import pandas as pd

from core.errors import InputError
from core.files import MAX_OUTAGES_BYTES, read_input_bytes
from core.timebase import NOMINAL_YEAR


def grid_up_mask(index: pd.DatetimeIndex, intervals: list[tuple[pd.Timestamp, pd.Timestamp]]) -> np.ndarray:
    """True where the grid is up: a step is down when its start lies inside any ``[start, end)`` interval."""
    up = np.ones(len(index), dtype=bool)
    for start, end in intervals:
        lo, hi = index.searchsorted(start, side="left"), index.searchsorted(end, side="left")
        up[lo:hi] = False
    return up


def read_outages_csv(path, tz) -> list[tuple[pd.Timestamp, pd.Timestamp]]:
    """Outage intervals from a CSV with columns ``start`` and ``end`` (local standard time, or with offsets).

    Dates are mapped onto the nominal year by month, day and time of day, like every other series.
    """
    hint = "a UTF-8 CSV with columns start,end such as 2023-07-04 13:00,2023-07-04 16:30"
    raw = read_input_bytes(path, kind="outage file", max_bytes=MAX_OUTAGES_BYTES, where="grid.outages_path")
    try:
        text = raw.decode("utf-8-sig")
        table = pd.read_csv(io.StringIO(text), dtype=str, skipinitialspace=True)
    except UnicodeDecodeError as exc:
        line = raw[:exc.start].count(10) + 1  # 10 is the newline byte
        raise InputError("is not UTF-8 text", file=str(path), where=f"line {line}", hint=hint) from None
    except pd.errors.EmptyDataError:
        raise InputError("is empty", file=str(path), where="line 1", hint=hint) from None
    except (OSError, ValueError, pd.errors.ParserError) as exc:  # pandas names the line of a bad row
        raise InputError(f"cannot read the outage file: {' '.join(str(exc).split())}", file=str(path),
                         hint=hint) from None
    names = [str(c).strip().lower() for c in table.columns]
    missing = {"start", "end"} - set(names)
    if missing:
        raise InputError(f"missing column(s) {', '.join(sorted(missing))}", file=str(path), where="header",
                         hint="the first line must be: start,end")
    if len(set(names)) < len(names):
        raise InputError("a column name appears twice", file=str(path), where="header",
                         hint="the first line must be: start,end")
    table.columns = names
    out = []
    for row, (s, e) in enumerate(zip(table["start"], table["end"], strict=True), start=2):
        if pd.isna(s) or pd.isna(e) or not str(s).strip() or not str(e).strip():
            raise InputError("a start or end date is empty", file=str(path), where=f"row {row}",
                             hint="every outage needs both dates, written as YYYY-MM-DD HH:MM")
        try:
            start, end = (_nominal(pd.Timestamp(v), tz) for v in (s, e))
        except (ValueError, TypeError, OverflowError) as exc:
            raise InputError(f"cannot read a date: {exc}", file=str(path), where=f"row {row}",
                             hint="write dates as YYYY-MM-DD HH:MM") from None
        if pd.isna(start) or pd.isna(end):
            raise InputError("a start or end date is not a date", file=str(path), where=f"row {row}",
                             hint="write dates as YYYY-MM-DD HH:MM")
        if end <= start:
            raise InputError("the outage ends before it starts", file=str(path), where=f"row {row}")
        out.append((start, end))
    return out


def _nominal(ts: pd.Timestamp, tz) -> pd.Timestamp:
    ts = ts.tz_convert(tz) if ts.tzinfo is not None else ts.tz_localize(tz)
    if ts.month == 2 and ts.day == 29:
        ts = ts - pd.Timedelta(days=1)
    return ts.replace(year=NOMINAL_YEAR)


def random_outages(index: pd.DatetimeIndex, *, per_year: float, mean_hours: float,
                   seed: int) -> list[tuple[pd.Timestamp, pd.Timestamp]]:
    """Outages as a Poisson process: ``per_year`` expected starts, exponential durations of ``mean_hours``.

    Poisson arrivals with exponential durations are the usual reliability-analysis model of
    distribution outages (common practice; cf. IEEE 1366 for the indices SAIFI and CAIDI they imitate).
    """
    rng = np.random.default_rng(seed)
    count = rng.poisson(per_year)
    year_s = (index[-1] - index[0]).total_seconds() + (index[1] - index[0]).total_seconds()
    starts = np.sort(rng.uniform(0.0, year_s, count))
    hours = rng.exponential(mean_hours, count)
    return [(index[0] + pd.Timedelta(seconds=round(float(s))), index[0] + pd.Timedelta(seconds=round(float(s + h * 3600))))
            for s, h in zip(starts, hours, strict=True)]
