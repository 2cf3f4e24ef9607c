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


#: Days before each month of the nominal (non-leap) year, and the year's length.
_MONTH_START_DAY = np.array([0, 31, 59, 90, 120, 151, 181, 212, 243, 273, 304, 334, 365])


def _draw(rng, per_year: float, mean_hours: float, year_s: float, month_weights) -> tuple[np.ndarray, np.ndarray]:
    """Sorted start times (s into the year) and durations (h): a Poisson count, starts uniform over the year
    (or first a month, by ``month_weights`` × its length, then uniform inside it), exponential durations."""
    count = rng.poisson(per_year)
    if month_weights is None:
        starts = np.sort(rng.uniform(0.0, year_s, count))
    else:
        edges = _MONTH_START_DAY / 365.0 * year_s
        share = np.asarray(month_weights, dtype=float) * np.diff(edges)
        month = rng.choice(12, size=count, p=share / share.sum())
        starts = np.sort(edges[month] + rng.uniform(0.0, 1.0, count) * np.diff(edges)[month])
    return starts, rng.exponential(mean_hours, count)


def random_outages(index: pd.DatetimeIndex, *, per_year: float, mean_hours: float,
                   seed: int, month_weights=None) -> list[tuple[pd.Timestamp, pd.Timestamp]]:
    """Outages as a Poisson process: ``per_year`` expected starts, exponential durations of ``mean_hours``.

    Poisson arrivals with exponential durations are the usual reliability-analysis model of
    distribution outages (common practice; cf. IEEE 1366 for the indices SAIFI and CAIDI they imitate).
    ``month_weights`` (twelve relative rates, January first) make outages seasonal, e.g. a storm season.
    """
    rng = np.random.default_rng(seed)
    year_s = (index[-1] - index[0]).total_seconds() + (index[1] - index[0]).total_seconds()
    starts, hours = _draw(rng, per_year, mean_hours, year_s, month_weights)
    return [(index[0] + pd.Timedelta(seconds=round(float(s))), index[0] + pd.Timedelta(seconds=round(float(s + h * 3600))))
            for s, h in zip(starts, hours, strict=True)]


def random_outage_mask(steps: int, step_s: float, *, per_year: float, mean_hours: float, seed,
                       month_weights=None) -> np.ndarray:
    """:func:`random_outages` as a grid-up mask of a regular year of ``steps`` steps, without timestamps.

    The same draws in the same order (so the same seed gives the same outages) and the same rule as
    :func:`grid_up_mask` (a step is down when its start lies in an outage), in array operations: the fast
    path for many outage years.
    """
    rng = np.random.default_rng(seed)
    starts, hours = _draw(rng, per_year, mean_hours, steps * step_s, month_weights)
    lo = np.minimum(np.ceil(np.round(starts) / step_s), steps).astype(np.int64)
    hi = np.minimum(np.ceil(np.round(starts + hours * 3600) / step_s), steps).astype(np.int64)
    edges = np.zeros(steps + 1, dtype=np.int64)
    np.add.at(edges, lo, 1)
    np.add.at(edges, hi, -1)
    return np.cumsum(edges[:steps]) <= 0


#: How long equipment rides through a complete loss of voltage without losing function: the ITI (CBEMA)
#: curve (Information Technology Industry Council, 2000) allows 0 % voltage for up to 20 ms.
ITI_ZERO_VOLTAGE_RIDE_THROUGH_MS = 20.0


def momentary_effects(*, per_year: float, transfer_ms: float, mean_grid_side_pv_w: float,
                      mean_grid_only_load_w: float, reconnect_s: float, restore_delay_s: float) -> dict:
    """Expected yearly effects of momentary interruptions (shorter than five minutes, IEEE 1366's boundary).

    Interruptions are taken to fall at random times, so each costs the year's mean power over the wait:
    grid-side microinverters trip on every interruption and wait their reconnect delay before producing;
    grid-only loads return after ``restore_delay_s``. Backed-up loads see only the inverter-charger's
    transfer: within the ITI (CBEMA) curve's 20 ms at zero voltage, computers ride through on their power
    supplies' hold-up; a longer transfer may reset them at every interruption.
    """
    rides = transfer_ms <= ITI_ZERO_VOLTAGE_RIDE_THROUGH_MS
    return {
        "per_year": float(per_year),
        "transfer_ms": float(transfer_ms),
        "ride_through_limit_ms": ITI_ZERO_VOLTAGE_RIDE_THROUGH_MS,
        "backed_up_loads_ride_through": bool(rides),
        "backed_up_resets_per_year": 0.0 if rides else float(per_year),
        "grid_side_pv_lost_kwh": float(per_year * mean_grid_side_pv_w * reconnect_s / 3.6e6),
        "grid_only_shed_kwh": float(per_year * mean_grid_only_load_w * restore_delay_s / 3.6e6),
    }


def restore_delay_shed_wh(grid_up: np.ndarray, load_grid_only_w: np.ndarray, *, step_s: float,
                          restore_delay_s: float) -> float:
    """Grid-only load kept off for ``restore_delay_s`` after each outage ends (Wh), on top of the outage."""
    if restore_delay_s <= 0:
        return 0.0
    up = np.asarray(grid_up, dtype=bool)
    ends = np.flatnonzero(up[1:] & ~up[:-1]) + 1  # first step back
    total = 0.0
    whole, part = int(restore_delay_s // step_s), (restore_delay_s % step_s) / step_s
    for t in ends:
        seg = load_grid_only_w[t:t + whole + 1].astype(float)
        if seg.size > whole:
            seg[whole] *= part
        total += float(seg.sum()) * step_s / 3600.0
    return total
