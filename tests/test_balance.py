"""The energy identity of docs/design.md §4 on random inputs (hypothesis), per step and for the year:

module DC potential + grid import
  = loads served + export + curtailed + clipped + conversion losses + battery losses + ΔE_stored

The identity is written out here from the per-step flows, independently of core.model.metrics, and the
year figure from core.model.metrics is checked against it too.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from hypothesis import given, settings
from hypothesis import strategies as st

from core.model.conversion import controller_output, inverter_curve, microinverter_output
from core.model.dispatch import FLOWS, DispatchInputs, DispatchParams, dispatch
from core.model.metrics import summarise

STEPS = 96


@st.composite
def plant(draw):
    rng = np.random.default_rng(draw(st.integers(0, 2**32 - 1)))
    usable = draw(st.sampled_from([0.0, 500.0, 5_000.0, 20_000.0]))
    reserve_frac = draw(st.floats(0.0, 1.0))
    floor_frac = draw(st.floats(0.0, 1.0)) * reserve_frac
    rating = draw(st.floats(200.0, 10_000.0))
    curve_kind = draw(st.sampled_from(["flat", "curve"]))
    eff = draw(st.floats(0.5, 1.0)) if curve_kind == "flat" else ((0.05, 0.8), (0.3, 0.94), (1.0, 0.91))
    curve = inverter_curve(rating, eff)
    dt_h = draw(st.sampled_from([1.0, 0.25, 1 / 60]))
    p = DispatchParams(
        dt_h=dt_h, usable_wh=usable, initial_wh=usable * draw(st.floats(0.0, 1.0)),
        reserve_wh=usable * reserve_frac, floor_wh=usable * floor_frac,
        charge_max_w=draw(st.floats(0.0, 8_000.0)), discharge_max_w=draw(st.floats(0.0, 8_000.0)),
        roundtrip_efficiency=draw(st.floats(0.5, 1.0)), inverter_ac_w=curve.ac_w, inverter_dc_w=curve.dc_w,
        charger_rating_w=draw(st.floats(0.0, 6_000.0)), charger_efficiency=draw(st.floats(0.5, 1.0)),
        idle_w=draw(st.floats(0.0, 80.0)), standing_draw_w=draw(st.floats(0.0, 100.0)),
        metering_site=draw(st.booleans()), export_allowed=draw(st.booleans()),
        export_limit_w=draw(st.floats(0.0, 3_000.0)), limiter=draw(st.booleans()),
        recharge_reserve_from_grid=draw(st.booleans()),
        # charge taper, discharge limit near empty, the four ways of holding AC output back, the charge window
        taper_start_wh=usable * draw(st.sampled_from([0.5, 0.9, 1.0, np.inf])),
        taper_end_fraction=draw(st.floats(0.0, 1.0)), discharge_taper_wh=usable * draw(st.floats(0.0, 0.3)),
        ac_control=draw(st.integers(0, 3)), relay_open_wh=usable * draw(st.floats(0.5, 1.0)),
        relay_close_wh=usable * draw(st.floats(0.0, 0.5)), reconnect_s=draw(st.sampled_from([0.0, 60.0, 300.0, 7200.0])),
        charge_window_target_wh=usable * draw(st.floats(0.0, 1.0)),
        kibam_c=draw(st.sampled_from([0.0, 0.0, 0.3, 0.9])), kibam_k_per_h=draw(st.floats(0.05, 5.0)))
    scale = draw(st.floats(0.0, 3.0))
    dc_mod = rng.uniform(0, 4000, STEPS) * scale * (rng.random(STEPS) < 0.6)
    ac_mod = rng.uniform(0, 450, STEPS) * scale
    dc = controller_output(dc_mod, efficiency=0.97, max_charge_current_a=50, battery_nominal_v=48)
    acb = microinverter_output(ac_mod, modules=3, efficiency=0.96, ac_rating_w=350, max_dc_input_w=400, inputs=1)
    acg = microinverter_output(ac_mod * 0.8, modules=2, efficiency=0.95, ac_rating_w=700, max_dc_input_w=800, inputs=2)
    inputs = DispatchInputs(
        load_backed_w=rng.uniform(0, 3000, STEPS) * draw(st.floats(0, 2)), load_grid_only_w=rng.uniform(0, 2000, STEPS),
        dc_out_w=dc.out_w, dc_loss_w=dc.loss_w, ac_backed_out_w=acb.out_w, ac_backed_loss_w=acb.loss_w,
        ac_grid_out_w=acg.out_w, ac_grid_loss_w=acg.loss_w, grid_up=rng.random(STEPS) > draw(st.floats(0, 1)),
        charge_window=(rng.random(STEPS) < 0.3).astype(float))
    potential = dc_mod + 3 * ac_mod + 2 * ac_mod * 0.8
    clipped = dc.clipped_w + acb.clipped_w + acg.clipped_w
    return p, inputs, potential, clipped


@settings(max_examples=150, deadline=None)
@given(plant())
def test_energy_identity_holds_every_step_and_for_the_year(case):
    p, inputs, potential, clipped = case
    r = dispatch(inputs, p)
    f = {name: r[name] for name in FLOWS}
    previous = np.concatenate([[p.initial_wh], f["soc_wh"][:-1]])
    stored_change_w = (f["soc_wh"] - previous) / p.dt_h
    curtailed = f["curtailed_dc_w"] + f["curtailed_ac_backed_w"] + f["curtailed_ac_grid_w"]
    conversion = (f["controller_loss_w"] + f["ac_backed_conversion_loss_w"] + f["ac_grid_conversion_loss_w"] + f["inverter_loss_w"]
                  + f["idle_w"] + f["charger_loss_w"])
    left = potential + f["grid_import_w"]
    right = (f["load_served_w"] + f["export_allowed_w"] + f["export_uncontrolled_w"] + curtailed + clipped
             + conversion + f["battery_loss_w"] + stored_change_w)
    scale = max(1.0, float(np.abs(left).max()))
    assert np.abs(left - right).max() <= 1e-6 * scale
    year_scale = max(1.0, float(left.sum()))
    assert abs(left.sum() - right.sum()) <= 1e-6 * year_scale
    # No flow is negative, the SOC stays inside the battery, served never exceeds the load.
    for name in FLOWS:
        assert f[name].min() >= -1e-9, name
    assert f["soc_wh"].max() <= p.usable_wh + 1e-9
    # Unserved splits into backed-up load not served and grid-only load shed by design; the kinds of AC
    # curtailment are parts of the AC curtailment.
    np.testing.assert_allclose(f["unserved_backed_up_w"] + f["shed_grid_only_w"], f["unserved_w"], atol=1e-9)
    kinds = f["curtailed_limiter_w"] + f["curtailed_fw_w"] + f["curtailed_relay_w"] + f["curtailed_wait_w"]
    assert np.all(kinds <= f["curtailed_ac_backed_w"] + f["curtailed_ac_grid_w"] + 1e-6)
    assert np.all(f["load_served_w"] + f["unserved_w"]
                  <= inputs.load_backed_w + inputs.load_grid_only_w + 1e-6)

    # The year's balance error as core.model.metrics reports it agrees.
    index = pd.date_range("2023-06-01", periods=STEPS, freq=pd.Timedelta(hours=p.dt_h), tz="UTC")
    steps = pd.DataFrame({name: f[name] for name in FLOWS}, index=index).assign(
        load_backed_w=inputs.load_backed_w, load_grid_only_w=inputs.load_grid_only_w, grid_up=inputs.grid_up,
        pv_potential_dc_w=potential, pv_potential_ac_w=0.0, clipped_dc_w=clipped, clipped_ac_w=0.0,
        ac_backed_out_w=inputs.ac_backed_out_w, ac_grid_out_w=inputs.ac_grid_out_w)
    res = summarise(steps, dt_h=p.dt_h, initial_wh=p.initial_wh, usable_wh=p.usable_wh,
                    daylight=np.ones(STEPS, dtype=bool))
    assert abs(res.energy_kwh["balance_error"]) <= 1e-6 * max(1.0, res.energy_kwh["pv_potential"]
                                                             + res.energy_kwh["grid_import"])
