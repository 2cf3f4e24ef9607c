"""The per-module PV chain against pvlib's own ModelChain, published model parameters and datasheet rules."""

import pathlib

import numpy as np
import pandas as pd
import pvlib
import pytest

from core.errors import InputError
from core.model.pv import (
    cell_temperature,
    effective_irradiance,
    module_dc_power_w,
    module_output,
    module_voltages,
    poa_irradiance,
)
from core.model.solar import solar_geometry
from core.model.weather import read_weather_file

PVLIB_DATA = pathlib.Path(pvlib.__file__).parent / "data"

# An invented 300 W module (our own figures, not any product's datasheet).
MODULE = dict(pmax_w=300.0, vmp_v=32.0, imp_a=9.4, voc_v=39.5, isc_a=9.9, gamma_pmax_pct_per_c=-0.40,
              beta_voc_pct_per_c=-0.30, alpha_isc_pct_per_c=0.05)


@pytest.fixture(scope="module")
def sand_point():
    weather = read_weather_file(PVLIB_DATA / "703165TY.csv")
    geometry = solar_geometry(weather.data.index, weather.latitude, weather.longitude, weather.altitude_m,
                              pressure_pa=weather.data["pressure"], temp_air_c=weather.data["temp_air"])
    return weather, geometry


def _modelchain_dc_kwh(tmy3_name: str, tilt: float, azimuth: float, sapm_set: str) -> float:
    """Annual DC energy of one 300 W module from a separately built pvlib ModelChain, kWh."""
    raw, meta = pvlib.iotools.read_tmy3(PVLIB_DATA / tmy3_name, coerce_year=2023)
    weather = raw[["ghi", "dni", "dhi", "temp_air", "wind_speed"]].copy()
    # TMY3 rows label the hour that ends at the stamp: pvlib's documentation advises evaluating such data at the
    # middle of the interval, so ModelChain gets the stamps moved back by 30 minutes.
    weather.index = weather.index - pd.Timedelta(minutes=30)
    location = pvlib.location.Location(meta["latitude"], meta["longitude"], tz=f"Etc/GMT{-int(meta['TZ']):+d}",
                                       altitude=meta["altitude"])
    system = pvlib.pvsystem.PVSystem(
        surface_tilt=tilt, surface_azimuth=azimuth, albedo=0.2,
        module_parameters={"pdc0": MODULE["pmax_w"], "gamma_pdc": MODULE["gamma_pmax_pct_per_c"] / 100},
        inverter_parameters={"pdc0": MODULE["pmax_w"]},
        temperature_model_parameters=pvlib.temperature.TEMPERATURE_MODEL_PARAMETERS["sapm"][sapm_set])
    chain = pvlib.modelchain.ModelChain(system, location, transposition_model="perez", dc_model="pvwatts",
                                        ac_model="pvwatts", aoi_model="physical", spectral_model="no_loss",
                                        temperature_model="sapm", losses_model="no_loss")
    chain.run_model(weather)
    return float(chain.results.dc.sum()) / 1000


def test_chain_matches_pvlib_modelchain_on_sand_point_tmy3(sand_point):
    # Independent cross-check (docs/references.md): pvlib's shipped Sand Point AK TMY3 (703165TY.csv), tilt 30,
    # azimuth 180, PVWatts DC with the same pdc0 and gamma, SAPM open-rack glass/polymer temperature parameters,
    # Perez transposition, physical AOI on the beam, no other losses (ModelChain applies no IAM to diffuse light,
    # so diffuse_iam=1.0 here): annual DC energy within 2 %.
    weather, geometry = sand_point
    ours = module_output(weather.data, geometry, tilt_deg=30, azimuth_deg=180, mount="rack", losses_pct=0.0,
                         diffuse_iam=1.0, **MODULE)
    ours_kwh = ours.p_dc_w.sum() / 1000  # hourly means in W -> Wh per step
    reference_kwh = _modelchain_dc_kwh("703165TY.csv", 30, 180, "open_rack_glass_polymer")
    assert ours_kwh == pytest.approx(reference_kwh, rel=0.02)
    # Losses scale the DC output linearly, and Marion's diffuse IAM can only remove energy (a few percent).
    lossy = module_output(weather.data, geometry, tilt_deg=30, azimuth_deg=180, mount="rack", losses_pct=10.0,
                          diffuse_iam=1.0, **MODULE)
    assert lossy.p_dc_w.sum() == pytest.approx(0.9 * ours.p_dc_w.sum(), rel=1e-9)
    marion = module_output(weather.data, geometry, tilt_deg=30, azimuth_deg=180, mount="rack", losses_pct=0.0,
                           **MODULE)
    assert 0.93 * ours.p_dc_w.sum() < marion.p_dc_w.sum() < ours.p_dc_w.sum()


