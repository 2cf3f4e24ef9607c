"""Facts of the trade that a whole-year run must reproduce (common practice), on real TMY3 weather."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from core.scenario import parse_scenario
from core.simulate import simulate

SITE = Path(__file__).resolve().parents[1] / "sample_sites" / "maple_hollow"


def _scenario(arrays: str, *, extra: str = "", battery_kwh: float = 10.0):
    return parse_scenario(f"""
name = "trade facts"
[site]
latitude = 36.1
longitude = -79.9
altitude_m = 270
timezone = "America/New_York"
[weather]
path = "723170TYA.CSV"
format = "tmy3"
[load]
path = "load_backed_up.csv"
column = "power_w"
unit = "W"
[modules.m430]
pmax_w = 430
vmp_v = 33.0
imp_a = 13.0
voc_v = 39.6
isc_a = 13.8
gamma_pmax_pct_per_c = -0.34
beta_voc_pct_per_c = -0.25
[modules.m410]
pmax_w = 410
vmp_v = 34.2
imp_a = 12.0
voc_v = 41.3
isc_a = 12.7
[battery]
usable_kwh = {battery_kwh}
nominal_v = 51.2
max_charge_a = 200
max_discharge_a = 200
[inverter_charger]
rating_w = 8000
charger_rating_w = 6000
[controllers.big]
max_pv_voltage_v = 500
mppt_min_v = 60
mppt_max_v = 450
max_input_current_a = 200
max_charge_current_a = 400
[microinverters.mi350]
ac_rating_w = 350
max_dc_input_w = 500
mppt_min_v = 22
mppt_max_v = 48
max_input_voltage_v = 60
max_input_current_a = 16
efficiency = 0.965
{arrays}
[grid]
standing_draw_w = 30
{extra}
""", base_dir=SITE)


def test_standing_draw_is_imported_every_month_however_much_dc_pv():
    # Common practice: a zero-export controller that holds a standing draw of about 30 W imports at least
    # 30 W × hours in every month, however much PV there is — here 40 modules (16 kW) of DC-coupled PV on a
    # house whose load never falls below the standing draw.
    sc = _scenario("""
[[arrays]]
name = "huge"
coupling = "dc"
module = "m410"
tilt_deg = 30
azimuth_deg = 180
controller = "big"
modules_per_string = 8
strings = 5
""", battery_kwh=40.0)
    sim = simulate(sc)
    steps = sim.steps
    assert steps["load_backed_w"].min() > 30.0
    hours_up = steps["grid_up"].groupby(steps.index.month).sum() * sim.site.dt_h
    imported_kwh = (steps["grid_import_w"] * sim.site.dt_h / 1000.0).groupby(steps.index.month).sum()
    assert np.all(imported_kwh >= 0.030 * hours_up - 1e-9)
    # …and the PV is far larger than the load: most of it is curtailed, none exported.
    e = sim.results.energy_kwh
    assert e["curtailed"] > 0.3 * e["pv_potential"]
    assert e["exported"] == pytest.approx(0.0, abs=1e-9)


def test_a_430_w_module_on_a_350_va_microinverter_peaks_near_its_rating_in_summer():
    # Common practice: one ~430 W module on a ~350 VA microinverter, facing the equator at a moderate tilt,
    # gives an hourly AC peak of roughly 300–350 W in summer (Greensboro NC TMY3, pvlib's data folder).
    sc = _scenario("""
[[arrays]]
name = "one panel"
coupling = "ac"
side = "backed_up"
module = "m430"
microinverter = "mi350"
modules = 1
tilt_deg = 30
azimuth_deg = 180
""")
    sim = simulate(sc)
    ac = sim.steps["ac_backed_out_w"]
    summer = ac[ac.index.month.isin([6, 7, 8])]
    assert 300.0 <= summer.max() <= 350.0
    # Hourly means rarely sit at the rating: the peak hour is clipped, most summer noons are not.
    noon = summer[summer.index.hour == 12]
    assert np.median(noon) < 350.0
