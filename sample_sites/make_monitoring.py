"""An invented monitoring export for Maple Hollow, reproducible from a fixed random seed.

Run ``python sample_sites/make_monitoring.py`` to rewrite ``sample_sites/maple_hollow/monitoring.csv``: eleven weeks
of spring readings every 15 minutes, in local clock time across the change to daylight saving, with a semicolon
separator and decimal commas, as many logger exports write them. Nothing here is measured data.

How it is made: the sky is pvlib's Ineichen clear sky (with the Linke turbidity pvlib ships) on clear days and a
seeded random share of it on cloudy ones (diffuse split by Erbs); air temperature and wind come from the site's
TMY3 file; the south-roof array is run through pvlib's ModelChain (PVWatts DC, Perez, SAPM cell temperature) with
**13 % array losses** (the scenario assumes 10 %) behind a 97 %-efficient charge controller. A simple zero-export
battery rule gives the state of charge: when the battery is full the PV output is held to the load (curtailed
afternoons); above the outage reserve the grid import is the **standing draw of 38 W** (the scenario assumes 30 W).
A few hours are missing, as when a logger loses its connection.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pvlib

HERE = Path(__file__).resolve().parent
SEED = 14077
LAT, LON, ALT, TZ = 36.1, -79.9, 270.0, "America/New_York"
START, DAYS, STEP_S = "2025-03-01", 77, 900
LOSSES_PCT, STANDING_DRAW_W, CONTROLLER_EFF = 13.0, 38.0, 0.97
PDC0_W, TILT, AZIMUTH = 6 * 410.0, 30.0, 175.0  # six 410 W modules, as in the scenario
USABLE_KWH, RESERVE_PCT = 10.2, 30.0


def weather(index_utc: pd.DatetimeIndex, rng: np.random.Generator) -> pd.DataFrame:
    """Clear or cloudy skies at the interval midpoints, with the TMY3's temperature and wind of the same hour."""
    location = pvlib.location.Location(LAT, LON, altitude=ALT)
    mid = index_utc + pd.Timedelta(seconds=STEP_S / 2)
    cs = location.get_clearsky(mid, model="ineichen")
    sun = location.get_solarposition(mid)
    day = (np.arange(len(index_utc)) * STEP_S) // 86400
    clear = rng.random(DAYS) < 0.45
    scale = np.where(clear[day], 1.0, np.clip(rng.uniform(0.2, 0.8, DAYS)[day]
                                               * rng.uniform(0.6, 1.25, len(index_utc)), 0.0, 1.0))
    ghi = cs["ghi"].to_numpy() * scale
    split = pvlib.irradiance.erbs(ghi, sun["zenith"].to_numpy(), mid.day_of_year.to_numpy())
    tmy, _ = pvlib.iotools.read_tmy3(str(HERE / "maple_hollow" / "723170TYA.CSV"), map_variables=True)
    local = mid.tz_convert(TZ)
    hour = np.clip((local.day_of_year.to_numpy() - 1) * 24 + local.hour.to_numpy(), 0, 8759)
    return pd.DataFrame({
        "ghi": ghi,
        "dni": np.where(clear[day], cs["dni"].to_numpy(), np.nan_to_num(split["dni"])),
        "dhi": np.where(clear[day], cs["dhi"].to_numpy(), np.nan_to_num(split["dhi"])),
        "temp_air": tmy["temp_air"].to_numpy()[hour], "wind_speed": tmy["wind_speed"].to_numpy()[hour]}, index=mid)


def array_dc_w(w: pd.DataFrame) -> np.ndarray:
    """The south roof through pvlib's ModelChain, without losses (W)."""
    system = pvlib.pvsystem.PVSystem(
        surface_tilt=TILT, surface_azimuth=AZIMUTH,
        # Diffuse light weighed by Marion's sky-dome integral of the physical IAM (pvlib.iam.marion_diffuse).
        module_parameters={"pdc0": PDC0_W, "gamma_pdc": -0.0034,
                           "FD": float(pvlib.iam.marion_diffuse("physical", TILT)["sky"])},
        temperature_model_parameters=pvlib.temperature.TEMPERATURE_MODEL_PARAMETERS["sapm"]["close_mount_glass_glass"],
        inverter_parameters={"pdc0": 10 * PDC0_W})
    mc = pvlib.modelchain.ModelChain(system, pvlib.location.Location(LAT, LON, altitude=ALT), aoi_model="physical",
                                     spectral_model="no_loss", dc_model="pvwatts", ac_model="pvwatts",
                                     losses_model="no_loss", transposition_model="perez")
    mc.run_model(w)
    return np.clip(np.nan_to_num(mc.results.dc.to_numpy(float)), 0.0, None)


def record() -> pd.DataFrame:
    rng = np.random.default_rng(SEED)
    local = pd.date_range(START, periods=DAYS * 86400 // STEP_S, freq=f"{STEP_S}s", tz=TZ)
    index = local.tz_convert("UTC")
    potential = array_dc_w(weather(index, rng)) * (1 - LOSSES_PCT / 100) * CONTROLLER_EFF
    hour = local.hour.to_numpy() + local.minute.to_numpy() / 60
    load = (260 + 90 * ((hour > 6.5) & (hour < 8.5)) + 380 * ((hour > 17.5) & (hour < 22))
            + rng.gamma(1.5, 60, len(index)))
    dt_h, cap_wh = STEP_S / 3600, USABLE_KWH * 1000
    soc_wh, rows = 0.6 * cap_wh, []
    for p, l_w in zip(potential, load, strict=True):
        room_w = (cap_wh - soc_wh) / dt_h  # what the battery can still take this interval
        pv = min(p, l_w + room_w)  # zero export: the rest is curtailed
        if soc_wh > RESERVE_PCT / 100 * cap_wh or pv >= l_w:
            grid = STANDING_DRAW_W + rng.normal(0, 2.5)
            soc_wh = min(cap_wh, max(0.0, soc_wh + (pv - l_w) * dt_h))
        else:  # at the reserve the grid carries the load
            grid = l_w - pv + STANDING_DRAW_W
        rows.append((pv, grid, 100 * soc_wh / cap_wh))
    pv, grid, soc = np.array(rows).T
    frame = pd.DataFrame({"pv_yield_kwh": pv * dt_h / 1000, "grid_import_kwh": grid * dt_h / 1000,
                          "consumption_kwh": load * dt_h / 1000, "battery_soc_pct": soc.round(1)}, index=local)
    for start in rng.integers(0, len(frame) - 16, 4):  # the logger lost a few hours
        frame = frame.drop(frame.index[start:start + int(rng.integers(4, 16))], errors="ignore")
    return frame


def main() -> None:
    frame = record()
    frame.index = frame.index.strftime("%Y-%m-%d %H:%M")
    frame.index.name = "timestamp"
    path = HERE / "maple_hollow" / "monitoring.csv"
    frame.to_csv(path, sep=";", decimal=",", float_format="%.4f")
    print(f"wrote {path.relative_to(HERE.parent)}")


if __name__ == "__main__":
    main()
