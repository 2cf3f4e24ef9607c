"""Small hand-built scenarios and synthetic sites for the compare, sweep and check tests.

A synthetic site is a few clear-sky days (pvlib's simplified Solis clear-sky model, Ineichen 2008) with the sun
from the project's own solar geometry and a load given as numbers, so that the tests run in well under a second
and the flows can be reasoned about by hand.
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pvlib

from core.model import solar
from core.model import weather as weather_io
from core.scenario import parse_scenario
from core.simulate import SiteData

LATITUDE, LONGITUDE, ALTITUDE_M = 40.0, -105.0, 1600.0
TZ = dt.timezone(dt.timedelta(hours=-7))


def scenario_text(*, battery_kwh: float = 10.0, initial_pct: float = 30.0, reserve_pct: float = 30.0,
                  existing_modules: int = 1, count: int = 2, export_control: str = "none",
                  micro_ac_w: float = 450.0, extra: str = "") -> str:
    """A zero-export system: one small DC-coupled array on a controller, a battery, an inverter-charger with a
    flat 94 % efficiency, and an [expansion] that can go either way (microinverter 96.5 %, controller 97 %)."""
    return f"""
schema = 1
name = "hand-built"

[site]
latitude = {LATITUDE}
longitude = {LONGITUDE}
altitude_m = {ALTITUDE_M}
timezone = "America/Denver"

[weather]
source = "monthly"
ghi_kwh_m2_day = [5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5]
temp_air_c = [10, 10, 10, 10, 10, 10, 10, 10, 10, 10, 10, 10]

[modules.m400]
pmax_w = 400
vmp_v = 34.0
imp_a = 11.8
voc_v = 41.0
isc_a = 12.5
gamma_pmax_pct_per_c = -0.35
beta_voc_pct_per_c = -0.27
alpha_isc_pct_per_c = 0.05
length_m = 1.7
width_m = 1.1

[battery]
usable_kwh = {battery_kwh}
nominal_v = 48
max_charge_a = 100
max_discharge_a = 100
roundtrip_efficiency = 0.9
reserve_pct = {reserve_pct}
floor_pct = 10
initial_pct = {initial_pct}

[inverter_charger]
rating_w = 5000
efficiency = 0.94
charger_rating_w = 3000
charger_efficiency = 0.93
idle_w = 20

[controllers.main]
max_pv_voltage_v = 150
mppt_min_v = 30
mppt_max_v = 145
max_input_current_a = 100
max_charge_current_a = 100
efficiency = 0.97

[microinverters.mi]
ac_rating_w = {micro_ac_w}
max_dc_input_w = 600
mppt_min_v = 20
mppt_max_v = 55
max_input_voltage_v = 60
max_input_current_a = 20
efficiency = 0.965
inputs = 1

[[arrays]]
name = "existing"
coupling = "dc"
module = "m400"
tilt_deg = 30
azimuth_deg = 180
controller = "main"
modules_per_string = {existing_modules}
strings = 1

[grid]
export_allowed = false
standing_draw_w = 30
metering = "site"
ac_export_control = "{export_control}"
recharge_reserve_from_grid = true

[expansion]
module = "m400"
count = {count}
tilt_deg = 20
azimuth_deg = 240
microinverter = "mi"
controller = "main"
modules_per_string = 2
cost_ac = 900
cost_dc = 800

[tariff]
currency = "EUR"
import_price_per_kwh = 0.30
export_price_per_kwh = 0.0
escalation_pct = 2
discount_pct = 3
years = 20
degradation_pct_per_year = 0.5
{extra}
"""


def hand_scenario(**kw):
    return parse_scenario(scenario_text(**kw), file="hand-built.toml")


def synthetic_site(*, days: int = 4, start: str = "2023-06-10", step_s: int = 3600, load_backed_w=2000.0,
                   load_grid_only_w=0.0, grid_up=True, temp_air_c: float = 25.0) -> SiteData:
    """Clear-sky days at the hand-built site; loads and grid availability as numbers or per-step arrays."""
    index = pd.date_range(pd.Timestamp(start, tz=TZ), periods=days * 86400 // step_s,
                          freq=pd.Timedelta(seconds=step_s))
    mid = index + pd.Timedelta(seconds=step_s / 2)
    loc = pvlib.location.Location(LATITUDE, LONGITUDE, tz="Etc/GMT+7", altitude=ALTITUDE_M)
    cs = loc.get_clearsky(mid, model="simplified_solis")
    n = len(index)
    pressure = pvlib.atmosphere.alt2pres(ALTITUDE_M)
    data = pd.DataFrame({"ghi": cs["ghi"].to_numpy(), "dni": cs["dni"].to_numpy(), "dhi": cs["dhi"].to_numpy(),
                         "temp_air": np.full(n, temp_air_c), "wind_speed": np.full(n, 1.0),
                         "pressure": np.full(n, pressure)}, index=index).fillna(0.0)
    weather = weather_io.Weather(data=data, step_s=step_s, source="synthetic clear sky", latitude=LATITUDE,
                                 longitude=LONGITUDE, altitude_m=ALTITUDE_M)
    geometry = solar.solar_geometry(index, LATITUDE, LONGITUDE, ALTITUDE_M, pressure_pa=data["pressure"].to_numpy(),
                                    temp_air_c=data["temp_air"].to_numpy(), step_s=step_s)

    def series(x, dtype=float):
        return np.ascontiguousarray(np.broadcast_to(np.asarray(x, dtype=dtype), (n,)))

    return SiteData(index=index, step_s=step_s, timezone="America/Denver", latitude=LATITUDE, longitude=LONGITUDE, weather=weather, geometry=geometry,
                    load_backed_w=series(load_backed_w), load_grid_only_w=series(load_grid_only_w),
                    grid_up=series(grid_up, bool))
