"""Extreme but valid inputs run and give sane figures: the energy balance closes (recomputed from its terms), no
NaN or infinity in the JSON, no negative energy, shares between 0 and 1.

Zero panels, no battery, no load, an oversized array, latitudes at and beyond the polar circles (polar night and
midnight sun, on the monthly weather generator with dark months), the southern hemisphere, leap-year data, a
year of one-second readings, a scenario with every optional section missing.
"""

from __future__ import annotations

import datetime as dt
import json
import os

import numpy as np
import pandas as pd
import pvlib
import pytest

from core.analyses.checks import run_checks
from core.errors import InputError
from core.model.loads import build_year, read_load_csv
from core.model.loads.decode import MAX_FILE_BYTES
from core.model.weather import read_weather_file
from core.scenario import parse_scenario
from core.simulate import simulate
from core.timebase import MIN_STEP_S, nominal_index

from .common import (
    BATTERY,
    LOAD_300,
    ac_array,
    dc_array,
    monthly_ghi_for,
    run_cli,
    sanity_problems,
    scenario_text,
)


def run(text: str, base_dir=None):
    sim = simulate(parse_scenario(text, file="extreme.toml", base_dir=base_dir))
    result = sim.results.to_dict()
    assert sanity_problems(result) == []
    return sim, result


# --------------------------------------------------------------------------------------------- nothing there
def test_zero_panels_no_arrays():
    sim, r = run(scenario_text(body=BATTERY + LOAD_300))
    e = r["energy_kwh"]
    assert e["pv_potential"] == e["harvested"] == 0.0
    assert e["load_served"] == pytest.approx(e["load"]) == pytest.approx(3600.0)
    assert e["grid_import"] >= e["load"]  # every kWh comes from the grid, plus the inverter-charger's own draw
    assert r["ratios"]["pv_utilisation"] is None and r["ratios"]["self_consumption"] is None


def test_an_array_of_zero_modules_is_the_same_as_none():
    _, none = run(scenario_text(body=BATTERY + LOAD_300))
    _, zero = run(scenario_text(body=BATTERY + LOAD_300 + ac_array(modules=0)))
    assert zero["energy_kwh"] == none["energy_kwh"]


def test_no_battery_with_ac_coupled_panels():
    sim, r = run(scenario_text(body=LOAD_300 + ac_array(modules=4)))
    e = r["energy_kwh"]
    assert e["battery_charge"] == e["battery_discharge"] == e["stored_change"] == 0.0
    assert (sim.steps["soc_wh"] == 0).all()
    assert e["harvested"] > 0
    # Zero export with nowhere to put a surplus and no limiter: the surplus flows out uncontrolled (DESIGN §5).
    assert e["exported_uncontrolled"] > 0


def test_no_load():
    sim, r = run(scenario_text(body=BATTERY + ac_array(modules=4)))
    e = r["energy_kwh"]
    assert e["load"] == e["load_served"] == e["unserved"] == 0.0
    assert r["ratios"]["self_sufficiency"] is None
    assert e["harvested"] > 0 and e["battery_charge"] > 0


def test_every_optional_section_missing(tmp_path):
    text = scenario_text()
    assert "[battery]" not in text and "[[arrays]]" not in text and "[load]" not in text and "[grid]" not in text
    _, r = run(text)
    assert r["energy_kwh"]["load"] == 0.0
    path = tmp_path / "minimal.toml"
    path.write_text(text, encoding="utf-8")
    cli = run_cli(["simulate", path, "--json"])
    assert cli.code == 0, cli.stderr
    assert sanity_problems(json.loads(cli.stdout)) == []
    assert run_cli(["check", path]).code == 0
    compare = run_cli(["compare", path])  # nothing to compare: bad input, said in one line
    assert compare.bad_input_in_one_line() and "expansion" in compare.stderr


# --------------------------------------------------------------------------------------------- too much
def test_oversized_ac_array():
    sim, r = run(scenario_text(body=BATTERY + LOAD_300 + ac_array(modules=1000)))
    e = r["energy_kwh"]
    assert e["pv_potential"] > 100 * e["load"]
    assert e["exported_uncontrolled"] > 0.5 * e["harvested"]


