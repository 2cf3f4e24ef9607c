"""Row spacing: the geometric gap rule against pvlib's shading model and a fact of the trade."""

from __future__ import annotations

import pathlib

import numpy as np
import pandas as pd
import pvlib
import pytest

from core.analyses.checks.spacing import (
    annual_shading_loss,
    min_row_gap,
    parse_window,
    row_shaded_fraction,
    sun_angles_deg,
)
from core.errors import InputError

approx = pytest.approx


def solstice_sun(latitude: float, start_h: float = 10.0, end_h: float = 14.0):
    """Sun positions by pvlib's SPA on the winter solstice, one a minute over a window of *solar* time at
    longitude 0 (clock = solar time − equation of time, Spencer 1971 as in pvlib)."""
    day = "2023-12-21" if latitude >= 0 else "2023-06-21"
    doy = pd.Timestamp(day).day_of_year
    eot_min = pvlib.solarposition.equation_of_time_spencer71(doy)
    solar = np.arange(start_h, end_h + 1e-9, 1 / 60)
    times = pd.Timestamp(day, tz="UTC") + pd.to_timedelta(solar - eot_min / 60.0, unit="h")
    return pvlib.solarposition.get_solarposition(times, latitude, 0.0)


def test_trade_fact_rows_of_1_7_m_at_10_degrees_need_about_0_75_m():
    # Common practice: panels about 1.7 m long tilted 10° at about 40–42° latitude need roughly 0.75 m of clear gap
    # to stay unshaded from late morning to early afternoon on the winter solstice.
    for lat in (40.0, 41.0, 42.0):
        assert min_row_gap(lat, 10.0, 1.7).gap_m == approx(0.75, rel=0.10)


@pytest.mark.parametrize("lat, tilt, length, azimuth", [
    (41.0, 10.0, 1.7, None),
    (52.0, 30.0, 2.0, None),
    (35.0, 15.0, 1.1, 200.0),   # rows turned 20° west of south
    (-33.0, 20.0, 1.7, None),   # southern hemisphere: rows face north, design day in June
])
def test_gap_rule_against_pvlib_shaded_fraction1d(lat, tilt, length, azimuth):
    # Reference: pvlib.shading.shaded_fraction1d (Anderson & Jensen 2024) with SPA sun positions. At the computed
    # gap no row is shaded anywhere in the 10:00–14:00 solar-time window; at 90 % of it some row is.
    rule = min_row_gap(lat, tilt, length, azimuth_deg=azimuth)
    sun = solstice_sun(lat)
    facing = rule.azimuth_deg

    def shade(gap):
        return row_shaded_fraction(sun["apparent_zenith"].to_numpy(), sun["azimuth"].to_numpy(), tilt_deg=tilt,
                                   azimuth_deg=facing, length_m=length, pitch_m=gap + rule.depth_m)

    assert shade(rule.gap_m).max() <= 1e-6
    assert shade(0.9 * rule.gap_m).max() > 1e-3
    # and the window matters: at 08:30 or 15:30 solar time the computed gap is not enough (winter, low sun)
    outside = pd.concat([solstice_sun(lat, 8.5, 8.5), solstice_sun(lat, 15.5, 15.5)])
    outside_shade = row_shaded_fraction(outside["apparent_zenith"].to_numpy(), outside["azimuth"].to_numpy(),
                                        tilt_deg=tilt, azimuth_deg=facing, length_m=length, pitch_m=rule.pitch_m)
    assert outside_shade.max() > 0


def test_sun_angles_against_pvlib_analytical():
    # Duffie & Beckman §1.6 as implemented here, against pvlib.solarposition's analytical functions.
    lat, dec = 41.0, -23.44
    hour_angle = np.array([-45.0, -30.0, -5.0, 0.0, 20.0, 60.0])
    elev, az = sun_angles_deg(lat, dec, hour_angle)
    zen_ref = pvlib.solarposition.solar_zenith_analytical(np.radians(lat), np.radians(hour_angle), np.radians(dec))
    az_ref = pvlib.solarposition.solar_azimuth_analytical(np.radians(lat), np.radians(hour_angle), np.radians(dec),
                                                          zen_ref)
    np.testing.assert_allclose(90.0 - elev, np.degrees(zen_ref), atol=1e-9)
    np.testing.assert_allclose(az, np.degrees(az_ref), atol=1e-9)


