"""Build one nominal year of load (mean power, W) from a measured record of three weeks to a year or more.

Method
------
1. The record is converted to the site's standard time (no daylight saving) and resampled to the simulation
   step by time-weighted interval means: coarser steps average the data's intervals, finer steps repeat each
   interval's mean power. A target interval needs data over at least half of it.
2. Real dates map to the nominal year (:data:`core.timebase.NOMINAL_YEAR`, not a leap year) by month, day and
   time of day; 29 February is dropped. A record longer than a year keeps its most recent 366 days (where a
   calendar day occurs twice, the later one wins).
3. Measured intervals are kept exactly as they are. A record covering the whole year therefore passes through
   unchanged apart from the resampling.
4. Missing intervals — whole days, or parts of days left by long gaps — are filled from mean daily profiles
   (mean power per time of day), kept separately for weekdays (Monday–Friday) and weekends (Saturday,
   Sunday) of each measured month. A missing day takes the profile of its own day type from the nearest
   measured month by calendar distance, wrapping over the year end (December is next to January); where two
   months are equally near, their profiles are averaged. A month counts as measured for a day type once it
   holds at least one day's worth of such intervals. If no month has the day type, the other one is used.
5. Where a bill total ``monthly_kwh[m]`` is given, only the *filled* intervals of that month are scaled so
   that measured plus filled energy equals the bill. If the measured intervals alone exceed the bill, the
   filled ones are left unscaled and a warning says so; a fully measured month is never changed, and a
   difference of more than 10 % from its bill is reported.

Limits
------
- Profiles are means: they hold no day-to-day variation, weather response, holidays or vacations, and the
  filled days of a month are all alike for a day type.
- Measured days keep their real weekday pattern but land on the nominal year's calendar (1 January is a
  Sunday), so a measured weekend can fall on a nominal weekday.
- Bills are taken as calendar months; real billing periods straddle months.
- Seasonal loads (heating, cooling) missing from the record are only as good as the nearest measured month
  and the bill scaling; with few measured months and no bills, annual energy can be far off.
- Fewer than 21 days (three weeks) of data are refused; with a bill for every month, one week (seven days, so
  that weekdays and a weekend are seen) is enough: the bills then give each month's energy and the record only
  the shape of its days.
"""

from __future__ import annotations

import contextlib
import datetime as dt
import math
import warnings
from collections.abc import Iterator, Sequence
from dataclasses import dataclass, fields
from typing import Any

import numpy as np
import pandas as pd

from core.errors import InputError
from core.model.loads.quality import json_ready
from core.timebase import MONTH_NAMES, NOMINAL_YEAR, nominal_index

MIN_DAYS = 21
#: The shortest record taken when all twelve monthly totals are given (one week: weekdays and a weekend).
MIN_DAYS_WITH_BILLS = 7
MONTH_DAYS = (31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31)
_CUM_DAYS = np.concatenate([[0], np.cumsum(MONTH_DAYS)])
#: A fully measured month differing from its bill by more than this share is reported.
BILL_MISMATCH = 0.10
#: Scale factors outside [1/3, 3] are reported: the bill and the profile disagree a lot.
LARGE_SCALE = 3.0
#: Most sub-intervals the exact resampling may create before it falls back to start-time assignment.
MAX_SUBCELLS = 60_000_000

METHOD_TEXT = (
    "Measured intervals are kept as they are (resampled to the step by interval means in site standard "
    "time, dates mapped to the nominal year by month, day and time of day, 29 Feb dropped). Missing days "
    "are filled from weekday/weekend mean daily profiles of the nearest measured months by calendar distance "
    "(wrapping; equally near months averaged), and scaled to the monthly bill where one is given (only the "
    "filled intervals are scaled). Limits: profiles hold no day-to-day, weather or holiday variation; measured "
    "days keep their real weekday pattern on the nominal calendar; bills are taken as calendar months.")


@dataclass(frozen=True)
class YearBuildReport:
    """How a nominal year was built from a measured record (per-month tuples run January..December)."""
    step_s: int
    measured_days: int            # nominal days wholly from measured intervals
    partial_days: int             # nominal days partly measured, the rest filled
    filled_days: int              # nominal days with no measured interval, filled from profiles
    measured_hours: float
    source_start: str             # first and last measured interval used (site standard time)
    source_end: str
    months_scaled: tuple[int, ...]          # months (1..12) whose filled intervals were scaled to a bill
    scale_factors: tuple[float | None, ...]
    bill_kwh: tuple[float | None, ...]
    measured_kwh: tuple[float, ...]
    filled_kwh: tuple[float, ...]
    monthly_kwh: tuple[float, ...]
    annual_kwh: float
    profile_sources: tuple[str, ...]        # where each month's filled intervals came from
    warnings: tuple[str, ...]
    method: str = METHOD_TEXT

    def to_dict(self) -> dict[str, Any]:
        return {f.name: json_ready(getattr(self, f.name)) for f in fields(self)}