def test_oversized_dc_array_is_clipped_and_flagged():
    text = scenario_text(body=BATTERY + LOAD_300 + dc_array(per_string=100, strings=100))
    sim, r = run(text)
    e = r["energy_kwh"]
    # 10 000 modules on one 60 A charge controller: almost all of it is clipped or curtailed.
    assert e["clipped"] + e["curtailed"] > 0.99 * e["pv_potential"]
    checks = run_checks(sim.scenario, sim)
    assert any(c.status == "fail" and c.id.startswith("strings") for c in checks)  # 100 × 41 V on a 150 V input


# --------------------------------------------------------------------------------------------- the globe's edges
POLAR = [66.6, 78.0, 90.0, -66.6, -78.0, -90.0]


@pytest.mark.parametrize("latitude", POLAR)
def test_polar_night_and_midnight_sun(latitude):
    """Beyond the polar circles the sun stays down for weeks around the winter solstice and up around the summer
    one (the sunset hour angle of Duffie & Beckman eq. 1.6.10 reaches 0° and 180°)."""
    north = latitude > 0
    text = scenario_text(latitude=latitude, longitude=15.0, timezone="Etc/GMT-1", ghi=monthly_ghi_for(latitude),
                         temp=[-15, -15, -12, -8, -2, 3, 6, 5, 1, -5, -10, -13] if north else
                         [6, 5, 1, -5, -10, -13, -15, -15, -12, -8, -2, 3],
                         body=BATTERY + LOAD_300 + ac_array(modules=4, tilt=60, azimuth=180 if north else 0))
    sim, r = run(text)
    potential = sim.steps["pv_potential_ac_w"]
    months = potential.groupby(potential.index.month).sum()
    winter, summer = (12, 6) if north else (6, 12)
    midnight = (potential.index.hour == 0) & (potential.index.month == summer)
    if abs(latitude) >= 78:
        assert months[winter] == 0.0  # polar night
        assert potential[midnight].sum() > 0  # midnight sun: power in the hour after local midnight
    assert months[summer] > months[winter]
    assert r["energy_kwh"]["pv_potential"] > 0


def test_southern_hemisphere_north_facing_is_the_sunny_side():
    """At 30° S the equator-facing (north, azimuth 0) plane collects more than the south-facing one (common
    practice); and the site mirrored to 30° N with the months shifted by half a year gives a south-facing plane
    about the same (the symmetry of solar geometry about the equator, Duffie & Beckman §1.6)."""
    ghi = [7.9, 7.1, 6.2, 5.3, 4.5, 4.0, 4.3, 5.2, 6.3, 7.2, 7.8, 8.1]
    body = (LOAD_300 + ac_array(modules=1, azimuth=0, name="north") +
            "\n[[arrays]]\nname = \"south\"\ncoupling = \"ac\"\nside = \"grid\"\nmodule = \"m\"\ntilt_deg = 30\n"
            "azimuth_deg = 180\nmicroinverter = \"mi\"\nmodules = 1\n")
    south_site, _ = run(scenario_text(latitude=-30.0, longitude=25.0, timezone="Etc/GMT-2", ghi=ghi, body=body))
    per_array = {k: v.sum() for k, v in south_site.sources.per_array_dc_w.items()}
    assert per_array["north"] > 1.3 * per_array["south"]
    mirrored, _ = run(scenario_text(latitude=30.0, longitude=25.0, timezone="Etc/GMT-2", ghi=ghi[6:] + ghi[:6],
                                    body=body))
    assert mirrored.sources.per_array_dc_w["south"].sum() == pytest.approx(per_array["north"], rel=0.05)


# --------------------------------------------------------------------------------------------- calendars and clocks
def test_leap_year_load_file_including_29_february(tmp_path):
    """Sixty days of hourly readings across 29 February 2024: a constant 500 W, except 29 February at 5 kW. The
    nominal year has no 29 February (DESIGN: one non-leap year), so the 5 kW day must vanish, not shift."""
    index = pd.date_range("2024-01-15", "2024-03-14 23:00", freq="h")
    power = np.where((index.month == 2) & (index.day == 29), 5000.0, 500.0)
    lines = ["time,power_w"] + [f"{t:%Y-%m-%d %H:%M},{p:.1f}" for t, p in zip(index, power, strict=True)]
    (tmp_path / "load.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")
    text = scenario_text(latitude=45.0, timezone="Etc/GMT-1", body=BATTERY + ac_array(modules=2) +
                         '\n[load]\npath = "load.csv"\nunit = "W"\ntimezone = "Etc/GMT-1"\n')
    sim, r = run(text, base_dir=tmp_path)
    load = sim.steps["load_backed_w"]
    assert load.max() == pytest.approx(500.0) and load.min() == pytest.approx(500.0)
    assert r["energy_kwh"]["load"] == pytest.approx(8760 * 0.5)  # 8760 hours at 0.5 kW
    assert list(tmp_path.iterdir()) == [tmp_path / "load.csv"]


