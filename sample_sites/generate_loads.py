"""Invented household loads for the sample sites, reproducible from a fixed random seed.

Run ``python sample_sites/generate_loads.py`` to rewrite every sample site's load files. Each
household is a made-up mix of appliances (standing loads, a cycling fridge and freezer, lighting
that follows daylight, cooking, a home office, seasonal heating or cooling, and on the grid-only
channel bigger loads such as a water heater, a clothes dryer or an EV). Nothing here is measured
data; the sites exist to exercise the simulator and the importer.
"""

from __future__ import annotations

import argparse
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

HERE = Path(__file__).resolve().parent


@dataclass(frozen=True)
class Household:
    folder: str
    timezone: str
    start: str
    end: str
    step: str  # pandas frequency of the written file
    seed: int
    standing_w: float  # network, standby, circulation: on all the time
    fridge_w: float
    office_w: float  # weekday daytime
    cooking_w: float
    lighting_w: float
    heating_w: float  # backed-up heating (blower, small heat pump) at the coldest time of year
    cooling_w: float  # grid-only cooling at the hottest time of year
    summer_peak_doy: int = 200  # day of year of the hottest weather
    water_heater_w: float = 0.0  # grid-only
    dryer_w: float = 0.0  # grid-only, some evenings
    ev_w: float = 0.0  # grid-only, some nights
    write_as: str = "power_w"  # "power_w", "power_kw", "energy_kwh" (per interval) or "register_kwh"
    separator: str = ","
    decimal: str = "."
    gaps: tuple[tuple[str, str], ...] = field(default=())  # periods left out of the file (logger offline)


def household_load(h: Household) -> pd.DataFrame:
    """Backed-up and grid-only mean power (W) on the household's own time grid, in local time."""
    rng = np.random.default_rng(h.seed)
    # Real local clock times: the spring-forward hour does not exist, the autumn hour comes twice.
    index = pd.date_range(pd.Timestamp(h.start, tz=h.timezone), pd.Timestamp(h.end, tz=h.timezone), freq=h.step,
                          inclusive="left")
    n = len(index)
    hour = index.hour.to_numpy() + index.minute.to_numpy() / 60.0
    doy = index.day_of_year.to_numpy()
    weekday = index.day_of_week.to_numpy() < 5
    days = (index.normalize() - index[0].normalize()).days.to_numpy()
    n_days = days.max() + 1
    day_factor = rng.lognormal(0.0, 0.18, n_days)[days]  # some days are busier than others
    season = np.cos(2 * np.pi * (doy - h.summer_peak_doy) / 365.0)  # +1 in high summer, −1 in midwinter

    standing = h.standing_w * (1 + 0.05 * rng.standard_normal(n))
    fridge_duty = 0.35 + 0.12 * season
    fridge = h.fridge_w * (rng.random(n) < fridge_duty)
    office = h.office_w * weekday * ((hour >= 8.5) & (hour < 17.5)) * day_factor
    cooking = h.cooking_w * day_factor * (np.exp(-((hour - 7.5) / 0.5) ** 2) * 0.5 + np.exp(-((hour - 18.5) / 0.7) ** 2))
    dark_evening = (hour >= 17.0 + 2.0 * season) & (hour < 23.0)
    dark_morning = (hour >= 6.0) & (hour < 7.0 + 1.0 * (1 - season))
    lighting = h.lighting_w * (dark_evening | dark_morning) * (0.7 + 0.3 * rng.random(n))
    cold = np.clip(-season, 0.0, 1.0)
    heating = h.heating_w * cold * (rng.random(n) < 0.3 + 0.4 * cold) * (1.0 + 0.3 * ((hour < 8) | (hour > 20)))
    backed = standing + fridge + office + cooking + lighting + heating

    hot = np.clip(season, 0.0, 1.0)
    afternoon = np.exp(-((hour - 16.0) / 3.5) ** 2)
    cooling = h.cooling_w * hot * (rng.random(n) < 0.2 + 0.6 * hot * afternoon)
    water = h.water_heater_w * (rng.random(n) < 0.04 + 0.08 * np.exp(-((hour - 7.0) / 1.0) ** 2))
    dryer_day = rng.random(n_days) < 0.25
    dryer = h.dryer_w * dryer_day[days] * ((hour >= 19.0) & (hour < 20.0))
    ev_night = rng.random(n_days) < 0.35
    ev = h.ev_w * ev_night[days] * ((hour >= 0.5) & (hour < 4.0))
    grid_only = cooling + water + dryer + ev
    return pd.DataFrame({"backed_up_w": backed.round(1), "grid_only_w": grid_only.round(1)}, index=index)


