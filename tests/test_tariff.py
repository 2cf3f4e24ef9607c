"""Money by the hour: time-of-use prices on the local clock (daylight saving included), holidays, the bill,
and what the standing and idle draws cost."""

from __future__ import annotations

import dataclasses
import datetime as dt
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from core.model import tariff
from core.scenario import load_scenario
from core.scenario.schema import TariffPeriod
from core.simulate import OrientationCache, prepare_site, simulate

SAMPLE = Path(__file__).resolve().parents[1] / "sample_sites" / "maple_hollow" / "scenario.toml"
EST = dt.timezone(dt.timedelta(hours=-5))
PEAK = TariffPeriod(name="evening peak", price_per_kwh=0.32, hours=(16, 21), days="weekdays")


def test_a_week_with_the_change_to_daylight_saving_worked_by_hand():
    # Wednesday 8 March to Tuesday 14 March 2023, hourly, in New York; daylight saving starts on Sunday 12 March
    # at 02:00. The simulation's steps are in standard time (EST). Import is 1 kW every hour, 3 kW in the hour
    # 15:00–16:00 EST. Peak: 16–21 local clock time on weekdays at 0.32; otherwise 0.15.
    #   Wed–Fri (EST, clock = standard): the 3 kW hour is 15:00 on the clock, off-peak; peak hours 16–20 hold
    #   5 × 1 kWh a day → 15 kWh.
    #   Sat, Sun: no peak.
    #   Mon, Tue (EDT, clock = standard + 1 h): the 3 kW hour is 16:00 on the clock, peak; the peak hours are
    #   15–19 EST: 3 + 4 × 1 = 7 kWh a day → 14 kWh.
    #   Energy 7 × 24 × 1 + 7 × 2 = 182 kWh; peak 29 kWh × 0.32 = 9.28; off-peak 153 kWh × 0.15 = 22.95;
    #   the week's import cost is 32.23.
    index = pd.date_range("2023-03-08 00:00", periods=7 * 24, freq="h", tz=EST)
    imp = np.where(index.hour == 15, 3000.0, 1000.0)
    clock = tariff.local_clock(index, "America/New_York")
    price = tariff.import_prices(clock, base_price=0.15, periods=(PEAK,), holidays_country=None)
    assert float(np.sum(imp * (price == 0.32))) / 1000.0 == pytest.approx(29.0)
    bill = tariff.bill(imp, np.zeros(len(imp)), price, dt_h=1.0, export_price_per_kwh=0.0, fixed_per_month=12.0)
    assert bill["import_cost"] == pytest.approx(32.23)
    assert bill["fixed_charges"] == pytest.approx(144.0)  # 12 months × 12.0


def test_a_holiday_is_priced_as_a_weekend_day():
    # Tuesday 4 July 2023 (Independence Day, a US federal holiday): 17:00 on the clock is peak on an ordinary
    # Tuesday and off-peak with holidays = "US".
    index = pd.DatetimeIndex([pd.Timestamp("2023-07-04 16:00", tz=EST), pd.Timestamp("2023-07-11 16:00", tz=EST)])
    clock = tariff.local_clock(index, "America/New_York")
    assert list(clock.hour) == [17, 17]
    plain = tariff.import_prices(clock, base_price=0.15, periods=(PEAK,), holidays_country=None)
    us = tariff.import_prices(clock, base_price=0.15, periods=(PEAK,), holidays_country="US")
    assert list(plain) == [0.32, 0.32] and list(us) == [0.15, 0.32]


def test_first_matching_period_wins_and_windows_wrap_past_midnight():
    night = TariffPeriod(name="night", price_per_kwh=0.08, hours=(22, 6))
    index = pd.date_range("2023-01-02 00:00", periods=24, freq="h", tz="UTC")
    price = tariff.import_prices(index, base_price=0.2, periods=(night, PEAK), holidays_country=None)
    assert list(price[:6]) == [0.08] * 6 and price[22] == 0.08 and price[16] == 0.32 and price[12] == 0.2


def test_standing_and_idle_draw_costs_are_the_difference_of_two_years():
    # Definition checked against two full runs: the year as it is minus the same year with no standing draw.
    from core.analyses.running_costs import money

    sc = load_scenario(SAMPLE)
    site, cache = prepare_site(sc), OrientationCache()
    sim = simulate(sc, site, cache)
    m = money(sim)
    none = simulate(sc.replace(grid=dataclasses.replace(sc.grid, standing_draw_w=0.0)), site, cache)
    diff_kwh = sim.results.energy_kwh["grid_import"] - none.results.energy_kwh["grid_import"]
    assert m["standing_draw_kwh"] == pytest.approx(diff_kwh, abs=0.01)
    assert m["standing_draw_cost"] == pytest.approx(diff_kwh * sc.tariff.import_price_per_kwh, abs=0.01)
    idle = simulate(sc.replace(inverter_charger=dataclasses.replace(sc.inverter_charger, idle_w=0.0)), site, cache)
    assert m["idle_kwh"] == pytest.approx(sim.results.energy_kwh["grid_import"] - idle.results.energy_kwh["grid_import"],
                                          abs=0.01)
    assert m["import_cost"] == pytest.approx(sim.results.energy_kwh["grid_import"] * sc.tariff.import_price_per_kwh,
                                             abs=0.01)


def test_grid_charging_by_the_clock_is_priced():
    # Cheap nights (0.05 from 1 to 5) against 0.40 otherwise: lifting the battery at night replaces dear import.
    from core.analyses.running_costs import charge_window_value
    from core.scenario.schema import ChargeWindow

    sc = load_scenario(SAMPLE)
    night = TariffPeriod(name="night", price_per_kwh=0.05, hours=(1, 5))
    sc = sc.replace(grid=dataclasses.replace(sc.grid, charge_window=ChargeWindow(hours=(1, 5), target_pct=90.0)),
                    tariff=dataclasses.replace(sc.tariff, import_price_per_kwh=0.40, periods=(night,)))
    v = charge_window_value(simulate(sc))
    assert v["extra_import_kwh"] > 0  # charging losses: more energy is bought …
    assert v["pays"] and v["cost"] < 0  # … but at a quarter of the price, so it pays


def test_the_comparison_says_whether_grid_charging_pays():
    from core.analyses.compare import compare
    from core.scenario.schema import ChargeWindow

    sc = load_scenario(SAMPLE)
    sc = sc.replace(grid=dataclasses.replace(sc.grid, charge_window=ChargeWindow(hours=(1, 5), target_pct=60.0)))
    text = compare(sc).verdict.text
    assert "Grid charging from 1:00 to 5:00 up to 60 %" in text and "pay" in text