def test_leap_year_weather_file_drops_29_february(tmp_path):
    index = pd.date_range("2024-01-01", periods=8784, freq="h")
    temp = np.where((index.month == 2) & (index.day == 29), 40.0, 10.0)
    # GHI that follows the sun at the site (pvlib's Haurwitz clear sky at the interval midpoints), as the reader now
    # checks irradiance against the sun.
    zenith = pvlib.solarposition.get_solarposition(index.tz_localize("UTC") + pd.Timedelta(minutes=30), 45.0, 0.0)
    ghi = pvlib.clearsky.haurwitz(zenith["apparent_zenith"])["ghi"].to_numpy()
    lines = ["timestamp,ghi,temp_air"] + [f"{t:%Y-%m-%d %H:%M},{g:.1f},{c:.1f}"
                                          for t, g, c in zip(index, ghi, temp, strict=True)]
    path = tmp_path / "leap.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    weather = read_weather_file(path, fmt="csv", tz=dt.UTC, latitude=45.0, longitude=0.0)
    assert len(weather.data) == 8760
    assert weather.data["temp_air"].max() == 10.0  # the 29 February rows are dropped, nothing else moves


def test_a_year_of_one_second_readings_is_refused_before_reading(tmp_path):
    """A year at 1 s is 31.5 million rows, about 800 MB of CSV: more than the 128 MiB the reader takes. The file
    here is sparse — a real header and first rows, then the size such a file would have — so the test proves
    the size guard fires before anything is read."""
    path = tmp_path / "one_second_year.csv"
    path.write_text("time,power_w\n2024-01-01 00:00:00,312.5\n2024-01-01 00:00:01,313.0\n", encoding="utf-8")
    year_of_seconds_bytes = 366 * 86400 * len("2024-01-01 00:00:00,312.5\n")
    assert year_of_seconds_bytes > MAX_FILE_BYTES
    with open(path, "r+b") as fh:
        fh.truncate(year_of_seconds_bytes)
    with pytest.raises(InputError) as err:
        read_load_csv(path, timezone="Europe/Berlin")
    message = str(err.value)
    assert "one_second_year.csv" in message and "MiB" in message and "1 min" in message
    cli = run_cli(["inspect-load", path])
    assert cli.bad_input_in_one_line() and "one_second_year.csv" in cli.stderr
    assert os.path.getsize(path) == year_of_seconds_bytes  # untouched


def test_one_second_readings_are_averaged_to_the_step_not_sampled():
    """Three weeks at 1 s (1.8 million readings): 1 kW for the first quarter of every hour, nothing for the rest.
    The hourly year must hold the time-weighted mean, 250 W, in every hour; sampling would give 1 kW or 0."""
    n = 21 * 86400
    index = pd.date_range("2024-03-04", periods=n, freq="s", tz="UTC")
    power = pd.Series(np.where(np.arange(n) % 3600 < 900, 1000.0, 0.0), index=index)
    year, report = build_year(power, step_s=3600, tz=dt.UTC)
    assert report.measured_days == 21
    assert year.to_numpy() == pytest.approx(np.full(8760, 250.0))


def test_steps_finer_than_a_minute_are_refused_with_a_message(tmp_path):
    with pytest.raises(InputError, match="simulation.step_s"):
        parse_scenario(scenario_text(body="\n[simulation]\nstep_s = 1\n"), file="fine.toml")
    with pytest.raises(InputError, match="60 s"):
        nominal_index(1, dt.UTC)
    assert len(nominal_index(MIN_STEP_S, dt.UTC)) == 525_600  # a year at one minute is still fine
    # A weather file at 30-second steps: refused, naming the file.
    index = pd.date_range("2023-01-01", periods=10, freq="30s")
    path = tmp_path / "thirty_seconds.csv"
    path.write_text("timestamp,ghi\n" + "\n".join(f"{t:%Y-%m-%d %H:%M:%S},0" for t in index) + "\n")
    with pytest.raises(InputError, match="thirty_seconds.csv"):
        read_weather_file(path, fmt="csv", tz=dt.UTC, latitude=0.0, longitude=0.0)
