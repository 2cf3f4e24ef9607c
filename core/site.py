"""The orchestrator's per-site work, done once per site whatever the panel counts: weather, the sun, the loads
(measured or built) and the outages, on one step (:func:`prepare_site` → :class:`SiteData`).
"""

from __future__ import annotations

import dataclasses
import pathlib
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from core.errors import InputError
from core.model import outages, solar, sunshine
from core.model import weather as weather_io
from core.model.loads import build_year, read_load_csv
from core.model.weather import monthly_weather
from core.scenario import Scenario
from core.timebase import nominal_index, standard_offset


@dataclass(frozen=True)
class SiteData:
    """Everything about a site that no panel count or orientation changes."""

    index: pd.DatetimeIndex
    step_s: int
    timezone: str
    latitude: float
    longitude: float
    weather: weather_io.Weather
    geometry: solar.SolarGeometry
    load_backed_w: np.ndarray
    load_grid_only_w: np.ndarray
    grid_up: np.ndarray
    load_notes: dict = field(default_factory=dict)
    #: What the importers noticed and accepted (weather, load files), in words; shown on the page and on stderr.
    warnings: tuple[str, ...] = ()

    @property
    def dt_h(self) -> float:
        return self.step_s / 3600.0

    @property
    def daylight(self) -> np.ndarray:
        return self.geometry.apparent_zenith_deg < 90.0

    @property
    def key(self) -> tuple:
        """What tells one site's time base from another's (for caches shared by mistake)."""
        return (self.latitude, self.longitude, self.timezone, self.step_s, len(self.index), self.weather.source)


def site_timezone(sc: Scenario) -> str:
    return sc.site.timezone or weather_io.timezone_for(sc.site.latitude, sc.site.longitude)


def load_weather(sc: Scenario, tz=None) -> weather_io.Weather:
    """The scenario's weather on the nominal year in the site's standard time (file or twelve monthly figures)."""
    tz = tz or standard_offset(site_timezone(sc))
    w = sc.weather
    if w.source == "monthly":
        try:
            return monthly_weather(w.ghi_kwh_m2_day, w.temp_air_c, latitude=sc.site.latitude,
                                   longitude=sc.site.longitude, altitude_m=sc.site.altitude_m, tz=tz, seed=w.seed)
        except ValueError as exc:  # the generator's physics limits (ranges are the schema's): bad input here
            where, _, message = str(exc).partition(": ")
            raise InputError(message or where, where=where if message else "weather",
                             hint="give the monthly mean of DAILY irradiation on a horizontal plane in "
                                  "kWh/m2/day, January first") from None
    path = sc.resolve(w.path, "weather.path")
    return weather_io.read_weather_file(path, fmt=w.format, tz=tz, latitude=sc.site.latitude,
                                        longitude=sc.site.longitude, altitude_m=sc.site.altitude_m,
                                        max_distance_km=w.max_distance_km)


#: Simulation steps the engine offers (s); a finer source is simulated at the nearest of these not finer than it.
STEPS_S = (60, 300, 600, 900, 1800, 3600)


def _measured(sc: Scenario, path_key: str, column_key: str, timezone: str):
    """One measured load channel as read from its file (None when the scenario has none)."""
    path = getattr(sc.load, path_key)
    if path is None:
        return None
    return read_load_csv(sc.resolve(path, f"load.{path_key}"), column=getattr(sc.load, column_key), unit=sc.load.unit,
                         timezone=sc.load.timezone or timezone, latitude=sc.site.latitude, longitude=sc.site.longitude)


def _load_year(sc: Scenario, measured, path_key: str, monthly_key: str, step_s: int, tz) -> tuple[np.ndarray, dict]:
    """One load channel on the simulation's time base: measured (completed by the year builder), a flat profile
    from monthly totals, or zeros when the scenario has neither."""
    index = nominal_index(step_s, tz)
    monthly = getattr(sc.load, monthly_key)
    if measured is None:
        if monthly is None:
            return np.zeros(len(index)), {}
        hours = index.to_series().groupby(index.month).size() * step_s / 3600.0
        flat = [0.0 if m is None else m * 1000.0 / hours[i + 1] for i, m in enumerate(monthly)]
        return np.asarray(flat)[index.month - 1], {"method": "flat power from monthly totals"}
    try:
        series, report = build_year(measured.power_w, step_s=step_s, tz=tz, monthly_kwh=monthly)
    except InputError as exc:
        if exc.file is None:
            raise InputError(exc.message, file=getattr(sc.load, path_key), where=exc.where, hint=exc.hint) from exc
        raise
    return series.to_numpy(dtype=float), {"quality": measured.quality, "year": report}


