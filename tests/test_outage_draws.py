"""Outages as statistics: the fast outage masks, the draws through the batched engine, and convergence."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np
import pytest

from core.analyses.outage_draws import grid_masks, outage_draws
from core.model import outages
from core.scenario import load_scenario
from core.simulate import OrientationCache, prepare_site, simulate, source_power
from core.timebase import nominal_index

SAMPLE = Path(__file__).resolve().parents[1] / "sample_sites" / "maple_hollow" / "scenario.toml"


@pytest.mark.parametrize("step_s", [3600, 900, 60])
@pytest.mark.parametrize("seed", [0, 7, 12345])
def test_fast_mask_equals_the_timestamp_path(step_s, seed):
    import datetime as dt

    index = nominal_index(step_s, dt.timezone(dt.timedelta(hours=-5)))
    intervals = outages.random_outages(index, per_year=20.0, mean_hours=5.0, seed=seed)
    slow = outages.grid_up_mask(index, intervals)
    fast = outages.random_outage_mask(len(index), step_s, per_year=20.0, mean_hours=5.0, seed=seed)
    np.testing.assert_array_equal(fast, slow)


@pytest.fixture(scope="module")
def maple():
    sc = load_scenario(SAMPLE)
    sc = sc.replace(grid=dataclasses.replace(sc.grid, random_outages=dataclasses.replace(
        sc.grid.random_outages, per_year=12.0, mean_hours=8.0)))
    site = prepare_site(sc)
    cache = OrientationCache()
    return sc, site, cache, source_power(sc, site, cache)


def test_draw_zero_is_the_year_the_results_show(maple):
    sc, site, cache, src = maple
    np.testing.assert_array_equal(grid_masks(sc, site, 0, 1)[0], site.grid_up)
    d = outage_draws(sc, site, src, draws=3)
    year = simulate(sc, site, cache).results.energy_kwh
    assert d.unserved_backed_up_kwh[0] == pytest.approx(year["unserved_backed_up"], abs=1e-9)
    assert d.shed_grid_only_kwh[0] == pytest.approx(year["shed_grid_only"], abs=1e-9)


def test_p50_over_200_draws_is_near_p50_over_2000(maple):
    # Convergence: the median of 200 independent outage years lies within 25 % (or 0.5 kWh, whichever is
    # larger) of the median of 2 000 — the tolerance a median of 200 draws of a skewed distribution meets
    # comfortably (its standard error is about 1.25 σ/√200 ≈ 0.09 σ for a normal distribution).
    sc, site, _, src = maple
    few = outage_draws(sc, site, src, draws=200).to_dict()
    many = outage_draws(sc, site, src, draws=2000).to_dict()
    for key in ("unserved_backed_up_kwh", "shed_grid_only_kwh"):
        a, b = few[key]["p50"], many[key]["p50"]
        assert abs(a - b) <= max(0.25 * b, 0.5), key
    assert many["draws"] == 2000 and many["unserved_backed_up_kwh"]["worst"] >= many["unserved_backed_up_kwh"]["p90"]


def test_the_distribution_chart_is_a_valid_specification(maple):
    from explorer import charts

    sc, site, _, src = maple
    d = outage_draws(sc, site, src, draws=50)
    s = d.to_dict()["unserved_backed_up_kwh"]
    spec = charts.outage_draws_chart(d.unserved_backed_up_kwh, s["p50"], s["p90"]).to_dict(validate=True)
    rows = next(iter(spec["datasets"].values()))
    assert sum(r["years"] for r in rows) == 50  # every draw falls in one bar
    assert "unserved" in spec["title"]["text"]


def test_momentary_interruptions_worked_by_hand():
    # Two a month = 24 a year. Grid-side microinverters averaging 150 W over the year wait IEEE 1547-2018's
    # default 300 s after each: 24 × 150 W × 300 s = 0.3 kWh. Grid-only loads averaging 500 W come back after
    # 120 s: 24 × 500 W × 120 s = 0.4 kWh. A 20 ms transfer lies on the ITI (CBEMA) curve's 20 ms at zero voltage:
    # computers ride through; 30 ms does not.
    from core.model.conversion import RECONNECT_DELAY_S

    m = outages.momentary_effects(per_year=24.0, transfer_ms=20.0, mean_grid_side_pv_w=150.0,
                                  mean_grid_only_load_w=500.0, reconnect_s=RECONNECT_DELAY_S["ieee1547_2018"],
                                  restore_delay_s=120.0)
    assert m["grid_side_pv_lost_kwh"] == pytest.approx(0.3)
    assert m["grid_only_shed_kwh"] == pytest.approx(0.4)
    assert m["backed_up_loads_ride_through"] and m["backed_up_resets_per_year"] == 0.0
    slow = outages.momentary_effects(per_year=24.0, transfer_ms=30.0, mean_grid_side_pv_w=0.0,
                                     mean_grid_only_load_w=0.0, reconnect_s=60.0, restore_delay_s=0.0)
    assert not slow["backed_up_loads_ride_through"] and slow["backed_up_resets_per_year"] == 24.0


def test_restore_delay_after_an_outage_worked_by_hand():
    # Hourly steps, grid down in steps 1–2, back in step 3; grid-only load 1 000 W; restore delay 5 400 s = 1.5 h:
    # all of step 3 and half of step 4 stay off: 1 500 Wh.
    up = np.array([True, False, False, True, True, True])
    wh = outages.restore_delay_shed_wh(up, np.full(6, 1000.0), step_s=3600, restore_delay_s=5400.0)
    assert wh == pytest.approx(1500.0)


def test_seasonal_outages_start_only_in_their_months_and_both_paths_agree():
    import datetime as dt

    index = nominal_index(3600, dt.UTC)
    weights = [0] * 6 + [1, 2] + [0] * 4  # July and August only, August twice as likely per day
    intervals = outages.random_outages(index, per_year=300.0, mean_hours=1.0, seed=4, month_weights=weights)
    months = np.array([s.month for s, _ in intervals])
    assert set(months) <= {7, 8}
    # 31-day months: August's share ≈ 2/3 (binomial, about 300 draws: well within ± 0.1)
    assert abs(np.mean(months == 8) - 2 / 3) < 0.1
    fast = outages.random_outage_mask(len(index), 3600, per_year=300.0, mean_hours=1.0, seed=4, month_weights=weights)
    np.testing.assert_array_equal(fast, outages.grid_up_mask(index, intervals))