def test_chain_matches_modelchain_east_facing_flush_greensboro():
    # Same independent cross-check at another site and orientation: Greensboro NC TMY3 (723170TYA.CSV),
    # tilt 20 facing east (azimuth 90), close-roof-mount glass/glass SAPM parameters ("flush").
    weather = read_weather_file(PVLIB_DATA / "723170TYA.CSV")
    geometry = solar_geometry(weather.data.index, weather.latitude, weather.longitude, weather.altitude_m,
                              pressure_pa=weather.data["pressure"], temp_air_c=weather.data["temp_air"])
    ours = module_output(weather.data, geometry, tilt_deg=20, azimuth_deg=90, mount="flush", losses_pct=0.0,
                         diffuse_iam=1.0, **MODULE)
    reference_kwh = _modelchain_dc_kwh("723170TYA.CSV", 20, 90, "close_mount_glass_glass")
    assert ours.p_dc_w.sum() / 1000 == pytest.approx(reference_kwh, rel=0.02)


def test_horizontal_plane_receives_beam_plus_diffuse(sand_point):
    # For a horizontal surface the Perez model's sky diffuse equals DHI (F1 terms cancel when a/b = 1 below
    # 85 deg zenith; Perez et al. 1990) and no ground is seen: POA = DNI cos(zenith) + DHI.
    weather, geometry = sand_point
    poa = poa_irradiance(weather.data, geometry, 0.0, 180.0)
    cosz = np.cos(np.radians(geometry.apparent_zenith_deg))
    sun_up = geometry.apparent_zenith_deg < 85
    expected = weather.data["dni"].to_numpy() * cosz + weather.data["dhi"].to_numpy()
    np.testing.assert_allclose(poa["poa_global"].to_numpy()[sun_up], expected[sun_up], rtol=1e-6, atol=1e-6)


def test_azimuth_convention_south_beats_north_in_the_north(sand_point):
    # pvlib's convention (180 = south): at 55 N a south-facing 30 deg plane receives far more than a north-facing one.
    weather, geometry = sand_point
    south = poa_irradiance(weather.data, geometry, 30.0, 180.0)["poa_global"].sum()
    north = poa_irradiance(weather.data, geometry, 30.0, 0.0)["poa_global"].sum()
    assert south > 1.3 * north


def test_sapm_cell_temperature_uses_king_2004_parameters():
    # King et al., SAND2004-3535 (2004), Table 1 (from memory, as listed in docs/references.md and in
    # pvlib.temperature.TEMPERATURE_MODEL_PARAMETERS): close roof mount glass/glass a=-2.98, b=-0.0471, dT=1;
    # open rack glass/polymer a=-3.56, b=-0.075, dT=3.
    # T_cell = E exp(a + b WS) + T_air + E/1000 dT at E = 800 W/m2, 25 C air, 2 m/s wind.
    e, t_air, ws = 800.0, 25.0, 2.0
    flush = e * np.exp(-2.98 - 0.0471 * ws) + t_air + e / 1000 * 1
    rack = e * np.exp(-3.56 - 0.075 * ws) + t_air + e / 1000 * 3
    assert cell_temperature([e], [t_air], [ws], "flush")[0] == pytest.approx(flush, abs=1e-9)
    assert cell_temperature([e], [t_air], [ws], "rack")[0] == pytest.approx(rack, abs=1e-9)
    with pytest.raises(InputError, match="mount"):
        cell_temperature([e], [t_air], [ws], "pole")


