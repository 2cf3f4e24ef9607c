"""A reproducible year of weather from twelve monthly figures (mean daily GHI and mean air temperature).

For sites with no weather file. The steps, each after a published method:

1. **Daily clearness** ``K_T = H / H_0`` (H: daily global horizontal irradiation, H_0: extraterrestrial) drawn from
   the distribution of Bendt, Collares-Pereira & Rabl, "The frequency distribution of daily insolation values",
   Solar Energy 27 (1981) 1-5: a truncated exponential density ``f(K) ~ exp(gamma K)`` on ``[K_min, K_max]`` whose
   ``gamma`` makes its mean the month's mean clearness, with ``K_min = 0.05`` and
   ``K_max = 0.6313 + 0.267 Kbar - 11.9 (Kbar - 0.75)^8`` (from memory, as summarised in Duffie & Beckman,
   *Solar Engineering of Thermal Processes*).
2. **Day-to-day persistence**: consecutive days are correlated with a lag-1 correlation ``rho = 0.3`` (the order of
   the daily clearness autocorrelation reported by Aguiar, Collares-Pereira & Conde, "Simple procedure for
   generating sequences of daily radiation values using a library of Markov transition matrices", Solar Energy 40
   (1988) 269-279; value from memory). We obtain it with a Gaussian AR(1) series mapped through the Bendt
   distribution (a Gaussian copula) instead of their Markov matrices; the marginal distribution stays Bendt's.
3. The daily values of each month are **rescaled** so that the month's mean daily GHI is the target.
4. **Hourly split** of each day's irradiation by Collares-Pereira & Rabl, "The average distribution of solar
   radiation -- correlations between diffuse and hemispherical and between daily and hourly insolation values",
   Solar Energy 22 (1979) 155-164: ``r_t = (pi/24)(a + b cos w)(cos w - cos w_s) / (sin w_s - w_s cos w_s)`` with
   ``a = 0.409 + 0.5016 sin(w_s - 60)``, ``b = 0.6609 - 0.4767 sin(w_s - 60)``, w the hour angle and w_s the sunset
   hour angle, averaged over the sunlit part of each interval and normalised so that every day keeps its energy.
5. GHI is **capped by the clear sky** (Ineichen & Perez 2002 with the Linke turbidity climatology pvlib ships,
   offline) and each month rescaled under that cap so its total still matches the target.
6. **Diffuse and beam** by Erbs, Klein & Duffie, Solar Energy 28 (1982) 293-302 (:func:`pvlib.irradiance.erbs`).
7. **Air temperature**: daily means interpolated smoothly through the monthly means (mean-preserving), then a
   diurnal swing of ``3 + 12 K_T`` C between a minimum at sunrise and a maximum at 15:00 solar time (clear days
   swing more -- about 4 C on an overcast day, 11-12 C on a clear one; our choice in the usual range), joined by
   half-cosines; monthly means are matched afterwards.
8. **Wind** a constant 1 m/s (the IEC 61215 NOCT wind speed; a conservative choice for cell temperature) and
   **pressure** from the altitude (:func:`pvlib.atmosphere.alt2pres`).
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence

import numpy as np
import pandas as pd
import pvlib

from core.model.weather.clearness import (  # noqa: F401 - the distribution is also reached through monthly
    KT_MIN,
    PERSISTENCE_RHO,
    _bendt_limits,
    bendt_cdf,
    bendt_gamma,
    bendt_kt_max,
    bendt_mean,
    bendt_quantile,
    daily_clearness,
)
from core.model.weather.frame import Weather
from core.model.weather.place import _check_lat_lon, as_standard_tz
from core.model.weather.sun import clearsky_ghi, erbs_split, sun_at_midpoints
from core.timebase import nominal_index

#: Constant wind speed of generated years, m/s (IEC 61215 NOCT conditions).
WIND_SPEED_M_S = 1.0
#: Highest monthly mean clearness accepted (clearer than any measured month; catches unit mistakes).
KT_MEAN_LIMIT = 0.8
#: Solar-time hour of the daily temperature maximum (mid-afternoon, common practice).
T_MAX_SOLAR_HOUR = 15.0

_DAYS = 365


# ----------------------------------------------------------------------------------------------------------------
# daily extraterrestrial irradiation and sun-up geometry


def sunset_hour_angle_deg(day_of_year, latitude: float) -> np.ndarray:
    """Sunset hour angle ``w_s = arccos(-tan(phi) tan(delta))`` (Duffie & Beckman eq. 1.6.10), degrees.

    Declination by Spencer (1971) (:func:`pvlib.solarposition.declination_spencer71`) at midday. 0 in polar night, 180 in
    polar day.
    """
    decl = pvlib.solarposition.declination_spencer71(np.asarray(day_of_year, dtype=float) + 0.5)  # at midday
    cos_ws = -np.tan(np.radians(latitude)) * np.tan(decl)
    return np.degrees(np.arccos(np.clip(cos_ws, -1.0, 1.0)))


def extraterrestrial_daily_wh_m2(day_of_year, latitude: float) -> np.ndarray:
    """Daily extraterrestrial irradiation on a horizontal plane, Wh/m2 (Duffie & Beckman eq. 1.10.3):
    ``H_0 = (24/pi) G_on (cos(phi) cos(delta) sin(w_s) + w_s sin(phi) sin(delta))``, with ``G_on`` from
    :func:`pvlib.irradiance.get_extra_radiation` (Spencer 1971)."""
    doy = np.asarray(day_of_year, dtype=float)
    decl = pvlib.solarposition.declination_spencer71(doy + 0.5)  # Spencer's day angle counts from 00:00: use midday
    phi = np.radians(latitude)
    ws = np.radians(sunset_hour_angle_deg(doy, latitude))
    g_on = np.asarray(pvlib.irradiance.get_extra_radiation(doy + 0.5), dtype=float)
    h0 = 24.0 / np.pi * g_on * (np.cos(phi) * np.cos(decl) * np.sin(ws) + ws * np.sin(phi) * np.sin(decl))
    return np.maximum(h0, 0.0)


# ----------------------------------------------------------------------------------------------------------------
# Collares-Pereira & Rabl (1979) hourly share of daily irradiation


def cpr_ratio_rate(hour_angle_deg, sunset_hour_angle_deg) -> np.ndarray:
    """Collares-Pereira & Rabl ``r_t`` at hour angle ``w``: share of the day's global irradiation per HOUR."""
    w = np.radians(np.asarray(hour_angle_deg, dtype=float))
    ws_deg = np.asarray(sunset_hour_angle_deg, dtype=float)
    ws = np.radians(ws_deg)
    a = 0.409 + 0.5016 * np.sin(ws - np.radians(60.0))
    b = 0.6609 - 0.4767 * np.sin(ws - np.radians(60.0))
    denom = np.sin(ws) - ws * np.cos(ws)
    ok = denom > 1e-12
    rate = np.pi / 24.0 * (a + b * np.cos(w)) * (np.cos(w) - np.cos(ws)) / np.where(ok, denom, 1.0)
    return np.where(ok & (np.abs(w) < ws), np.maximum(rate, 0.0), 0.0)


