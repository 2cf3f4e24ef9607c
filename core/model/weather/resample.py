"""Weather on another step: block means to coarsen, clear-sky-index interpolation to refine."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pandas as pd
import pvlib

from core.model.weather.frame import WEATHER_COLUMNS, Weather
from core.model.weather.sun import clearsky_ghi, sun_at_midpoints
from core.timebase import nominal_index


def interpolate_weather(weather: Weather, step_s: int, *, latitude: float, longitude: float,
                        altitude_m: float, solpos: pd.DataFrame | None = None) -> Weather:
    """Resample weather to another step, keeping the energy of every original interval.

    Finer step: the clear-sky index ``kc = GHI / GHI_clear`` of each original interval (clear sky by
    :func:`clearsky_ghi`, averaged over the interval) is interpolated linearly between interval midpoints and
    multiplied by the fine clear-sky GHI, so that sunrise, noon and sunset keep their shape; each original interval
    is then rescaled so its mean GHI is exactly the original value (interval energy preserved). The diffuse fraction
    is interpolated the same way and rescaled to keep each interval's DHI; DNI follows from closure
    ``DNI = (GHI - DHI) / cos(zenith)`` (zero when the sun is below 86.3 degrees zenith, cos < 0.065, as in pvlib's Erbs).
    Temperature, wind speed and pressure are interpolated linearly between interval midpoints (the year wraps).

    Coarser step: block means (energy preserved exactly).
    ``solpos``: the sun position at the fine step's midpoints (as :func:`sun_at_midpoints` gives it), when the
    caller has it already.
    """
    old = weather.step_s
    if step_s == old:
        return weather
    if step_s <= 0 or 86400 % step_s:
        raise ValueError(f"time step of {step_s} s does not divide a day")
    tz = weather.data.index.tz
    data = weather.data
    if step_s > old:
        if step_s % old:
            raise ValueError(f"cannot resample a {old} s series to {step_s} s (not a multiple of it)")
        k = step_s // old
        means = data.to_numpy().reshape(-1, k, data.shape[1]).mean(axis=1)
        frame = pd.DataFrame(means, columns=data.columns, index=nominal_index(step_s, tz))
        return replace(weather, data=frame, step_s=step_s, source=f"{weather.source}, averaged to {step_s} s")
    if old % step_s:
        raise ValueError(f"cannot resample a {old} s series to {step_s} s (not a divisor of it)")
    k = old // step_s
    n = len(data)
    fine_index = nominal_index(step_s, tz)
    if solpos is None or len(solpos) != len(fine_index):
        solpos = sun_at_midpoints(fine_index, step_s, latitude, longitude, altitude_m)
    cs_fine = clearsky_ghi(fine_index, step_s, latitude, longitude, altitude_m, solpos=solpos)
    cs_block = cs_fine.reshape(n, k)
    cs_coarse = cs_block.mean(axis=1)

    # positions (in seconds from the year start) of coarse and fine interval midpoints; the year is periodic
    year_s = 8760 * 3600
    coarse_mid = np.arange(n) * old + old / 2
    fine_mid = np.arange(n * k) * step_s + step_s / 2

    def interp(anchor_values: np.ndarray, valid: np.ndarray) -> np.ndarray:
        if not valid.any():
            return np.zeros(n * k)
        return np.interp(fine_mid, coarse_mid[valid], anchor_values[valid], period=year_s)

    ghi_c = data["ghi"].to_numpy()
    has_sky = cs_coarse > 1.0
    kc = np.where(has_sky, ghi_c / np.where(has_sky, cs_coarse, 1.0), 0.0)
    ghi_f = (interp(kc, has_sky).clip(0.0, 2.0) * cs_fine).reshape(n, k)
    ghi_f = _rescale_blocks(ghi_f, ghi_c)

    dhi_c = data["dhi"].to_numpy()
    lit = ghi_c > 0
    kd = np.where(lit, dhi_c / np.where(lit, ghi_c, 1.0), 1.0)
    dhi_f = (interp(kd, lit).clip(0.0, 1.0).reshape(n, k) * ghi_f)
    dhi_f = np.minimum(_rescale_blocks(dhi_f, dhi_c), ghi_f)

    cosz = np.cos(np.radians(solpos["zenith"].to_numpy())).reshape(n, k)
    up = cosz >= 0.065
    dni_f = np.where(up, (ghi_f - dhi_f) / np.where(up, cosz, 1.0), 0.0)
    dhi_f = np.where(up, dhi_f, ghi_f)
    dni_extra = pvlib.irradiance.get_extra_radiation(fine_index).to_numpy().reshape(n, k)
    dni_f = np.minimum(dni_f, dni_extra)

    frame = pd.DataFrame({"ghi": ghi_f.ravel(), "dni": dni_f.ravel(), "dhi": dhi_f.ravel()}, index=fine_index)
    for name in ("temp_air", "wind_speed", "pressure"):
        frame[name] = np.interp(fine_mid, coarse_mid, data[name].to_numpy(), period=year_s)
    return replace(weather, data=frame[list(WEATHER_COLUMNS)], step_s=step_s,
                   source=f"{weather.source}, interpolated to {step_s} s by clear-sky index")


def _rescale_blocks(fine: np.ndarray, coarse_mean: np.ndarray) -> np.ndarray:
    """Scale each row of ``fine`` (n, k) so its mean equals ``coarse_mean``; rows with no shape get a flat profile."""
    mean = fine.mean(axis=1)
    shaped = mean > 1e-9
    factor = np.where(shaped, coarse_mean / np.where(shaped, mean, 1.0), 0.0)
    out = fine * factor[:, None]
    flat = ~shaped & (coarse_mean > 0)
    out[flat] = coarse_mean[flat, None]
    return out