def test_pvwatts_dc_power_at_stc_and_hot():
    # PVWatts (Dobos 2014, NREL/TP-6A20-62641): P = Pdc0 G/1000 (1 + gamma (Tc - 25)).
    p = module_dc_power_w([1000.0, 1000.0, 500.0], [25.0, 45.0, 25.0], 300.0, -0.40)
    np.testing.assert_allclose(p, [300.0, 300.0 * (1 - 0.004 * 20), 150.0], rtol=1e-12)


def test_module_voltages_follow_the_nec_690_7_correction():
    # NFPA 70 (NEC) 690.7(A)(1): Voc,max = Voc,STC [1 + beta (T_min - 25 C)]; at -10 C with beta -0.30 %/C
    # the 39.5 V module gives 39.5 * (1 + 0.003 * 35) = 43.6475 V. Currents scale with irradiance (common practice).
    out = module_voltages([1000.0, 1000.0, 500.0, 0.0], [25.0, -10.0, 25.0, 25.0], voc_v=39.5, vmp_v=32.0,
                          isc_a=9.9, imp_a=9.4, beta_voc_pct_per_c=-0.30, alpha_isc_pct_per_c=0.05)
    assert out["voc_v"][0] == pytest.approx(39.5) and out["vmp_v"][0] == pytest.approx(32.0)
    assert out["voc_v"][1] == pytest.approx(43.6475)
    assert out["vmp_v"][1] == pytest.approx(32.0 * 1.105)
    assert out["isc_a"][2] == pytest.approx(4.95) and out["imp_a"][2] == pytest.approx(4.7)
    assert out["voc_v"][3] == 0.0 and out["isc_a"][3] == 0.0  # dark module


def test_physical_iam_loses_more_at_grazing_incidence():
    # Fresnel reflection (De Soto et al. 2006, pvlib.iam.physical): ~no loss at normal incidence, large at 80 deg.
    poa = pd.DataFrame({"poa_global": [1000.0, 1000.0], "poa_direct": [1000.0, 1000.0], "poa_diffuse": [0.0, 0.0],
                        "poa_circumsolar": [0.0, 0.0], "poa_isotropic": [0.0, 0.0], "poa_horizon": [0.0, 0.0],
                        "poa_ground_diffuse": [0.0, 0.0], "aoi_deg": [0.0, 80.0]})
    g = effective_irradiance(poa, tilt_deg=30.0)
    assert g[0] == pytest.approx(1000.0 * float(pvlib.iam.physical(0.0)), rel=1e-9)
    assert g[0] > 995.0 and g[1] < 700.0


def test_shading_and_bad_parameters(sand_point):
    weather, geometry = sand_point
    base = module_output(weather.data, geometry, tilt_deg=30, azimuth_deg=180, mount="rack", losses_pct=0.0,
                         **MODULE)
    shaded = module_output(weather.data, geometry, tilt_deg=30, azimuth_deg=180, mount="rack", losses_pct=0.0,
                           shading_loss=1.0, **MODULE)
    assert 0 < shaded.p_dc_w.sum() < base.p_dc_w.sum()  # diffuse light still arrives with the beam fully blocked
    with pytest.raises(InputError, match="tilt_deg"):
        module_output(weather.data, geometry, tilt_deg=120, azimuth_deg=180, mount="rack", losses_pct=0.0, **MODULE)
    with pytest.raises(InputError, match="losses_pct"):
        module_output(weather.data, geometry, tilt_deg=30, azimuth_deg=180, mount="rack", losses_pct=150, **MODULE)
