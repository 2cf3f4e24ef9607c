"""A synthetic monitoring record for the calibration tests, made with pvlib's own ModelChain (not the project's
chain): known array losses, a known standing draw, a full battery that curtails afternoons, cloudy days and gaps.

Weather (optionally written as a year-long CSV for ``measured.weather_path``): pvlib's Ineichen clear sky (shipped Linke turbidity) on clear days, scaled down with Erbs' diffuse split on
cloudy ones; air temperature and wind of the same hour in pvlib's Greensboro TMY3 file. Timestamps are written in
local clock time (America/New_York, across no DST change in the chosen period) as interval starts.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd
import pvlib

TMY3 = Path(pvlib.__file__).parent / "data" / "723170TYA.CSV"
LAT, LON, ALT, TZ = 36.1, -79.9, 270.0, "America/New_York"


@dataclass
class Truth:
    losses_pct: float
    standing_draw_w: float
    curtailed: pd.Series  # per interval (UTC starts): the output was held back
    frame: pd.DataFrame  # the record as written (UTC index)


def sky_weather(index_utc: pd.DatetimeIndex, step_s: int, ghi_scale: np.ndarray) -> pd.DataFrame:
    """Weather at the interval midpoints: Ineichen clear sky scaled by ``ghi_scale`` (Erbs split where < 1), air
    temperature and wind of the same hour in the TMY3 file."""
    location = pvlib.location.Location(LAT, LON, altitude=ALT, tz="UTC")
    mid = index_utc + pd.Timedelta(seconds=step_s / 2)
    cs = location.get_clearsky(mid, model="ineichen")
    sun = location.get_solarposition(mid)
    ghi = cs["ghi"].to_numpy() * ghi_scale
    split = pvlib.irradiance.erbs(ghi, sun["zenith"].to_numpy(), mid.day_of_year.to_numpy())
    clear = ghi_scale >= 0.999
    dni = np.where(clear, cs["dni"].to_numpy(), np.nan_to_num(split["dni"]))
    dhi = np.where(clear, cs["dhi"].to_numpy(), np.nan_to_num(split["dhi"]))
    tmy, _ = pvlib.iotools.read_tmy3(str(TMY3), map_variables=True)
    local = mid.tz_convert(TZ)
    hour_of_year = np.clip((local.day_of_year.to_numpy() - 1) * 24 + local.hour.to_numpy(), 0, 8759)
    return pd.DataFrame({"ghi": ghi, "dni": dni, "dhi": dhi,
                         "temp_air": tmy["temp_air"].to_numpy()[hour_of_year],
                         "wind_speed": tmy["wind_speed"].to_numpy()[hour_of_year]}, index=mid)


def modelchain_dc_w(weather: pd.DataFrame, index_utc: pd.DatetimeIndex, *, tilt: float, azimuth: float,
                    pdc0_w: float, gamma: float) -> pd.Series:
    """Array DC power (W, lossless) from pvlib's ModelChain on ``weather`` (indexed by interval midpoints)."""
    location = pvlib.location.Location(LAT, LON, altitude=ALT, tz="UTC")
    system = pvlib.pvsystem.PVSystem(
        surface_tilt=tilt, surface_azimuth=azimuth,
        # ModelChain weighs diffuse light by the module's FD; Marion's sky-dome integral of the same physical IAM
        # (Solar Energy 147 (2017) 344-348, pvlib.iam.marion_diffuse) is the reflection loss a module has on it.
        module_parameters={"pdc0": pdc0_w, "gamma_pdc": gamma,
                           "FD": float(pvlib.iam.marion_diffuse("physical", tilt)["sky"])},
        temperature_model_parameters=pvlib.temperature.TEMPERATURE_MODEL_PARAMETERS["sapm"]["close_mount_glass_glass"],
        inverter_parameters={"pdc0": 10 * pdc0_w})
    mc = pvlib.modelchain.ModelChain(system, location, aoi_model="physical", spectral_model="no_loss",
                                     dc_model="pvwatts", ac_model="pvwatts", losses_model="no_loss",
                                     transposition_model="perez")
    mc.run_model(weather)
    return pd.Series(np.clip(np.nan_to_num(mc.results.dc.to_numpy(float)), 0, None), index=index_utc)