def cpr_interval_ratios(start_hour_angle_deg, step_s: int, sunset_hour_angle_deg, *,
                        subsamples: int = 8) -> np.ndarray:
    """Share of the day's global irradiation falling in intervals that start at the given hour angles.

    ``r_t`` is averaged over the sunlit part of each interval (midpoint rule on ``subsamples`` points), so the
    intervals that contain sunrise or sunset get their part; multiply by the interval length in hours.
    """
    start, ws = np.broadcast_arrays(np.asarray(start_hour_angle_deg, dtype=float),
                                    np.asarray(sunset_hour_angle_deg, dtype=float))
    width_deg = 15.0 * step_s / 3600.0
    lo = np.maximum(start, -ws)
    hi = np.minimum(start + width_deg, ws)
    lit = np.clip(hi - lo, 0.0, None)
    frac = (np.arange(subsamples) + 0.5) / subsamples
    points = lo[..., None] + lit[..., None] * frac
    mean_rate = cpr_ratio_rate(points, ws[..., None]).mean(axis=-1)
    return mean_rate * lit / 15.0  # lit degrees / 15 = lit hours


# ----------------------------------------------------------------------------------------------------------------
# the generator


def monthly_weather(ghi_kwh_m2_day: Sequence[float], temp_air_c: Sequence[float], *, latitude: float,
                    longitude: float, altitude_m: float, tz: dt.tzinfo | str, seed: int = 0,
                    step_s: int = 3600) -> Weather:
    """A seeded year of weather whose monthly mean daily GHI and mean air temperature are the given twelve values.

    Parameters
    ----------
    ghi_kwh_m2_day : 12 monthly means of daily global horizontal irradiation, kWh/m2/day (January first).
    temp_air_c : 12 monthly mean air temperatures, C.
    latitude, longitude : degrees (north, east positive). altitude_m : metres.
    tz : the site's time zone (IANA name or tzinfo); its standard offset is used.
    seed : random-number seed; the same seed gives the same year.
    step_s : time step of the result, s (a divisor of one hour).
    """
    ghi_target = _twelve(ghi_kwh_m2_day, "weather.ghi_kwh_m2_day")
    if (ghi_target < 0).any():
        raise ValueError(f"weather.ghi_kwh_m2_day[{int(np.argmax(ghi_target < 0))}]: irradiation cannot be negative")
    temp_target = _twelve(temp_air_c, "weather.temp_air_c")
    _check_lat_lon(latitude, longitude)
    if step_s <= 0 or 3600 % step_s:
        raise ValueError(f"time step of {step_s} s is not a whole fraction of an hour")
    std_tz = as_standard_tz(tz)
    index = nominal_index(step_s, std_tz)
    step_h = step_s / 3600.0

    # --- days of the nominal year: extraterrestrial irradiation, monthly mean clearness
    day_dates = pd.date_range(f"{index[0].year}-01-01", periods=_DAYS, freq="D")
    day_month = day_dates.month.to_numpy() - 1
    doy = np.arange(1, _DAYS + 1)
    h0_day = extraterrestrial_daily_wh_m2(doy, latitude)
    days_in_month = np.bincount(day_month, minlength=12)
    h0_month = np.bincount(day_month, weights=h0_day, minlength=12) / days_in_month
    target_wh_day = ghi_target * 1000.0
    kt_month = np.zeros(12)
    for m in range(12):
        if target_wh_day[m] <= 0:
            continue
        kt = target_wh_day[m] / h0_month[m] if h0_month[m] > 0 else np.inf
        if kt > KT_MEAN_LIMIT:
            top = KT_MEAN_LIMIT * h0_month[m] / 1000.0
            raise ValueError(f"weather.ghi_kwh_m2_day[{m}]: {ghi_target[m]:g} kWh/m2/day is more than the sky can "
                             f"deliver here (mean clearness {kt:.2f} > {KT_MEAN_LIMIT}; at most about {top:.2f} "
                             "kWh/m2/day)")
        kt_month[m] = kt

    # --- daily clearness: Bendt distribution with persistence, rescaled to the monthly targets
    rng = np.random.default_rng(seed)
    kt_day = daily_clearness(kt_month[day_month], rng)
    for m in range(12):
        days = day_month == m
        kt_day[days] = _rescale_to_total(kt_day[days], h0_day[days], target_wh_day[m] * days_in_month[m],
                                         _bendt_limits(kt_month[m])[1] if kt_month[m] > 0 else 0.0)

    # --- solar time of every interval (midpoint) and its solar day
    mid_s = (np.arange(len(index)) + 0.5) * step_s
    offset_h = std_tz.utcoffset(None).total_seconds() / 3600.0
    eot_min = pvlib.solarposition.equation_of_time_spencer71(index.day_of_year.to_numpy())
    solar_h = mid_s / 3600.0 + (longitude - 15.0 * offset_h) / 15.0 + eot_min / 60.0
    solar_day = np.floor(solar_h / 24.0).astype(int) % _DAYS
    ws_day = sunset_hour_angle_deg(doy, latitude)
    start_hour_angle = 15.0 * (np.mod(solar_h, 24.0) - step_h / 2.0 - 12.0)
    ratio = cpr_interval_ratios(start_hour_angle, step_s, ws_day[solar_day])
    day_sum = np.bincount(solar_day, weights=ratio, minlength=_DAYS)
    share = np.where(day_sum[solar_day] > 0, ratio / np.where(day_sum[solar_day] > 0, day_sum[solar_day], 1.0), 0.0)
    ghi = kt_day[solar_day] * h0_day[solar_day] * share / step_h  # W/m2 interval means

    # --- clear-sky cap, with each calendar month rescaled to its target under the cap
    solpos = sun_at_midpoints(index, step_s, latitude, longitude, altitude_m)
    cs = clearsky_ghi(index, step_s, latitude, longitude, altitude_m, solpos=solpos)
    step_month = index.month.to_numpy() - 1
    for m in range(12):
        rows = step_month == m
        target_sum = target_wh_day[m] * days_in_month[m] / step_h
        ghi[rows] = _cap_and_match(ghi[rows], cs[rows], target_sum, m, ghi_target[m], days_in_month[m], step_h)

    dni, dhi = erbs_split(ghi, solpos["zenith"].to_numpy(), index)

    # --- temperature and the rest
    kt_final = np.bincount(solar_day, weights=ghi * step_h, minlength=_DAYS) / np.where(h0_day > 0, h0_day, 1.0)
    temp = _temperature(temp_target, day_month, kt_final, ws_day, solar_h, step_month)
    frame = pd.DataFrame({"ghi": ghi, "dni": dni, "dhi": dhi, "temp_air": temp,
                          "wind_speed": np.full(len(index), WIND_SPEED_M_S),
                          "pressure": np.full(len(index), float(pvlib.atmosphere.alt2pres(altitude_m)))},
                         index=index)
    source = (f"monthly generator (12 monthly means, seed {seed}): Bendt et al. daily clearness with persistence, "
              "Collares-Pereira & Rabl hourly split, Ineichen clear-sky cap, DNI/DHI by Erbs")
    return Weather(data=frame, step_s=step_s, source=source, latitude=float(latitude), longitude=float(longitude),
                   altitude_m=float(altitude_m))


