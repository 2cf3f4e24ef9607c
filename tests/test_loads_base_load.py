"""Base-load estimate (core/model/loads/base_load.py) on invented series with a known floor.

The day/night split by sun position is checked against pvlib's NREL SPA implementation
(``pvlib.solarposition.get_solarposition``, Reda & Andreas 2004) as the reference for polar night and
midnight sun at 78° N.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from pvlib import solarposition

from core.model.loads import base_load_w

TZ = "Etc/GMT-1"  # UTC+01:00 all year


def appliance_bursts(index: pd.DatetimeIndex, rng: np.random.Generator) -> np.ndarray:
    """Switching loads on top of the floor: each quarter hour independently on with 35 % chance."""
    on = rng.random(index.size) < 0.35
    return on * rng.uniform(80.0, 2500.0, index.size)


def test_finds_a_constant_night_floor_and_day_floor():
    index = pd.date_range("2023-01-01", "2024-01-01", freq="15min", inclusive="left", tz=TZ)
    rng = np.random.default_rng(2023)  # random-number seed
    clock = index.hour.to_numpy()
    floor = np.where((clock >= 7) & (clock < 19), 340.0, 165.0)
    power = pd.Series(floor + appliance_bursts(index, rng), index=index)
    base = base_load_w(power)
    assert list(base.index) == list(range(1, 13))
    assert list(base.columns[:2]) == ["night_w", "day_w"]
    # The 5th percentile of hourly means finds the floor: with 35 % on-chance per quarter, about 18 % of
    # hours have no burst at all, so more than 5 % of hours sit exactly on it.
    np.testing.assert_allclose(base["night_w"].to_numpy(), 165.0, atol=0.5)
    np.testing.assert_allclose(base["day_w"].to_numpy(), 340.0, atol=0.5)
    assert "07:00" in base.attrs["method"]


def test_months_without_data_are_nan_and_spikes_do_not_lift_the_floor():
    index = pd.date_range("2023-03-01", "2023-05-01", freq="1min", inclusive="left", tz=TZ)
    power = pd.Series(220.0, index=index)
    power.iloc[::97] = 3000.0  # short, frequent switching: single minutes
    base = base_load_w(power)
    assert base.loc[[3, 4], "all_w"].notna().all()
    assert base.drop(index=[3, 4])["all_w"].isna().all()
    # Hourly means that hold one 3 kW minute are 220 + 2780/60 W; the floor hours hold none.
    assert base.loc[3, "night_w"] == pytest.approx(220.0, abs=1.0)


def test_sun_position_split_at_78_north():
    latitude, longitude = 78.2, 15.6
    index = pd.date_range("2023-01-01", "2024-01-01", freq="1h", inclusive="left", tz=TZ)
    # Reference: in December the sun stays below the horizon all day at this latitude, in June above it.
    spa = solarposition.get_solarposition(index, latitude, longitude)["apparent_elevation"]
    assert spa[index.month == 12].max() < 0 and spa[index.month == 6].min() > 0
    power = pd.Series(300.0, index=index)
    by_sun = base_load_w(power, latitude=latitude, longitude=longitude)
    assert np.isnan(by_sun.loc[12, "day_w"]) and by_sun.loc[12, "night_w"] == pytest.approx(300.0)
    assert np.isnan(by_sun.loc[6, "night_w"]) and by_sun.loc[6, "day_w"] == pytest.approx(300.0)
    assert "sun above the horizon" in by_sun.attrs["method"]
    # The clock split sees day and night in every month, polar or not.
    by_clock = base_load_w(power)
    assert by_clock[["night_w", "day_w"]].notna().all().all()


def test_sun_split_sorts_daylight_load_from_night_load():
    # A floor that follows the sun (computed with the SPA reference): 120 W in the dark, 450 W in daylight.
    latitude, longitude = 45.0, 7.0
    index = pd.date_range("2023-01-01", "2024-01-01", freq="15min", inclusive="left", tz=TZ)
    centre = index + pd.Timedelta(minutes=7.5)
    elevation = solarposition.get_solarposition(centre, latitude, longitude)["apparent_elevation"].to_numpy()
    power = pd.Series(np.where(elevation > 0, 450.0, 120.0), index=index)
    base = base_load_w(power, latitude=latitude, longitude=longitude, window="15min")
    # Our split uses an analytical sun position (Cooper declination, Spencer equation of time): it may
    # differ from SPA by a few minutes at sunrise and sunset, which touches far less than 5 % of windows.
    np.testing.assert_allclose(base["night_w"].to_numpy(), 120.0)
    np.testing.assert_allclose(base["day_w"].to_numpy(), 450.0)
