"""Sun position through the project's SPA wrapper against the published worked example."""

import datetime as dt

import numpy as np
import pandas as pd
import pvlib
import pytest

from core.errors import InputError
from core.model.solar import solar_geometry, sun_position
from core.timebase import nominal_index


def test_spa_worked_example():
    # Reda & Andreas, Solar Energy 76 (2004) 577-589, NREL/TP-560-34302, worked example:
    # 2003-10-17 12:30:30 local time, UTC-7, latitude 39.742476, longitude -105.1786, elevation 1830.14 m,
    # pressure 820 mbar, temperature 11 C, delta T 67 s -> topocentric zenith 50.11162 deg, azimuth 194.34024 deg.
    # Values from memory, confirmed against pvlib's SPA implementation (50.111622, 194.340241).
    times = pd.DatetimeIndex([pd.Timestamp("2003-10-17 12:30:30", tz=dt.timezone(dt.timedelta(hours=-7)))])
    pos = sun_position(times, 39.742476, -105.1786, 1830.14, 82000.0, 11.0, delta_t_s=67.0)
    assert pos["apparent_zenith"].iloc[0] == pytest.approx(50.11162, abs=1e-4)
    assert pos["azimuth"].iloc[0] == pytest.approx(194.34024, abs=1e-4)


def test_geometry_is_evaluated_at_interval_midpoints():
    # The hourly interval 11:00-12:00 stands for 11:30: geometry must equal the SPA position at 11:30.
    tz = dt.timezone(dt.timedelta(hours=-5))
    index = nominal_index(3600, tz)
    geo = solar_geometry(index, 36.1, -79.95, 273.0)
    k = index.get_loc(pd.Timestamp("2023-06-21 11:00", tz=tz))
    at_mid = sun_position(pd.DatetimeIndex([pd.Timestamp("2023-06-21 11:30", tz=tz)]), 36.1, -79.95, 273.0,
                          pvlib.atmosphere.alt2pres(273.0), 12.0)
    assert geo.zenith_deg[k] == pytest.approx(at_mid["zenith"].iloc[0], abs=1e-9)
    assert geo.azimuth_deg[k] == pytest.approx(at_mid["azimuth"].iloc[0], abs=1e-9)
    # Solar noon near 12:20 local standard time at 79.95 W on the -75 meridian (4 min per degree, common
    # practice; equation of time about -2 min on 21 June): the 12:00 interval has the highest sun of that day.
    day = (index >= pd.Timestamp("2023-06-21", tz=tz)) & (index < pd.Timestamp("2023-06-22", tz=tz))
    assert index[day][np.argmin(geo.zenith_deg[day])].hour == 12
    # Kasten & Young air mass is about 1/cos(zenith) near the zenith and NaN at night.
    assert geo.airmass_relative[k] == pytest.approx(1 / np.cos(np.radians(geo.apparent_zenith_deg[k])), rel=0.01)
    night = geo.apparent_zenith_deg > 91
    assert np.isnan(geo.airmass_relative[night]).all()
    # Extraterrestrial normal irradiance stays within the solar constant +/- 3.4 % (orbit eccentricity).
    assert geo.dni_extra_w_m2.min() > 1366 * 0.96 and geo.dni_extra_w_m2.max() < 1366 * 1.04


def test_bad_site_is_reported():
    index = nominal_index(3600, dt.UTC)
    with pytest.raises(InputError, match="site.latitude"):
        solar_geometry(index, 95.0, 0.0, 0.0)


def test_reused_position_gives_the_same_geometry_as_a_full_spa_run():
    # SPA's refraction (Reda & Andreas 2004, eqs. 42-44) is the only part that depends on pressure and
    # temperature: a position computed with other settings, corrected again, must equal a full run.
    index = pd.date_range("2023-03-01", periods=48 * 4, freq="15min", tz="Etc/GMT+5")
    pressure = np.linspace(95_000, 102_000, len(index))
    temperature = np.linspace(-10, 30, len(index))
    direct = solar_geometry(index, 36.1, -79.9, 270.0, pressure_pa=pressure, temp_air_c=temperature)
    other = sun_position(index + pd.Timedelta(minutes=7.5), 36.1, -79.9, 270.0, 101_325.0, 12.0)
    reused = solar_geometry(index, 36.1, -79.9, 270.0, pressure_pa=pressure, temp_air_c=temperature, position=other)
    np.testing.assert_allclose(reused.apparent_zenith_deg, direct.apparent_zenith_deg, atol=1e-9)
    np.testing.assert_allclose(reused.azimuth_deg, direct.azimuth_deg, atol=1e-9)