def _rescale_to_total(kt: np.ndarray, h0: np.ndarray, total_wh: float, kt_max: float) -> np.ndarray:
    """Scale daily clearness so that ``sum(kt * h0) == total_wh``, keeping ``kt <= kt_max`` where possible."""
    if total_wh <= 0:
        return np.zeros_like(kt)
    out = kt.copy()
    for _ in range(20):
        have = float(np.sum(out * h0))
        if have <= 0:
            out = np.full_like(kt, total_wh / max(float(np.sum(h0)), 1e-9))
            break
        out *= total_wh / have
        if out.max() <= kt_max + 1e-12:
            break
        out = np.minimum(out, kt_max)
    return out


#: Share of the month's clear-sky total that a monthly target may reach before the clear sky is brightened.
CLEAR_SKY_HEADROOM = 0.95


def _cap_and_match(ghi: np.ndarray, cs: np.ndarray, target_sum: float, month: int, target_kwh: float,
                   n_days: int, step_h: float) -> np.ndarray:
    """Cap ``ghi`` at the clear sky ``cs`` and scale so ``sum == target_sum``; redistribute into clear-sky headroom."""
    if target_sum <= 0:
        return np.zeros_like(ghi)
    if float(np.sum(cs)) < target_sum / CLEAR_SKY_HEADROOM:
        # The climatological turbidity makes the modelled clear sky dimmer than the user's figure allows
        # (common at dry, dusty or high sites). The user's measured figure wins: the month's clear sky is
        # brightened so that the month keeps a little headroom, as a lower turbidity would. The mean
        # clearness limit above still rejects figures no sky can deliver.
        cs = cs * (target_sum / CLEAR_SKY_HEADROOM / float(np.sum(cs)))

    def total(f: float) -> float:
        return float(np.sum(np.minimum(f * ghi, cs)))

    if float(np.sum(cs[ghi > 0])) >= target_sum * (1 + 1e-9) and total(1e6) >= target_sum:
        lo, hi = 0.0, 1.0
        while total(hi) < target_sum:
            hi *= 2.0
        for _ in range(80):
            mid = 0.5 * (lo + hi)
            if total(mid) < target_sum:
                lo = mid
            else:
                hi = mid
        out = np.minimum(hi * ghi, cs)
        return out * (target_sum / float(np.sum(out)))  # remove the last bisection residue (< 1e-12 relative)
    # The shape has too little room under the cap: fill the remaining clear-sky headroom proportionally.
    out = np.minimum(ghi, cs)
    room = cs - out
    missing = target_sum - float(np.sum(out))
    return out + room * (missing / float(np.sum(room)))


