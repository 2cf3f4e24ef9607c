"""Resolution check: an hourly model cannot see more AC-coupled surplus than the native step does (Jensen's
inequality for max(0, x)), and with a load that switches within the hour it sees less."""

from __future__ import annotations

import numpy as np
import pytest
from expansion_cases import hand_scenario, synthetic_site

from core.analyses.options import Layout, with_option
from core.analyses.resolution import ac_surplus, compare_resolutions, resolution_check

approx = pytest.approx


def test_a_load_that_switches_within_the_hour_hides_surplus_from_an_hourly_model():
    # Each hour: 45 minutes at 100 W and 15 minutes at 1500 W (hourly mean 450 W). Two 400 W modules on
    # microinverters give up to about 600 W at midday: hourly, the surplus is about 600 − 450 = 150 W; at the
    # 15-minute step it is about 500 W for three quarters of the hour (≈ 375 W mean). The hourly model's load is the
    # exact block mean of the native one.
    days, step = 2, 900
    per_hour = np.array([100.0, 100.0, 100.0, 1500.0])
    native_load = np.tile(per_hour, days * 24)
    native = synthetic_site(days=days, step_s=step, load_backed_w=native_load)
    hourly = synthetic_site(days=days, step_s=3600, load_backed_w=native_load.reshape(-1, 4).mean(axis=1))
    sc = with_option(hand_scenario(battery_kwh=1.0, initial_pct=90.0, reserve_pct=20.0), "ac_backed_up",
                     Layout(2, 30, 180))
    r = compare_resolutions(sc, native, hourly, option="ac_backed_up")
    assert r.applicable and r.native_step_s == 900
    assert r.native.energy_kwh["load"] == approx(r.hourly.energy_kwh["load"], rel=1e-9)
    assert r.hidden["ac_surplus_kwh"] > 0.5  # several midday hours × a few hundred W × 2 days
    assert r.hidden["ac_surplus_hours"] > 0
    assert r.hidden["exported_uncontrolled_kwh"] > 0  # a 1 kWh battery fills; the hidden surplus leaks
    assert "hides" in r.sentence
    # Jensen per hour, computed directly from the native steps: mean of positive parts ≥ positive part of means.
    s = (r.native_surplus, r.hourly_surplus)
    assert s[0]["ac_surplus_kwh"] >= s[1]["ac_surplus_kwh"]


def test_ac_surplus_by_hand():
    import pandas as pd

    steps = pd.DataFrame({"ac_backed_out_w": [0.0, 600.0, 600.0], "ac_grid_out_w": [0.0, 0.0, 200.0],
                          "load_backed_w": [100.0, 100.0, 1000.0], "load_grid_only_w": [0.0, 0.0, 0.0]})
    out = ac_surplus(steps, 0.25)
    assert out["ac_surplus_kwh"] == approx(500.0 * 0.25 / 1000.0)  # only the middle step: 500 W for 15 min
    assert out["ac_surplus_hours"] == approx(0.25) and out["ac_surplus_peak_w"] == approx(500.0)


def test_maple_hollow_fifteen_minute_loads():
    # The sample site's loads are measured every 15 minutes; the native step is read from the load file.
    from pathlib import Path

    from core.scenario import load_scenario

    sc = load_scenario(Path(__file__).parents[1] / "sample_sites" / "maple_hollow" / "scenario.toml")
    r = resolution_check(sc, "ac_backed_up")
    assert r.native_step_s == 900 and r.applicable
    assert r.native.energy_kwh["load"] == approx(r.hourly.energy_kwh["load"], rel=5e-3)
    assert r.hidden["ac_surplus_kwh"] > 0
    assert r.hidden["ac_surplus_hours"] > 0
