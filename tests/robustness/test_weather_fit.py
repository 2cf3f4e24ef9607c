"""Weather that does not fit its site: shifted, misplaced and impossible years are refused or flagged; the sample
sites pass without a word.

The files are built in the test from the NREL TMY3 file pvlib ships for Greensboro NC (723170TYA.CSV, 36.1 N,
79.95 W, UTC-5; Wilcox & Marion 2008), so every check is against measured irradiance, not invented data.
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pytest

from core.errors import InputError
from core.model.weather import monthly_weather, read_weather_file
from core.model.weather.fit import distance_km, sun_fit
from core.scenario import load_scenario
from core.simulate import prepare_site
from tests.robustness.common import MAPLE, PVLIB_DATA, SAMPLES, copy_site, run_cli

GREENSBORO = PVLIB_DATA / "723170TYA.CSV"
SITE = dict(latitude=36.1, longitude=-79.95, altitude_m=273.0)
EST = dt.timezone(dt.timedelta(hours=-5))


@pytest.fixture(scope="module")
def greensboro():
    return read_weather_file(GREENSBORO, tz=EST)


def _as_csv(weather, path, *, utc_as_local: bool = False, ghi=None) -> None:
    """The year as our generic CSV; with ``utc_as_local`` the UTC clock times are written with no offset, so that a
    reader takes them for the site's local time (the mistake the check must catch)."""
    frame = weather.data.copy()
    if ghi is not None:
        frame["ghi"] = ghi
        frame = frame.drop(columns=["dni", "dhi"])
    index = frame.index.tz_convert("UTC") if utc_as_local else frame.index
    frame.index = [f"{t:%Y-%m-%d %H:%M}" for t in index.tz_localize(None)]
    frame.index.name = "timestamp"
    path.write_text(frame.to_csv(), encoding="utf-8")


@pytest.mark.parametrize("site", ["maple_hollow", "harbour_view", "red_dune"])
def test_sample_sites_pass_without_a_warning(site):
    sc = load_scenario(SAMPLES / site / "scenario.toml")
    data = prepare_site(sc)
    assert data.weather.warnings == ()
    # The generated year of a monthly site follows the sun too (no lag, nothing at night).
    fit = sun_fit(data.weather.data["ghi"], data.weather.step_s, sc.site.latitude, sc.site.longitude)
    assert fit.best_lag_h == 0 and fit.night_share < 0.005 and fit.over_extra_count == 0


def test_a_generated_year_fits_its_own_site():
    # Our own round monthly figures for a mid-latitude site (invented, demo-like; only the fit is checked).
    w = monthly_weather([2.3, 3.1, 4.2, 5.4, 6.0, 6.4, 6.2, 5.6, 4.6, 3.6, 2.6, 2.1],
                        [4, 6, 10, 15, 19, 24, 26, 25, 22, 16, 10, 5], tz="America/New_York", seed=1, **SITE)
    fit = sun_fit(w.data["ghi"], w.step_s, SITE["latitude"], SITE["longitude"])
    assert fit.best_lag_h == 0 and fit.over_extra_count == 0


def test_utc_read_as_local_is_refused_naming_the_shift(greensboro, tmp_path):
    path = tmp_path / "utc.csv"
    _as_csv(greensboro, path, utc_as_local=True)
    with pytest.raises(InputError) as err:
        read_weather_file(path, tz="America/New_York", **SITE)
    text = str(err.value)
    assert "utc.csv" in text and "5 h later" in text and "time zone" in text
    # The same rows with their offset are the measured year, and pass.
    good = tmp_path / "local.csv"
    _as_csv(greensboro, good)
    assert read_weather_file(good, tz="America/New_York", **SITE).warnings == ()


def test_a_shift_of_one_hour_is_caught(greensboro, tmp_path):
    # One hour late: half of the shifted morning irradiance lands where the sun gives less than it.
    path = tmp_path / "late.csv"
    shifted = greensboro.data["ghi"].to_numpy()
    _as_csv(greensboro, path, ghi=np.roll(shifted, 1))
    with pytest.raises(InputError, match="1 h later"):
        read_weather_file(path, tz="America/New_York", **SITE)


def test_a_file_from_far_away_is_refused_unless_the_scenario_allows_it():
    # 9 degrees of latitude north of Greensboro is about 1,000 km (haversine on the mean Earth radius).
    assert distance_km(36.1, -79.95, 45.1, -79.95) == pytest.approx(1000.8, abs=1.0)
    with pytest.raises(InputError, match=r"1,00\d km from the site.*weather.max_distance_km"):
        read_weather_file(GREENSBORO, tz="America/New_York", latitude=45.1, longitude=-79.95, altitude_m=273.0)
    allowed = read_weather_file(GREENSBORO, tz="America/New_York", latitude=45.1, longitude=-79.95,
                                altitude_m=273.0, max_distance_km=2000)
    assert any("km from the site" in w for w in allowed.warnings)


def test_a_file_from_nearby_gives_a_warning_only():
    # About 90 km west of the file's station: accepted, with a warning.
    w = read_weather_file(GREENSBORO, tz="America/New_York", latitude=36.1, longitude=-80.95, altitude_m=273.0)
    assert any("km from the site" in text for text in w.warnings)


def test_irradiance_all_night_is_refused(greensboro, tmp_path):
    path = tmp_path / "always_bright.csv"
    _as_csv(greensboro, path, ghi=np.full(len(greensboro.data), 800.0))
    with pytest.raises(InputError) as err:
        read_weather_file(path, tz="America/New_York", **SITE)
    assert "always_bright.csv" in str(err.value)
    assert "sun is down" in str(err.value) or "top of the atmosphere" in str(err.value)


def test_ghi_above_extraterrestrial_is_refused(greensboro, tmp_path):
    # Doubling the year's GHI puts clear noons above the solar constant on the horizontal (about 1,000-1,400 W/m2).
    path = tmp_path / "doubled.csv"
    _as_csv(greensboro, path, ghi=np.minimum(greensboro.data["ghi"].to_numpy() * 2.0, 1500.0))
    with pytest.raises(InputError, match="top of the atmosphere"):
        read_weather_file(path, tz="America/New_York", **SITE)


def test_the_command_line_refuses_a_shifted_file_and_shows_warnings(greensboro, tmp_path):
    site = copy_site("maple_hollow", tmp_path)
    _as_csv(greensboro, site / "utc.csv", utc_as_local=True)
    text = (site / "scenario.toml").read_text(encoding="utf-8")
    (site / "scenario.toml").write_text(text.replace('path = "723170TYA.CSV"', 'path = "utc.csv"')
                                        .replace('format = "tmy3"', 'format = "csv"'), encoding="utf-8")
    run = run_cli(["simulate", site / "scenario.toml"])
    assert run.bad_input_in_one_line() and "utc.csv" in run.stderr and "h later" in run.stderr
    assert MAPLE.exists()


def test_the_hourly_check_sees_through_a_fine_step(greensboro):
    # The same measured year on 15-minute steps (each hour repeated) gives the same verdict as hourly.
    fine = pd.Series(np.repeat(greensboro.data["ghi"].to_numpy(), 4),
                     index=pd.date_range(greensboro.data.index[0], periods=4 * 8760, freq="15min"))
    fit = sun_fit(fine, 900, SITE["latitude"], SITE["longitude"])
    assert fit.best_lag_h == 0 and fit.over_extra_count == 0
