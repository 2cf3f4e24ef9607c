"""Does a weather year fit its site? Irradiance against the sun, and the file's own location against the site.

Three quiet mistakes give a plausible-looking but wrong year: timestamps in UTC read as local time (irradiance
after sunset, PV cut by half), a file from another place, and values no sky can give. These functions measure
them; the reader (:mod:`core.model.weather.read`) decides what to refuse and what to warn about.

All checks run on hourly means (finer data are averaged first), so they cost the same at every step.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd
import pvlib

from core.model.weather.sun import clearsky_ghi, sun_at_midpoints

#: Mean Earth radius, km (IUGG mean radius R1 = 6371.0088 km; common practice).
EARTH_RADIUS_KM = 6371.0088
#: Lags tried when aligning measured GHI with clear-sky GHI, hours either way.
MAX_LAG_H = 12


@dataclass(frozen=True)
class SunFit:
    """How well a year's irradiance follows the sun at the site.

    night_share : share of the year's GHI energy in hours when the sun is below the horizon for the whole hour.
    best_lag_h : the shift (hours, whole) that best aligns measured GHI with clear-sky GHI; positive when the
        measured day comes *later* than the sun's.
    over_extra_count : hours whose mean GHI exceeds the extraterrestrial irradiance on the horizontal.
    worst_over_extra : (hour start, GHI W/m2, extraterrestrial horizontal W/m2) of the worst such hour, or None.
    """

    night_share: float
    best_lag_h: int
    over_extra_count: int
    worst_over_extra: tuple[pd.Timestamp, float, float] | None


def hourly_ghi(ghi_w_m2: pd.Series, step_s: int) -> pd.Series:
    """Hourly means of a regular series of interval means on whole hours (``step_s`` divides 3600)."""
    if step_s == 3600:
        return ghi_w_m2
    if step_s <= 0 or 3600 % step_s:
        raise ValueError(f"step of {step_s} s does not divide an hour")
    k = 3600 // step_s
    values = np.asarray(ghi_w_m2, float)
    if values.size % k:
        raise ValueError("the series does not cover whole hours")
    return pd.Series(values.reshape(-1, k).mean(axis=1), index=ghi_w_m2.index[::k])


def sun_fit(ghi_w_m2: pd.Series, step_s: int, latitude: float, longitude: float,
            altitude_m: float = 0.0) -> SunFit:
    """Measure how a year of GHI (interval means on a tz-aware index of interval starts) follows the sun.

    Night: the sun's elevation at the start, middle and end of each hour is below zero (pvlib SPA).
    Lag: the circular shift of measured hourly GHI with the highest correlation with clear-sky GHI (Ineichen &
    Perez 2002, :func:`core.model.weather.sun.clearsky_ghi`).
    Extraterrestrial on the horizontal: ``E0 * cos(zenith)`` (``E0`` by Spencer 1971,
    :func:`pvlib.irradiance.get_extra_radiation`), taking the largest ``cos(zenith)`` of the hour's start, middle and
    end, so that the test never refuses a real hour; an hour fails when its GHI exceeds that by 5 % + 10 W/m2.
    """
    hourly = hourly_ghi(ghi_w_m2, step_s)
    index = pd.DatetimeIndex(hourly.index)
    ghi = hourly.to_numpy(dtype=float)
    ends = index.append(index[-1:] + pd.Timedelta(hours=1))
    edges = pvlib.solarposition.get_solarposition(ends, latitude, longitude, altitude=altitude_m,
                                                  method="nrel_numpy")
    mid = sun_at_midpoints(index, 3600, latitude, longitude, altitude_m)
    elev_edges = edges["elevation"].to_numpy()
    elevation = np.column_stack([elev_edges[:-1], mid["elevation"].to_numpy(), elev_edges[1:]])
    night = (elevation < 0).all(axis=1)
    total = ghi.sum()
    night_share = float(ghi[night].sum() / total) if total > 0 else 0.0

    clear = clearsky_ghi(index, 3600, latitude, longitude, altitude_m, solpos=mid)
    best_lag_h = _best_lag(ghi, clear)

    cos_max = np.cos(np.radians(90.0 - elevation.max(axis=1))).clip(min=0.0)
    extra = pvlib.irradiance.get_extra_radiation(index).to_numpy() * cos_max
    over = ghi > 1.05 * extra + 10.0
    worst = None
    if over.any():
        i = int(np.argmax(np.where(over, ghi - extra, -np.inf)))
        worst = (index[i], float(ghi[i]), float(extra[i]))
    return SunFit(night_share=night_share, best_lag_h=best_lag_h, over_extra_count=int(over.sum()),
                  worst_over_extra=worst)


def _best_lag(measured: np.ndarray, clear: np.ndarray) -> int:
    """The whole-hour circular lag of ``measured`` against ``clear`` with the highest correlation."""
    if measured.std() == 0 or clear.std() == 0:
        return 0
    m = (measured - measured.mean()) / measured.std()
    c = (clear - clear.mean()) / clear.std()
    lags = range(-MAX_LAG_H, MAX_LAG_H + 1)
    scores = [float(np.dot(np.roll(c, lag), m)) for lag in lags]
    return int(list(lags)[int(np.argmax(scores))])


def distance_km(lat1: float, lon1: float, lat2: float, lon2: float) -> float:
    """Great-circle distance by the haversine formula on a sphere of the Earth's mean radius, km."""
    p1, p2 = np.radians(lat1), np.radians(lat2)
    dp, dl = p2 - p1, np.radians(lon2 - lon1)
    a = np.sin(dp / 2) ** 2 + np.cos(p1) * np.cos(p2) * np.sin(dl / 2) ** 2
    return float(2 * EARTH_RADIUS_KM * np.arcsin(np.sqrt(min(1.0, a))))