def write_load_files(h: Household) -> list[Path]:
    """Write the two channels as the household's 'monitoring export' (one CSV per channel)."""
    table = household_load(h)
    # The logger was offline during the gaps; the meter itself (and so a register) kept counting.
    logged = np.ones(len(table), dtype=bool)
    for start, end in h.gaps:
        logged &= (table.index < pd.Timestamp(start, tz=h.timezone)) | (table.index >= pd.Timestamp(end, tz=h.timezone))
    step_h = pd.Timedelta(h.step).total_seconds() / 3600.0
    written = []
    for column, name in (("backed_up_w", "load_backed_up.csv"), ("grid_only_w", "load_grid_only.csv")):
        power = table[column]
        if h.write_as == "power_w":
            out = pd.DataFrame({"timestamp": power.index.strftime("%Y-%m-%d %H:%M"), "power_w": power.to_numpy()})
        elif h.write_as == "power_kw":
            out = pd.DataFrame({"timestamp": power.index.strftime("%Y-%m-%d %H:%M"),
                                "power_kw": (power / 1000.0).round(4).to_numpy()})
        elif h.write_as == "energy_kwh":
            out = pd.DataFrame({"timestamp": power.index.strftime("%Y-%m-%d %H:%M"),
                                "energy_kwh": (power * step_h / 1000.0).round(5).to_numpy()})
        else:  # a cumulative register read at the end of each interval
            register = 1520.0 + (power * step_h / 1000.0).cumsum()
            end = power.index + pd.Timedelta(h.step)
            out = pd.DataFrame({"timestamp": end.strftime("%Y-%m-%d %H:%M"), "register_kwh": register.round(4).to_numpy()})
        path = HERE / h.folder / name
        out[logged].to_csv(path, index=False, sep=h.separator, decimal=h.decimal)
        written.append(path)
    return written


HOUSEHOLDS = {
    # A three-bedroom house in the North Carolina Piedmont with a home office; full year at 15 minutes.
    "maple_hollow": Household(
        folder="maple_hollow", timezone="America/New_York", start="2025-01-01", end="2026-01-01", step="15min",
        seed=20231, standing_w=95.0, fridge_w=140.0, office_w=160.0, cooking_w=900.0, lighting_w=180.0,
        heating_w=600.0, cooling_w=2600.0, water_heater_w=550.0, dryer_w=2400.0, ev_w=3300.0),
    # A small fishing family's house on an Alaskan island: a meter's cumulative register read every
    # 5 minutes over one summer (the logger was fitted in May), plus a year of bills.
    "harbour_view": Household(
        folder="harbour_view", timezone="America/Anchorage", start="2025-05-12", end="2025-09-08", step="5min",
        seed=5501, standing_w=70.0, fridge_w=110.0, office_w=0.0, cooking_w=700.0, lighting_w=140.0,
        heating_w=450.0, cooling_w=0.0, summer_peak_doy=215, water_heater_w=0.0, dryer_w=2000.0, ev_w=0.0,
        write_as="register_kwh", gaps=(("2025-07-03 10:00", "2025-07-04 16:00"),)),
    # A farmhouse on a dry, sunny plateau in the southern hemisphere (summer in January): seven weeks of
    # one-minute power readings in kW, semicolon-separated with decimal commas, plus twelve bills.
    "red_dune": Household(
        folder="red_dune", timezone="Africa/Johannesburg", start="2025-02-03", end="2025-03-24", step="1min",
        seed=7702, standing_w=120.0, fridge_w=160.0, office_w=220.0, cooking_w=1200.0, lighting_w=160.0,
        heating_w=300.0, cooling_w=1800.0, summer_peak_doy=20, water_heater_w=1500.0, dryer_w=0.0, ev_w=0.0,
        write_as="power_kw", separator=";", decimal=","),
    # A retired couple's bungalow on the south-east Florida coast: hot and humid all year, air conditioning on the
    # grid-only circuit, a pool pump and a home workshop by day, no heating; a full year at 30 minutes.
    "mangrove_lane": Household(
        folder="mangrove_lane", timezone="America/New_York", start="2025-01-01", end="2026-01-01", step="30min",
        seed=4417, standing_w=240.0, fridge_w=150.0, office_w=450.0, cooking_w=1000.0, lighting_w=150.0,
        heating_w=0.0, cooling_w=3200.0, summer_peak_doy=215, water_heater_w=900.0, dryer_w=2200.0, ev_w=0.0),
}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("sites", nargs="*", help="site folders (default: all)")
    args = parser.parse_args()
    for name in args.sites or HOUSEHOLDS:
        for path in write_load_files(HOUSEHOLDS[name]):
            print(f"wrote {path.relative_to(HERE.parent)}")


if __name__ == "__main__":
    main()