def _scale(n_days: int, per_day: int, clear_share: float, rng: np.random.Generator) -> np.ndarray:
    """Share of the clear sky per interval: 1 on clear days, a random day level with variation on others."""
    clear_day = rng.random(n_days) < clear_share
    day_level = np.where(clear_day, 1.0, rng.uniform(0.25, 0.8, n_days))
    day = np.arange(n_days * per_day) // per_day
    scale = np.clip(day_level[day] * rng.uniform(0.6, 1.2, day.size), 0.0, 1.0)
    scale[clear_day[day]] = 1.0
    return scale


def make_record(start: str, days: int, *, losses_pct: float, standing_draw_w: float, seed: int = 1,
                step_s: int = 900, clear_share: float = 0.5, pdc0_w: float = 2460.0, controller_eff: float = 0.97,
                usable_kwh: float = 10.2, reserve_pct: float = 30.0, gaps: int = 3,
                weather_csv: Path | None = None) -> Truth:
    """A record of ``days`` days of PV (kWh per interval), grid import, load and SOC, as a monitoring export."""
    rng = np.random.default_rng(seed)
    local = pd.date_range(start, periods=days * 86400 // step_s, freq=f"{step_s}s", tz=TZ)
    index = local.tz_convert("UTC")
    if weather_csv is None:
        weather = sky_weather(index, step_s, _scale(days, 86400 // step_s, clear_share, rng))
    else:  # a whole year of the period's weather, written for measured.weather_path; the record takes its days
        year = pd.date_range("2023-01-01", periods=365 * 86400 // step_s, freq=f"{step_s}s", tz="Etc/GMT+5")
        full = sky_weather(year.tz_convert("UTC"), step_s, _scale(365, 86400 // step_s, clear_share, rng))
        out = full.round(2).set_axis(year.tz_localize(None).strftime("%Y-%m-%d %H:%M"))
        out.rename_axis("timestamp").to_csv(weather_csv)
        weather = full.reindex(index + pd.Timedelta(seconds=step_s / 2))
    potential = modelchain_dc_w(weather, index, tilt=30, azimuth=175, pdc0_w=pdc0_w, gamma=-0.0034)
    potential = potential * (1 - losses_pct / 100) * controller_eff
    hour = local.hour.to_numpy() + local.minute.to_numpy() / 60
    load = 350 + 250 * ((hour > 17) & (hour < 22)) + rng.normal(0, 30, len(index)).clip(-100, 100)
    dt_h = step_s / 3600
    cap_wh = usable_kwh * 1000
    soc_wh = 0.5 * cap_wh
    pv, grid, soc, curtailed = [], [], [], []
    for p, load_w in zip(potential.to_numpy(), load, strict=True):
        held = False
        if soc_wh >= cap_wh - 1e-6 and p > load_w:  # full battery, zero export: the PV follows the load
            p_out, held = load_w, True
        else:
            p_out = min(p, load_w + (cap_wh - soc_wh) / dt_h) if p > load_w else p
        net = p_out - load_w
        if soc_wh > reserve_pct / 100 * cap_wh or net > 0:
            g = standing_draw_w + rng.normal(0, 3)
            soc_wh = min(cap_wh, max(0.0, soc_wh + (net + g - standing_draw_w) * dt_h))
        else:  # at the reserve: the grid carries the load
            g = load_w - p_out + standing_draw_w
        pv.append(p_out)
        grid.append(g)
        soc.append(100 * soc_wh / cap_wh)
        curtailed.append(held)
    frame = pd.DataFrame({"pv_kwh": np.array(pv) * dt_h / 1000, "grid_kwh": np.array(grid) * dt_h / 1000,
                          "load_kwh": load * dt_h / 1000, "soc_pct": np.round(soc, 1)}, index=index)
    for _ in range(gaps):  # a few hours the logger lost
        at = rng.integers(0, len(frame) - 20)
        frame.iloc[at:at + int(rng.integers(4, 16))] = np.nan
    return Truth(losses_pct=losses_pct, standing_draw_w=standing_draw_w,
                 curtailed=pd.Series(curtailed, index=index), frame=frame)


def write_export(frame: pd.DataFrame, path: Path, *, decimal_comma: bool = False) -> Path:
    """Write the record as a monitoring export: local clock time, ';' and a decimal comma when asked; rows whose
    values are all missing are left out (the logger wrote nothing)."""
    out = frame.dropna(how="all").copy()
    out.index = out.index.tz_convert(TZ).strftime("%Y-%m-%d %H:%M")
    out.index.name = "time"
    if decimal_comma:
        out.to_csv(path, sep=";", decimal=",", float_format="%.7f")
    else:
        out.to_csv(path, float_format="%.7f")
    return path