def test_pitch_is_gap_plus_row_depth_and_flat_rows_need_no_gap():
    r = min_row_gap(41.0, 10.0, 1.7)
    assert r.pitch_m == approx(r.gap_m + 1.7 * np.cos(np.radians(10.0)))
    assert min_row_gap(41.0, 0.0, 1.7).gap_m == approx(0.0, abs=1e-12)
    # Steeper rows cast longer shadows; a shorter window needs less gap.
    assert min_row_gap(41.0, 30.0, 1.7).gap_m > r.gap_m
    assert min_row_gap(41.0, 10.0, 1.7, window_h=(11.0, 13.0)).gap_m < r.gap_m


def test_annual_shading_loss_with_greensboro_tmy3():
    # pvlib's shipped NREL TMY3 file for Greensboro NC (36.1° N) as the year's weather.
    from core.model.solar import solar_geometry
    from core.model.weather import read_weather_file

    path = pathlib.Path(pvlib.__file__).parent / "data" / "723170TYA.CSV"
    w = read_weather_file(path, fmt="tmy3", tz="Etc/GMT+5")
    geo = solar_geometry(w.data.index, 36.1, -79.9, 270.0)
    from core.model.pv import poa_irradiance

    poa = poa_irradiance(w.data, geo, 10.0, 180.0)
    rule = min_row_gap(36.1, 10.0, 1.7)

    def loss(pitch):
        return annual_shading_loss(poa["poa_direct"].to_numpy(), poa["poa_global"].to_numpy(), geo.apparent_zenith_deg,
                                   geo.azimuth_deg, tilt_deg=10.0, azimuth_deg=180.0, length_m=1.7, pitch_m=pitch)

    tight, at_rule, wide = loss(rule.depth_m + 0.5 * rule.gap_m), loss(rule.pitch_m), loss(20.0)
    assert wide < 1e-4  # only the sun at the horizon reaches over a 20 m pitch
    assert tight > at_rule > 0.0  # the rule protects the window only; mornings and evenings still shade a little
    assert at_rule < 0.02


def test_bad_input_is_named():
    assert parse_window("9.5-14.5") == (9.5, 14.5)
    for bad in ("10", "14-10", "a-b", "10-25"):
        with pytest.raises(InputError, match="window"):
            parse_window(bad)
    with pytest.raises(InputError, match="below the horizon"):
        min_row_gap(75.0, 20.0, 1.7)
    with pytest.raises(InputError, match="length"):
        min_row_gap(41.0, 10.0, 0.0)


def test_spacing_check_on_an_array_with_a_row_pitch():
    # The expansion racked in rows on a flat roof: a pitch below the rule warns, a pitch above it passes.
    import dataclasses

    from expansion_cases import hand_scenario, synthetic_site

    from core.analyses.checks import run_checks
    from core.analyses.options import with_option
    from core.simulate import simulate

    site = synthetic_site(days=1)
    rule = min_row_gap(40.0, 20.0, 1.7, azimuth_deg=240.0)
    for pitch, expected in ((rule.depth_m + 0.8 * rule.gap_m, "warn"), (rule.pitch_m + 0.05, "pass")):
        sc = hand_scenario()
        sc = dataclasses.replace(sc, expansion=dataclasses.replace(sc.expansion, row_pitch_m=pitch, mount="rack"))
        sc = with_option(sc, "ac_backed_up")
        [c] = [c for c in run_checks(sc, simulate(sc, site)) if c.id == "spacing.rows"]
        assert c.status == expected
        assert c.value == approx(pitch - rule.depth_m, abs=1e-3) and c.limit == approx(rule.gap_m, abs=1e-3)
        assert c.caution and "structural" in c.caution