def _temperature(monthly_c: np.ndarray, day_month: np.ndarray, kt_day: np.ndarray, ws_day: np.ndarray,
                 solar_h: np.ndarray, step_month: np.ndarray) -> np.ndarray:
    """Interval air temperatures: smooth daily means, a clearness-dependent diurnal swing, monthly means matched."""
    daily_mean = _mean_preserving_daily(monthly_c, day_month)
    swing = 3.0 + 12.0 * np.clip(kt_day, 0.0, 1.0)
    sunrise = 12.0 - np.where((ws_day > 0) & (ws_day < 180), ws_day, 90.0) / 15.0  # polar: minimum at 06:00
    sunrise = np.minimum(sunrise, T_MAX_SOLAR_HOUR - 1.0)
    correction = np.zeros(12)
    temp = np.zeros_like(solar_h)
    for _ in range(6):
        base = daily_mean + correction[day_month]
        # knots: minimum at sunrise and maximum at 15:00 solar time of every day, with one day of wrap each side
        days = np.arange(-1, _DAYS + 1)
        d = days % _DAYS
        t_knots = np.column_stack([24.0 * days + sunrise[d], 24.0 * days + T_MAX_SOLAR_HOUR]).ravel()
        v_knots = np.column_stack([base[d] - swing[d] / 2.0, base[d] + swing[d] / 2.0]).ravel()
        k = np.searchsorted(t_knots, solar_h, side="right") - 1
        frac = (solar_h - t_knots[k]) / (t_knots[k + 1] - t_knots[k])
        temp = v_knots[k] + (v_knots[k + 1] - v_knots[k]) * (1.0 - np.cos(np.pi * frac)) / 2.0
        achieved = np.bincount(step_month, weights=temp, minlength=12) / np.bincount(step_month, minlength=12)
        error = monthly_c - achieved
        if np.max(np.abs(error)) < 1e-3:
            break
        correction += error
    return temp


