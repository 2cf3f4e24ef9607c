"""Base load: the low, steady draw under a household's switching loads, per month, by night and by day.

Method (our own, built from common practice): take the rolling mean of power over ``window`` (1 h by
default) so that short appliance cycles average out, then the ``percentile``-th percentile (5 % by default)
of those rolling means within each calendar month, separately for night and day windows. A low percentile
rather than the minimum keeps one odd quiet hour (a breaker trip, a data glitch) from setting the figure.

Day and night: with ``latitude`` (and ``longitude``) a window is "day" when the sun is above the horizon at
its centre — declination after Cooper (1969) and the equation of time after Spencer (1971) as in
``pvlib.solarposition``, hour angle from UTC after Duffie & Beckman, *Solar Engineering of Thermal
Processes* (2006) §1.5–1.6. Without a longitude it is estimated as 15° per hour of the series' UTC offset
(good to about half an hour of sun time). Without a latitude, "day" is 07:00–19:00 local clock time of the
series' index (or of ``tz``). Months with fewer than ``min_hours`` of complete windows in a class are NaN.
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
from pvlib import solarposition

DAY_START_H = 7.0
DAY_END_H = 19.0


def _index_in(power_w: pd.Series, tz: dt.tzinfo | str | None) -> pd.DatetimeIndex:
    index = pd.DatetimeIndex(power_w.index)
    if tz is not None:
        index = (index.tz_localize("UTC") if index.tz is None else index).tz_convert(tz)
    return index


def _sun_up(centres: pd.DatetimeIndex, latitude: float, longitude: float | None) -> tuple[np.ndarray, str]:
    utc = centres.tz_localize("UTC") if centres.tz is None else centres.tz_convert("UTC")
    if longitude is None:
        offset_h = 0.0 if centres.tz is None else (
            (centres[:1].tz_localize(None) - utc[:1].tz_localize(None)).total_seconds()[0] / 3600.0)
        longitude = 15.0 * offset_h
        how = f"sun above the horizon at latitude {latitude:g}°, longitude estimated {longitude:g}° from the UTC offset"
    else:
        how = f"sun above the horizon at latitude {latitude:g}°, longitude {longitude:g}°"
    doy = utc.day_of_year.to_numpy()
    declination = solarposition.declination_cooper69(doy)
    eot_min = solarposition.equation_of_time_spencer71(doy)
    utc_hours = (utc.hour.to_numpy() + utc.minute.to_numpy() / 60.0 + utc.second.to_numpy() / 3600.0)
    hour_angle_deg = 15.0 * (utc_hours - 12.0) + longitude + eot_min / 4.0
    zenith = solarposition.solar_zenith_analytical(np.radians(latitude), np.radians(hour_angle_deg),
                                                  declination)
    return np.asarray(zenith) < np.pi / 2, how


def base_load_w(power_w: pd.Series, *, latitude: float | None = None, window: str = "1h",
                percentile: float = 5.0, longitude: float | None = None, tz: dt.tzinfo | str | None = None,
                min_hours: float = 6.0) -> pd.DataFrame:
    """Monthly base load (W): 12 rows (month 1..12) with columns ``night_w``, ``day_w`` and ``all_w``.

    ``power_w`` is mean power on a regular grid (NaN where missing); ``tz`` converts the index before the
    months and clock hours are taken. The method used for day and night is in ``result.attrs["method"]``.
    """
    months = pd.Index(range(1, 13), name="month")
    empty = pd.DataFrame({"night_w": np.nan, "day_w": np.nan, "all_w": np.nan}, index=months)
    index = _index_in(power_w, tz)
    values = pd.Series(np.asarray(power_w, dtype=np.float64), index=index)
    if not (index.is_monotonic_increasing and index.is_unique):  # a regular grid is both: no copy, no hash table
        values = values[~values.index.duplicated()].sort_index()
    if values.notna().sum() < 2:
        empty.attrs["method"] = "no data"
        return empty
    step_s = float(np.median(np.diff(values.index.as_unit("ns").asi8)) / 1e9)
    window_s = pd.Timedelta(window).total_seconds()
    cells = max(1, int(round(window_s / step_s)))
    rolled = values.rolling(pd.Timedelta(seconds=cells * step_s), min_periods=cells).mean()
    rolled = rolled.dropna()
    if rolled.empty:
        empty.attrs["method"] = "no complete window"
        return empty
    centres = rolled.index - pd.Timedelta(seconds=cells * step_s / 2.0) + pd.Timedelta(seconds=step_s / 2.0)
    wall = centres.tz_localize(None) if centres.tz is not None else centres  # local clock time, converted once
    if latitude is not None:
        day, how = _sun_up(centres, latitude, longitude)
    else:
        clock = wall.hour.to_numpy() + wall.minute.to_numpy() / 60.0
        day = (clock >= DAY_START_H) & (clock < DAY_END_H)
        how = f"local clock {DAY_START_H:02.0f}:00–{DAY_END_H:02.0f}:00 is day"
    # One stable sort by (month, night or day) puts each class of each month in one run, night before day, so
    # that a month's two runs side by side are the whole month: no frame, no copy per class or per month.
    codes = ((wall.month.to_numpy() - 1) * 2 + np.asarray(day, dtype=np.int64)).astype(np.int8)
    grouped = rolled.to_numpy()[np.argsort(codes, kind="stable")]
    bounds = np.concatenate([[0], np.cumsum(np.bincount(codes, minlength=24))])
    del centres, wall, rolled, values, codes, day
    q = percentile / 100.0
    min_windows = max(1, int(np.ceil(min_hours * 3600.0 / step_s)))

    def by(first: int, last: int) -> float:
        """The percentile of the runs from ``first`` to ``last`` (exclusive), NaN with too few windows."""
        a, b = bounds[first], bounds[last]
        return _group_quantile(grouped[a:b], q) if b - a >= min_windows else np.nan

    out = pd.DataFrame(index=months)
    out["night_w"] = [by(2 * m, 2 * m + 1) for m in range(12)]
    out["day_w"] = [by(2 * m + 1, 2 * m + 2) for m in range(12)]
    out["all_w"] = [by(2 * m, 2 * m + 2) for m in range(12)]
    out.attrs["method"] = (f"{percentile:g}th percentile of {window} rolling means per month; {how}")
    return out


def _group_quantile(values: np.ndarray, q: float) -> float:
    """The ``q`` quantile of ``values`` (all finite) with linear interpolation between the two order statistics
    around ``q × (n − 1)``, as pandas' grouped quantile computes it (``val + (next − val) × frac``), so the figures
    do not change with the way they are computed; the two order statistics come from a partition, not a sort."""
    q_idx = q * float(values.size - 1)
    idx = int(q_idx)
    frac = q_idx % 1
    if frac == 0.0:
        return float(np.partition(values, idx)[idx])
    part = np.partition(values, (idx, idx + 1))
    val, nxt = float(part[idx]), float(part[idx + 1])
    return val + (nxt - val) * frac