def simulation_step_s(requested_s: int | None, weather_step_s: int, load_steps_s: list[int]) -> int:
    """The step to simulate at: the scenario's choice; else the finer of weather and the load's own step (a
    15-minute meter runs at 15 minutes on hourly weather, whose hours are then filled with synthetic minutes);
    else the weather's own step. Hourly stays one choice away (``[simulation] step_s = 3600``)."""
    if requested_s:
        return int(requested_s)
    if load_steps_s:
        finest = min([weather_step_s, *load_steps_s])
        return max([s for s in STEPS_S if s <= finest] or [STEPS_S[0]])
    return weather_step_s


def _synthetic_sun(sc: Scenario, coarse: weather_io.Weather, fine: weather_io.Weather, sun: pd.DataFrame,
                   step_s: int) -> weather_io.Weather:
    """The fine weather with its irradiance replaced by synthetic minutes that keep each coarse interval's mean
    (:func:`core.model.sunshine.synthetic_irradiance`); temperature, wind and pressure stay interpolated."""
    lat, lon, alt = sc.site.latitude, sc.site.longitude, sc.site.altitude_m
    index = fine.data.index
    cs = weather_io.clearsky_ghi(index, step_s, lat, lon, alt, solpos=sun)
    syn = sunshine.synthetic_irradiance(coarse.data["ghi"].to_numpy(), coarse.data["dhi"].to_numpy(), cs,
                                        sun["zenith"].to_numpy(), index, per_interval=coarse.step_s // step_s,
                                        step_s=step_s, seed=sc.weather.seed)
    data = fine.data.assign(ghi=syn["ghi"], dni=syn["dni"], dhi=syn["dhi"])
    source = f"{coarse.source}, synthetic minutes to {step_s} s (two-state clear-sky index chain, seed {sc.weather.seed})"
    return dataclasses.replace(fine, data=data, source=source)


def prepare_site(sc: Scenario) -> SiteData:
    """Weather, sun, loads and outages on one time base: the expensive, orientation-free part."""
    timezone = site_timezone(sc)
    tz = standard_offset(timezone)
    weather = load_weather(sc, tz)
    measured_b = _measured(sc, "path", "column", timezone)
    measured_g = _measured(sc, "grid_only_path", "grid_only_column", timezone)
    load_steps = [m.quality.interval_s for m in (measured_b, measured_g) if m is not None]
    step_s = simulation_step_s(sc.simulation.step_s, weather.step_s, load_steps)
    lat, lon, alt = sc.site.latitude, sc.site.longitude, sc.site.altitude_m
    # The sun is computed once (SPA is the costliest step of a fine year); resampling and the geometry share it.
    index = nominal_index(step_s, tz)
    sun = weather_io.sun_at_midpoints(index, step_s, lat, lon, alt)
    if step_s != weather.step_s:
        coarse = weather
        weather = weather_io.interpolate_weather(weather, step_s, latitude=lat, longitude=lon, altitude_m=alt,
                                                 solpos=sun)
        if step_s < coarse.step_s and sc.simulation.sub_hourly_sun == "synthetic":
            weather = _synthetic_sun(sc, coarse, weather, sun, step_s)
    index = weather.data.index
    geometry = solar.solar_geometry(index, lat, lon, alt, pressure_pa=weather.data["pressure"].to_numpy(),
                                    temp_air_c=weather.data["temp_air"].to_numpy(), step_s=step_s, position=sun)
    load_b, notes_b = _load_year(sc, measured_b, "path", "monthly_kwh", step_s, tz)
    load_g, notes_g = _load_year(sc, measured_g, "grid_only_path", "grid_only_monthly_kwh", step_s, tz)
    intervals = []
    if sc.grid.outages_path:
        intervals += outages.read_outages_csv(sc.resolve(sc.grid.outages_path, "grid.outages_path"), tz)
    if sc.grid.random_outages is not None:
        r = sc.grid.random_outages
        intervals += outages.random_outages(index, per_year=r.per_year, mean_hours=r.mean_hours, seed=r.seed,
                                            month_weights=r.month_weights)
    return SiteData(index=index, step_s=step_s, timezone=timezone, latitude=sc.site.latitude,
                    longitude=sc.site.longitude, weather=weather, geometry=geometry,
                    load_backed_w=load_b, load_grid_only_w=load_g, grid_up=outages.grid_up_mask(index, intervals),
                    load_notes={"backed_up": notes_b, "grid_only": notes_g},
                    warnings=_importer_warnings(sc, weather, measured_b, measured_g))


def _importer_warnings(sc: Scenario, weather, *measured) -> tuple[str, ...]:
    """Every importer warning of a site, each naming its file."""
    found = list(weather.warnings)
    for key, load in zip(("path", "grid_only_path"), measured, strict=True):
        if load is not None:
            name = pathlib.Path(getattr(sc.load, key)).name
            found += [f"load file {name}: {text}" for text in load.quality.warnings]
    return tuple(dict.fromkeys(found))

