"""The existing DC-coupled arrays as the scenario models them, at the record's own timestamps.

Three kinds of weather drive the same chain (:func:`core.model.pv.module_output`, then the charge controller's
efficiency and output limit): the clear sky of pvlib's Ineichen & Perez model with the Linke turbidity climatology
pvlib ships (Remund et al. 2003), the period's own measured weather (``measured.weather_path``), or the scenario's
typical-year weather. Weather files are read onto the nominal year; a record's interval takes the weather of the
same calendar day and clock time (standard time), and the sun of its own moment.

Arrays are modelled *lossless* (``losses_pct = 0``); a loss percentage is applied afterwards by
:func:`array_output_w`, so that a fit can try any value without recomputing irradiance.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd
import pvlib

from core.model import pv, solar
from core.model import weather as weather_io
from core.scenario import Array, Scenario
from core.timebase import HOURS_PER_YEAR, standard_offset

_MONTH_START_DAY = np.cumsum([0, 31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30])


@dataclass(frozen=True, eq=False)
class ModelledArrays:
    """Per DC-coupled array: controller output without array losses (W, after the controller's efficiency,
    before its output limit), the controller each array feeds and each controller's output limit (W)."""

    lossless_w: dict[str, pd.Series]
    controller_of: dict[str, str]
    limit_w: dict[str, float]
    sun_elevation_deg: pd.Series
    basis: str


def dc_arrays(sc: Scenario) -> list[Array]:
    return [a for a in sc.arrays if a.coupling == "dc"]


def clearsky_weather(index: pd.DatetimeIndex, step_s: int, sc: Scenario,
                     typical: weather_io.Weather | None) -> pd.DataFrame:
    """Ineichen clear-sky GHI, DNI and DHI at the interval midpoints; air temperature and wind of the same hour in
    the typical year (20 °C and 1 m/s without one)."""
    location = pvlib.location.Location(sc.site.latitude, sc.site.longitude, altitude=sc.site.altitude_m)
    mid = index + pd.Timedelta(seconds=step_s / 2)
    with np.errstate(all="ignore"):
        cs = location.get_clearsky(mid, model="ineichen")
    out = pd.DataFrame({k: np.nan_to_num(cs[k].to_numpy(float), nan=0.0).clip(min=0.0) for k in ("ghi", "dni", "dhi")},
                       index=index)
    if typical is not None:
        other = on_record_times(typical, index, sc)
        out["temp_air"], out["wind_speed"] = other["temp_air"].to_numpy(), other["wind_speed"].to_numpy()
    else:
        out["temp_air"], out["wind_speed"] = 20.0, 1.0
    out["pressure"] = pvlib.atmosphere.alt2pres(sc.site.altitude_m)
    return out


def on_record_times(weather: weather_io.Weather, index: pd.DatetimeIndex, sc: Scenario) -> pd.DataFrame:
    """The nominal-year weather of the same calendar day and standard-time clock time as each interval of
    ``index`` (29 February takes 28 February)."""
    timezone = sc.site.timezone or weather_io.timezone_for(sc.site.latitude, sc.site.longitude)
    local = index.tz_convert(standard_offset(timezone))
    month, day = local.month.to_numpy(), np.minimum(local.day.to_numpy(), np.where(local.month == 2, 28, 31))
    day_of_year = _MONTH_START_DAY[month - 1] + day - 1
    seconds = local.hour.to_numpy() * 3600 + local.minute.to_numpy() * 60 + local.second.to_numpy()
    per_day = 86400 // weather.step_s
    pos = np.clip(day_of_year * per_day + seconds // weather.step_s, 0, HOURS_PER_YEAR * 3600 // weather.step_s - 1)
    data = weather.data.iloc[pos]
    return data.set_axis(index)


def model_arrays(sc: Scenario, index: pd.DatetimeIndex, step_s: int, weather_df: pd.DataFrame,
                 basis: str) -> ModelledArrays:
    """Every DC-coupled array through the scenario's chain with no array losses, on ``index`` (UTC starts)."""
    lat, lon, alt = sc.site.latitude, sc.site.longitude, sc.site.altitude_m
    geometry = solar.solar_geometry(index, lat, lon, alt, pressure_pa=weather_df["pressure"].to_numpy(float),
                                    temp_air_c=weather_df["temp_air"].to_numpy(float), step_s=step_s)
    lossless, controller_of, limit = {}, {}, {}
    for array in dc_arrays(sc):
        m = sc.modules[array.module]
        shading = None
        if array.row_pitch_m is not None:
            shading = pv.row_shaded_fraction(geometry.apparent_zenith_deg, geometry.azimuth_deg,
                                             tilt_deg=array.tilt_deg, azimuth_deg=array.azimuth_deg,
                                             length_m=m.length_m, pitch_m=array.row_pitch_m)
        mo = pv.module_output(weather_df, geometry, tilt_deg=array.tilt_deg, azimuth_deg=array.azimuth_deg,
                              mount=array.mount, losses_pct=0.0, pmax_w=m.pmax_w, vmp_v=m.vmp_v, imp_a=m.imp_a,
                              voc_v=m.voc_v, isc_a=m.isc_a, gamma_pmax_pct_per_c=m.gamma_pmax_pct_per_c,
                              beta_voc_pct_per_c=m.beta_voc_pct_per_c, alpha_isc_pct_per_c=m.alpha_isc_pct_per_c,
                              shading_loss=shading)
        c = sc.controllers[array.controller]
        lossless[array.name] = pd.Series(mo.p_dc_w * array.module_count * c.efficiency, index=index)
        controller_of[array.name] = array.controller
        limit[array.controller] = c.max_charge_current_a * sc.battery.nominal_v
    elevation = pd.Series(90.0 - geometry.apparent_zenith_deg, index=index)
    return ModelledArrays(lossless_w=lossless, controller_of=controller_of, limit_w=limit,
                          sun_elevation_deg=elevation, basis=basis)


def array_output_w(model: ModelledArrays, losses_pct: dict[str, float]) -> dict[str, pd.Series]:
    """Each array's modelled controller output (W) with the given losses; arrays sharing a controller are held
    together to its output limit, in proportion to their shares."""
    raw = {name: p * (1.0 - losses_pct[name] / 100.0) for name, p in model.lossless_w.items()}
    out = {}
    for controller, limit in model.limit_w.items():
        members = [n for n, c in model.controller_of.items() if c == controller]
        total = sum(raw[n] for n in members)
        scale = np.minimum(1.0, limit / total.where(total > 0, np.inf))
        out.update({n: raw[n] * scale for n in members})
    return out


def near_limit(model: ModelledArrays, losses_pct: dict[str, float], margin: float = 0.97) -> pd.Series:
    """Intervals when any controller's modelled output reaches ``margin`` of its limit (clipping muddles a fit)."""
    raw = {name: p * (1.0 - losses_pct[name] / 100.0) for name, p in model.lossless_w.items()}
    flags = []
    for controller, limit in model.limit_w.items():
        total = sum(raw[n] for n, c in model.controller_of.items() if c == controller)
        flags.append(total >= margin * limit)
    index = model.sun_elevation_deg.index
    return pd.Series(np.logical_or.reduce(flags), index=index) if flags else pd.Series(False, index=index)