def _bills(monthly_kwh: Sequence[float | None] | None) -> list[float | None]:
    if monthly_kwh is None:
        return [None] * 12
    values = list(monthly_kwh)
    if len(values) != 12:
        raise InputError(f"monthly_kwh has {len(values)} values; it needs 12 (January to December)",
                         where="load.monthly_kwh", hint="write one total per month; leave unknown months out "
                         "by giving the whole list only when every month is known, or use nan")
    out: list[float | None] = []
    for k, value in enumerate(values):
        if value is None:
            out.append(None)
            continue
        try:
            number = float(value)
        except (TypeError, ValueError) as exc:
            raise InputError(f"monthly_kwh[{k}] is {value!r}, not a number", where=f"load.monthly_kwh[{k}]",
                             hint="give energy in kWh per month") from exc
        if math.isnan(number):
            out.append(None)
        elif number < 0 or math.isinf(number):
            raise InputError(f"monthly_kwh[{k}] is {value!r}; a monthly total must be zero or more",
                             where=f"load.monthly_kwh[{k}]", hint="give energy in kWh per month")
        else:
            out.append(number)
    return out


def _local_seconds(index: pd.DatetimeIndex, tz: dt.tzinfo) -> np.ndarray:
    """Seconds since 1970-01-01 00:00 of the wall clock in ``tz`` (integer)."""
    wall = index.tz_convert(tz).tz_localize(None)
    return np.round(wall.as_unit("ms").asi8 / 1000.0).astype(np.int64)


def _resample(local_s: np.ndarray, values: np.ndarray, data_step: int, step_s: int
              ) -> tuple[np.ndarray, np.ndarray]:
    """(bin numbers, mean power) at ``step_s`` from a regular series at ``data_step`` (time-weighted)."""
    phase = int(local_s[0] % step_s)
    sub = math.gcd(math.gcd(data_step, step_s), phase) if phase else math.gcd(data_step, step_s)
    repeat = data_step // sub
    if repeat * values.size > MAX_SUBCELLS:
        sub, repeat = data_step, 1
    if repeat > 1:
        sub_t = (local_s[:, None] + np.arange(repeat, dtype=np.int64) * sub).ravel()
        sub_v = np.repeat(values, repeat)
    else:
        sub_t, sub_v = local_s, values
    bins = np.floor_divide(sub_t, step_s)
    unique, inverse = np.unique(bins, return_inverse=True)
    valid = np.isfinite(sub_v)
    sums = np.bincount(inverse, weights=np.where(valid, sub_v, 0.0), minlength=unique.size)
    counts = np.bincount(inverse, weights=valid.astype(np.float64), minlength=unique.size)
    covered = counts * min(sub, step_s) >= 0.5 * step_s
    mean = np.full(unique.size, np.nan)
    mean[covered] = sums[covered] / counts[covered]
    return unique, mean


