"""Hand-worked dispatch cases: one or two steps whose flows are worked out in the comments.

The rules are docs/design.md §4. Unless a case says otherwise: Δt = 1 h, battery 10 000 Wh usable,
round-trip efficiency 0.81 (so charge and discharge are each √0.81 = 0.9), inverter efficiency 0.9
flat, charger efficiency 0.9, standing draw 30 W, site metering, zero export, no limiter, no idle draw.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from core.model.conversion import inverter_curve
from core.model.dispatch import FLOWS, DispatchInputs, DispatchParams, dispatch

ETA = 0.9


def params(**changes) -> DispatchParams:
    curve = inverter_curve(3000.0, ETA)
    base = DispatchParams(
        dt_h=1.0, usable_wh=10_000.0, initial_wh=5_000.0, reserve_wh=2_000.0, floor_wh=500.0,
        charge_max_w=5_000.0, discharge_max_w=5_000.0, roundtrip_efficiency=ETA**2,
        inverter_ac_w=curve.ac_w, inverter_dc_w=curve.dc_w, charger_rating_w=2_000.0, charger_efficiency=ETA,
        idle_w=0.0, standing_draw_w=30.0, metering_site=True, export_allowed=False, export_limit_w=0.0,
        limiter=False, recharge_reserve_from_grid=False)
    return dataclasses.replace(base, **changes)


def step(*, lb=0.0, lg=0.0, dc=0.0, acb=0.0, acg=0.0, up=True, p=None):
    inputs = DispatchInputs(
        load_backed_w=np.array([lb]), load_grid_only_w=np.array([lg]), dc_out_w=np.array([dc]),
        dc_loss_w=np.zeros(1), ac_backed_out_w=np.array([acb]), ac_backed_loss_w=np.zeros(1),
        ac_grid_out_w=np.array([acg]), ac_grid_loss_w=np.zeros(1), grid_up=np.array([up]))
    r = dispatch(inputs, p or params())
    return {name: float(r[name][0]) for name in FLOWS}




approx = pytest.approx


def test_deficit_met_by_dc_pv_then_battery():
    # N = 1030 W > standing draw 30 W → inverter delivers 1030 − 30 = 1000 W AC,
    # needing 1000 / 0.9 = 1111.11 W DC: 500 W from DC PV, 611.11 W from the battery.
    # Stored energy falls by 611.11 / 0.9 = 679.01 Wh: 5000 → 4320.99 Wh. Grid supplies the 30 W standing draw.
    f = step(lb=1030.0, dc=500.0)
    assert f["inverter_ac_w"] == approx(1000.0)
    assert f["battery_discharge_w"] == approx(611.111, abs=1e-3)
    assert f["soc_wh"] == approx(5000.0 - 611.111 / 0.9, abs=1e-3)
    assert f["grid_import_w"] == approx(30.0)
    assert f["grid_import_standing_w"] == approx(30.0)


def test_reserve_is_held_while_the_grid_is_up():
    # At the reserve (2000 Wh) the battery gives nothing: the whole 1030 W comes from the grid.
    f = step(lb=1030.0, p=params(initial_wh=2000.0))
    assert f["battery_discharge_w"] == approx(0.0)
    assert f["grid_import_w"] == approx(1030.0)
    assert f["soc_wh"] == approx(2000.0)
    # 100 Wh above the reserve: at most 100 × 0.9 = 90 W reaches the bus, 90 × 0.9 = 81 W AC;
    # the grid supplies 1030 − 81 = 949 W and the SOC ends exactly at the reserve.
    f = step(lb=1030.0, p=params(initial_wh=2100.0))
    assert f["inverter_ac_w"] == approx(81.0)
    assert f["grid_import_w"] == approx(949.0)
    assert f["soc_wh"] == approx(2000.0)


def test_floor_is_used_during_an_outage():
    # Grid down: the reserve no longer holds, the floor (500 Wh) does. Backed-up load 530 W needs
    # 530 / 0.9 = 588.89 W DC from the battery → 588.89 / 0.9 = 654.32 Wh: 2100 → 1445.68 Wh.
    # The 200 W grid-only load is dropped (unserved).
    f = step(lb=530.0, lg=200.0, up=False, p=params(initial_wh=2100.0))
    assert f["load_served_w"] == approx(530.0)
    assert f["unserved_w"] == approx(200.0)
    assert f["soc_wh"] == approx(2100.0 - 530.0 / 0.9 / 0.9, abs=1e-3)
    assert f["grid_import_w"] == 0.0


def test_ac_surplus_is_absorbed_by_the_battery():
    # Backed-up microinverters give 1000 W, load 300 W: N = −700 W, S = 30 − (−700) = 730 W.
    # The charger takes all 730 W AC (rating 2000 W): 730 × 0.9 = 657 W into the battery,
    # stored 657 × 0.9 = 591.3 Wh. The grid stays at the 30 W standing draw; nothing is exported.
    f = step(lb=300.0, acb=1000.0)
    assert f["charger_ac_w"] == approx(730.0)
    assert f["battery_charge_w"] == approx(657.0)
    assert f["soc_wh"] == approx(5000.0 + 591.3)
    assert f["grid_import_w"] == approx(30.0)
    assert f["export_uncontrolled_w"] == 0.0
    # Of the 730 W absorbed, 700 W is AC-coupled PV surplus and 30 W is the standing draw from the grid.
    assert f["pv_to_battery_w"] == approx(700.0 * 0.9)
    assert f["grid_to_battery_w"] == approx(30.0 * 0.9)


def test_surplus_beyond_the_charger_is_uncontrolled_export_without_a_limiter():
    # Charger limited to 500 W: of S = 730 W, 230 W stays on the AC side. Grid = 30 − 230 = −200 W:
    # 200 W flows out although export is not allowed → uncontrolled export.
    f = step(lb=300.0, acb=1000.0, p=params(charger_rating_w=500.0))
    assert f["charger_ac_w"] == approx(500.0)
    assert f["export_uncontrolled_w"] == approx(200.0)
    assert f["grid_import_w"] == 0.0


def test_surplus_beyond_the_charger_is_curtailed_by_a_limiter():
    # Same step with an AC export limiter: the 200 W is curtailed at the microinverters instead.
    f = step(lb=300.0, acb=1000.0, p=params(charger_rating_w=500.0, limiter=True))
    assert f["export_uncontrolled_w"] == 0.0
    assert f["curtailed_ac_backed_w"] == approx(200.0)
    assert f["ac_backed_used_w"] == approx(800.0)
    assert f["grid_import_w"] == approx(0.0)


def test_full_battery_sends_the_whole_surplus_out():
    # Battery full: nothing can be absorbed; grid = N = 300 − 1000 = −700 W, all uncontrolled.
    f = step(lb=300.0, acb=1000.0, p=params(initial_wh=10_000.0))
    assert f["export_uncontrolled_w"] == approx(700.0)


def test_export_allowed_up_to_the_limit():
    # Export allowed up to 100 W, battery full: of the 700 W surplus 100 W is allowed export;
    # with a limiter the other 600 W is curtailed, without one it is uncontrolled export.
    p = params(initial_wh=10_000.0, export_allowed=True, export_limit_w=100.0)
    f = step(lb=300.0, acb=1000.0, p=dataclasses.replace(p, limiter=True))
    assert f["export_allowed_w"] == approx(100.0)
    assert f["curtailed_ac_backed_w"] == approx(600.0)
    assert f["export_uncontrolled_w"] == 0.0
    f = step(lb=300.0, acb=1000.0, p=p)
    assert f["export_allowed_w"] == approx(100.0)
    assert f["export_uncontrolled_w"] == approx(600.0)


def test_dc_surplus_is_exported_when_allowed_and_curtailed_when_not():
    # Battery full, DC PV 2000 W, load 530 W. The inverter covers 500 W (530 − 30 standing draw)
    # with 555.56 W DC. Zero export: the other 1444.44 W DC is curtailed at the controllers.
    full = params(initial_wh=10_000.0)
    f = step(lb=530.0, dc=2000.0, p=full)
    assert f["curtailed_dc_w"] == approx(2000.0 - 500.0 / 0.9, abs=1e-6)
    assert f["grid_import_w"] == approx(30.0)
    # Export allowed up to 200 W: the inverter adds 30 W (cancelling the standing draw) + 200 W export
    # = 230 W AC more, 255.56 W DC; the rest, 2000 − 555.56 − 255.56 = 1188.89 W, is curtailed.
    f = step(lb=530.0, dc=2000.0, p=dataclasses.replace(full, export_allowed=True, export_limit_w=200.0))
    assert f["export_allowed_w"] == approx(200.0)
    assert f["grid_import_w"] == approx(0.0)
    assert f["curtailed_dc_w"] == approx(2000.0 - 730.0 / 0.9, abs=1e-6)


def test_standing_draw_is_imported_even_with_plenty_of_pv():
    # DC PV 5000 W, battery full, load 530 W: the controller still holds the grid at +30 W.
    f = step(lb=530.0, dc=5000.0, p=params(initial_wh=10_000.0))
    assert f["grid_import_w"] == approx(30.0)
    assert f["grid_import_standing_w"] == approx(30.0)


def test_reserve_is_recharged_from_the_grid():
    # SOC 1800 Wh, below the 2000 Wh reserve, no PV: the 530 W load comes from the grid, and the
    # charger lifts the SOC back: 200 Wh stored needs 200 / 0.9 = 222.22 W DC, 222.22 / 0.9 = 246.91 W AC.
    f = step(lb=530.0, p=params(initial_wh=1800.0, recharge_reserve_from_grid=True))
    assert f["soc_wh"] == approx(2000.0)
    assert f["grid_import_w"] == approx(530.0 + 200.0 / 0.81, abs=1e-6)
    assert f["grid_to_battery_w"] == approx(200.0 / 0.9, abs=1e-6)
    # Without the option the SOC stays below the reserve.
    f = step(lb=530.0, p=params(initial_wh=1800.0))
    assert f["soc_wh"] == approx(1800.0)


def test_unserved_when_the_inverter_rating_runs_out_in_an_outage():
    # Outage, 4000 W backed-up load on a 3000 W inverter: 1000 W unserved even with a full battery.
    f = step(lb=4000.0, up=False)
    assert f["load_served_w"] == approx(3000.0)
    assert f["unserved_w"] == approx(1000.0)


def test_unserved_when_the_battery_runs_out_in_an_outage():
    # Outage, SOC 1000 Wh, floor 500 Wh: at most 500 × 0.9 = 450 W DC → 405 W AC for a 1000 W load:
    # 595 W unserved, SOC ends at the floor.
    f = step(lb=1000.0, up=False, p=params(initial_wh=1000.0))
    assert f["load_served_w"] == approx(405.0)
    assert f["unserved_w"] == approx(595.0)
    assert f["soc_wh"] == approx(500.0)


def test_outage_surplus_is_curtailed_by_frequency_watt_and_grid_side_pv_stops():
    # Outage, battery full: backed-up micros give 800 W for a 300 W load; the 500 W surplus cannot be
    # stored, so the inverter-charger shifts frequency and the micros curtail it. Grid-side micros
    # (400 W) stop by anti-islanding: curtailed too. Nothing is exported.
    f = step(lb=300.0, acb=800.0, acg=400.0, up=False, p=params(initial_wh=10_000.0))
    assert f["curtailed_ac_backed_w"] == approx(500.0)
    assert f["curtailed_ac_grid_w"] == approx(400.0)
    assert f["export_uncontrolled_w"] == 0.0
    assert f["load_served_w"] == approx(300.0)


def test_inverter_metering_cannot_see_grid_side_pv():
    # Metering at the inverter: the controller sees only N = L_b − H_acb = 300 W and delivers 270 W;
    # 500 W from grid-side micros with no grid-side load leaves the site: 30 − 500 = −470 W,
    # uncontrolled export.
    f = step(lb=300.0, acg=500.0, p=params(metering_site=False))
    assert f["inverter_ac_w"] == approx(270.0)
    assert f["export_uncontrolled_w"] == approx(470.0)
    # With site metering the same step is absorbed: N = 300 − 500 = −200, S = 230 into the battery.
    f = step(lb=300.0, acg=500.0)
    assert f["export_uncontrolled_w"] == 0.0
    assert f["charger_ac_w"] == approx(230.0)


def test_idle_draw_that_cannot_be_met_in_an_outage_switches_the_inverter_off():
    # Outage, battery at the floor, no DC PV, idle 30 W: the inverter-charger cannot run. Backed-up
    # loads are unserved and the backed-up micros (200 W) stop with it.
    f = step(lb=100.0, acb=200.0, up=False, p=params(initial_wh=500.0, idle_w=30.0))
    assert f["unserved_w"] == approx(100.0)
    assert f["curtailed_ac_backed_w"] == approx(200.0)
    assert f["idle_w"] == 0.0


def test_idle_draw_comes_from_dc_pv_first_then_battery_then_grid():
    # Idle 30 W with 20 W DC PV: 20 W from PV, 10 W from the battery (above the reserve).
    f = step(dc=20.0, p=params(idle_w=30.0))
    assert f["battery_discharge_w"] == approx(10.0)
    # At the reserve with no PV: the 30 W comes from the grid through the charger: 30 / 0.9 = 33.33 W AC.
    f = step(lb=0.0, p=params(idle_w=30.0, initial_wh=2000.0, standing_draw_w=0.0))
    assert f["grid_import_w"] == approx(30.0 / 0.9)


def test_compiled_and_plain_loop_agree():
    # The compiled kernel and the same code run as plain Python must agree to 1e-9 (issue: speed).
    rng = np.random.default_rng(3)
    n = 2000
    inputs = DispatchInputs(
        load_backed_w=rng.uniform(0, 2000, n), load_grid_only_w=rng.uniform(0, 800, n),
        dc_out_w=rng.uniform(0, 3000, n) * (rng.random(n) < 0.5), dc_loss_w=rng.uniform(0, 50, n),
        ac_backed_out_w=rng.uniform(0, 900, n), ac_backed_loss_w=rng.uniform(0, 30, n),
        ac_grid_out_w=rng.uniform(0, 500, n), ac_grid_loss_w=rng.uniform(0, 20, n), grid_up=rng.random(n) > 0.1)
    p = params(idle_w=25.0, recharge_reserve_from_grid=True, limiter=True, export_allowed=True, export_limit_w=150.0)
    fast = dispatch(inputs, p, compiled=True).flows
    slow = dispatch(inputs, p, compiled=False).flows
    np.testing.assert_allclose(fast, slow, rtol=0, atol=1e-9)
