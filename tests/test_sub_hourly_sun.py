"""The year at the load's own step, with synthetic minutes inside each hour of the weather file."""

import dataclasses
from pathlib import Path

import numpy as np
import pvlib

from core.scenario import load_scenario
from core.simulate import prepare_site, simulation_step_s

SAMPLE = Path(__file__).resolve().parents[1] / "sample_sites" / "maple_hollow" / "scenario.toml"


def test_default_step_is_the_loads_own():
    assert simulation_step_s(None, 3600, [900]) == 900
    assert simulation_step_s(None, 3600, []) == 3600
    assert simulation_step_s(3600, 3600, [900]) == 3600  # hourly stays one choice away


def test_synthetic_year_keeps_every_hour_of_the_tmy3_file():
    # NREL TMY3 Greensboro NC (pvlib's data folder): each hour's GHI as pvlib reads it is the mean of our four
    # synthetic quarter-hours, to 1e-9 W/m2.
    sc = load_scenario(SAMPLE)
    site = prepare_site(sc)
    assert site.step_s == 900 and "synthetic" in site.weather.source
    data, _ = pvlib.iotools.read_tmy3(SAMPLE.parent / "723170TYA.CSV", map_variables=True)
    hourly = site.weather.data["ghi"].to_numpy().reshape(-1, 4).mean(axis=1)
    # The file's hours are labelled by their end; the nominal year starts with the hour ending 01:00.
    np.testing.assert_allclose(hourly, data["ghi"].to_numpy(dtype=float), rtol=0, atol=1e-9)
    smooth = prepare_site(dataclasses.replace(
        sc, simulation=dataclasses.replace(sc.simulation, sub_hourly_sun="smooth")))
    assert "interpolated" in smooth.weather.source
    fine_s, fine_y = smooth.weather.data["ghi"].to_numpy(), site.weather.data["ghi"].to_numpy()
    # Broken-cloud hours vary more inside the hour than the smooth curve lets them.
    assert np.abs(np.diff(fine_y)).sum() > 1.2 * np.abs(np.diff(fine_s)).sum()