def _mean_preserving_daily(monthly: np.ndarray, day_month: np.ndarray) -> np.ndarray:
    """Daily values varying linearly between mid-month anchors (the year wraps) whose monthly means are ``monthly``."""
    day = np.arange(_DAYS) + 0.5
    counts = np.bincount(day_month, minlength=12)
    mid = np.cumsum(counts) - counts / 2.0
    anchors = monthly.astype(float).copy()
    daily = np.zeros(_DAYS)
    for _ in range(30):
        daily = np.interp(day, mid, anchors, period=_DAYS)
        error = monthly - np.bincount(day_month, weights=daily, minlength=12) / counts
        if np.max(np.abs(error)) < 1e-6:
            break
        anchors += error
    return daily


def _twelve(values, key: str) -> np.ndarray:
    """Twelve finite numbers, January first. Ranges are the scenario schema's job (checked where input enters);
    a malformed argument here is a programming error and raises ValueError, as pvlib's functions do."""
    try:
        out = np.asarray([float(v) if not isinstance(v, bool) else np.nan for v in values], dtype=float)
    except (TypeError, ValueError):
        raise ValueError(f"{key}: expected 12 numbers, got {values!r}") from None
    if out.shape != (12,):
        raise ValueError(f"{key}: has {out.size} values, expected 12 (one per month, January first)")
    if not np.isfinite(out).all():
        raise ValueError(f"{key}[{int(np.flatnonzero(~np.isfinite(out))[0])}]: not a finite number")
    return out