def _calendar(day: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(month 1..12, day of month, weekday Monday=0) of days counted from 1970-01-01."""
    unique, inverse = np.unique(day, return_inverse=True)
    dates = pd.DatetimeIndex(np.datetime64("1970-01-01", "D") + unique.astype("timedelta64[D]"))
    month = dates.month.to_numpy()[inverse]
    dom = dates.day.to_numpy()[inverse]
    weekday = ((day + 3) % 7).astype(np.int64)  # 1970-01-01 was a Thursday
    return month, dom, weekday


def _profiles(month: np.ndarray, weekend: np.ndarray, slot: np.ndarray, values: np.ndarray, cpd: int
              ) -> tuple[np.ndarray, np.ndarray]:
    """Mean profiles [12, 2, cpd] (NaN where never measured) and whether each (month, day type) is usable."""
    key = ((month - 1) * 2 + weekend) * cpd + slot
    sums = np.bincount(key, weights=values, minlength=24 * cpd).reshape(12, 2, cpd)
    counts = np.bincount(key, minlength=24 * cpd).reshape(12, 2, cpd)
    with np.errstate(invalid="ignore", divide="ignore"):
        profile = np.where(counts > 0, sums / np.maximum(counts, 1), np.nan)
    usable = counts.sum(axis=2) >= cpd
    return profile, usable


def _fill_profiles(profile: np.ndarray, usable: np.ndarray) -> tuple[np.ndarray, list[str]]:
    """Per (month, day type) the profile used to fill it, from the nearest measured months; and a text."""
    cpd = profile.shape[2]
    out = np.full_like(profile, np.nan)
    sources: list[str] = []
    for m in range(12):
        texts = []
        for daytype, word in ((0, "weekdays"), (1, "weekends")):
            target = out[m, daytype]
            used: list[str] = []
            for kind in (daytype, 1 - daytype):
                for distance in range(7):
                    near = sorted({(m + distance) % 12, (m - distance) % 12})
                    chosen = [k for k in near if usable[k, kind]]
                    if not chosen:
                        continue
                    with np.errstate(invalid="ignore"), _quiet():
                        mean = np.nanmean(profile[chosen, kind], axis=0)
                    need = np.isnan(target) & np.isfinite(mean)
                    if need.any():
                        target[need] = mean[need]
                        label = "+".join(MONTH_NAMES[k] for k in chosen)
                        used.append(label if kind == daytype else f"{label} ({'weekends' if kind else 'weekdays'})")
                    if not np.isnan(target).any():
                        break
                if not np.isnan(target).any():
                    break
            if np.isnan(target).any():
                with _quiet():
                    overall = np.nanmean(profile.reshape(-1, cpd), axis=0)
                need = np.isnan(target)
                target[need] = overall[need]
                if np.isnan(target).any():
                    target[np.isnan(target)] = np.nanmean(overall)
                used.append("all measured data")
            texts.append(f"{word} from {', '.join(used)}")
        sources.append("; ".join(texts))
    return out, sources


@contextlib.contextmanager
def _quiet() -> Iterator[None]:
    """Silence numpy's 'mean of empty slice' warning where an all-NaN slot is expected and handled."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", category=RuntimeWarning)
        yield


def build_year(measured: pd.Series, *, step_s: int, tz: dt.tzinfo,
               monthly_kwh: Sequence[float | None] | None = None) -> tuple[pd.Series, YearBuildReport]:
    """One nominal year of mean power (W) on ``nominal_index(step_s, tz)`` from a measured record.

    ``measured``: mean power (W) with a tz-aware index of interval starts at a regular step (as
    ``MeasuredLoad.power_w``), NaN where missing. ``tz``: the site's standard-time zone (a fixed offset, see
    :func:`core.timebase.standard_offset`). ``monthly_kwh``: 12 bill totals (kWh) or None entries. See the
    module docstring for the method and its limits.
    """
    index = nominal_index(step_s, tz)
    bills = _bills(monthly_kwh)
    if not isinstance(measured.index, pd.DatetimeIndex) or measured.index.tz is None:
        raise ValueError("measured must be indexed by tz-aware timestamps (interval starts)")
    series = measured[~measured.index.duplicated(keep="last")].sort_index()
    values = series.to_numpy(dtype=np.float64, na_value=np.nan)
    finite = np.isfinite(values)
    if series.size >= 2:
        data_step = int(max(1, round(float(np.median(np.diff(series.index.as_unit("ms").asi8))) / 1000.0)))
    else:
        data_step = step_s
    measured_hours_in = float(finite.sum()) * data_step / 3600.0
    all_bills = all(b is not None for b in bills)
    if measured_hours_in < (MIN_DAYS_WITH_BILLS if all_bills else MIN_DAYS) * 24:
        if all_bills:
            raise InputError(f"only {measured_hours_in / 24:.1f} days of load data; at least "
                             f"{MIN_DAYS_WITH_BILLS} days (one week) are needed, even with twelve monthly totals",
                             where="load", hint="give at least one week of readings")
        raise InputError(f"only {measured_hours_in / 24:.1f} days of load data; at least {MIN_DAYS} days "
                         "(three weeks) are needed to build a year", where="load",
                         hint=f"give a longer record, or all twelve monthly totals (load.monthly_kwh, e.g. from "
                              f"bills) with at least {MIN_DAYS_WITH_BILLS} days of readings")
    notes: list[str] = []
    local_s = _local_seconds(series.index, tz)
    last_end = int(local_s[finite].max()) + data_step
    window_start = last_end - 366 * 86400
    if int(local_s[finite].min()) < window_start:
        notes.append("the record is longer than a year; its most recent 366 days were used")
        keep = local_s >= window_start
        local_s, values = local_s[keep], values[keep]
    bins, power = _resample(local_s, values, data_step, step_s)
    cpd = 86400 // step_s
    bin_start = bins * step_s
    day = np.floor_divide(bin_start, 86400)
    slot = (bin_start - day * 86400) // step_s
    month, dom, weekday = _calendar(day)
    weekend = (weekday >= 5).astype(np.int64)
    ok = np.isfinite(power)
    profile, usable = _profiles(month[ok], weekend[ok], slot[ok], power[ok], cpd)

    nominal = ~((month == 2) & (dom == 29)) & ok
    position = (_CUM_DAYS[month - 1] + dom - 1) * cpd + slot
    chosen = np.flatnonzero(nominal)
    # Later dates win where a calendar day occurs twice: unique over the reversed order keeps the last.
    _, last_first = np.unique(position[chosen][::-1], return_index=True)
    chosen = chosen[::-1][last_first]
    year = np.full(index.size, np.nan)
    year[position[chosen]] = power[chosen]
    measured_mask = np.isfinite(year)
    source_start = pd.Timestamp(int(bin_start[chosen].min()), unit="s").isoformat()
    source_end = pd.Timestamp(int(bin_start[chosen].max()) + step_s, unit="s").isoformat()

    fill_profile, sources = _fill_profiles(profile, usable)
    cell = np.arange(index.size)
    nominal_day = cell // cpd
    nominal_month = np.searchsorted(_CUM_DAYS, nominal_day, side="right")  # 1..12
    first_weekday = dt.date(NOMINAL_YEAR, 1, 1).weekday()
    nominal_weekend = ((first_weekday + nominal_day) % 7 >= 5).astype(np.int64)
    fill = ~measured_mask
    year[fill] = fill_profile[nominal_month[fill] - 1, nominal_weekend[fill], cell[fill] % cpd]

    kwh_per_w = step_s / 3.6e6
    measured_kwh = np.bincount(nominal_month[measured_mask] - 1, weights=year[measured_mask],
                               minlength=12) * kwh_per_w
    filled_kwh = np.bincount(nominal_month[fill] - 1, weights=year[fill], minlength=12) * kwh_per_w
    factors: list[float | None] = [None] * 12
    scaled: list[int] = []
    filled_cells = np.bincount(nominal_month[fill] - 1, minlength=12)
    for m in range(12):  # twelve months, not rows
        bill = bills[m]
        if bill is None:
            continue
        name = MONTH_NAMES[m]
        in_month = fill & (nominal_month == m + 1)
        if filled_cells[m] == 0:
            if bill > 0 and abs(measured_kwh[m] - bill) > BILL_MISMATCH * bill:
                notes.append(f"{name}: measured {measured_kwh[m]:.0f} kWh differs from the bill {bill:.0f} kWh "
                                f"by {100 * (measured_kwh[m] - bill) / bill:+.0f} %; the measured data are kept")
            continue
        room = bill - measured_kwh[m]
        if room < 0:
            notes.append(f"{name}: measured days alone ({measured_kwh[m]:.0f} kWh) exceed the bill ({bill:.0f} "
                            "kWh); the filled days were left unscaled — check the bill or the data")
            continue
        if filled_kwh[m] > 0:
            factor = room / filled_kwh[m]
            year[in_month] *= factor
        else:
            factor = math.inf
            year[in_month] = room / (filled_cells[m] * kwh_per_w)
        factors[m] = None if math.isinf(factor) else float(factor)
        scaled.append(m + 1)
        if math.isinf(factor) or factor > LARGE_SCALE or factor < 1 / LARGE_SCALE:
            shown = "flat" if math.isinf(factor) else f"{factor:.2f}"
            notes.append(f"{name}: the filled days were scaled by {shown} to meet the bill; the measured "
                            "profile and the bill disagree a lot")
    filled_kwh = np.bincount(nominal_month[fill] - 1, weights=year[fill], minlength=12) * kwh_per_w
    monthly = measured_kwh + filled_kwh
    per_day = np.bincount(nominal_day[measured_mask], minlength=365)
    for m in range(12):
        if filled_cells[m] == 0:
            sources[m] = "measured"
    report = YearBuildReport(
        step_s=step_s,
        measured_days=int((per_day == cpd).sum()),
        partial_days=int(((per_day > 0) & (per_day < cpd)).sum()),
        filled_days=int((per_day == 0).sum()),
        measured_hours=float(measured_mask.sum()) * step_s / 3600.0,
        source_start=source_start,
        source_end=source_end,
        months_scaled=tuple(scaled),
        scale_factors=tuple(factors),
        bill_kwh=tuple(bills),
        measured_kwh=tuple(float(x) for x in measured_kwh),
        filled_kwh=tuple(float(x) for x in filled_kwh),
        monthly_kwh=tuple(float(x) for x in monthly),
        annual_kwh=float(monthly.sum()),
        profile_sources=tuple(sources),
        warnings=tuple(notes),
    )
    return pd.Series(year, index=index, name="load_w"), report
