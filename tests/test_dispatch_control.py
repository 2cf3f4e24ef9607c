"""Hand-worked cases for charge acceptance, the four ways AC-coupled output is held back, reconnect delays and
grid charging by the clock.

Base plant as in tests/test_dispatch.py: Δt = 1 h, 10 000 Wh usable, charge and discharge efficiency each 0.9,
inverter 0.9 flat, charger 0.9 and 2 000 W, standing draw 30 W, site metering, zero export.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from core.model.dispatch import AC_CONTROL_CODES, FLOWS, DispatchInputs, dispatch
from tests.test_dispatch import params

approx = pytest.approx


def run(*, lb, acb=0.0, acg=0.0, up=True, window=0.0, p):
    n = len(np.atleast_1d(lb))
    z = np.zeros(n)

    def a(x):
        return np.broadcast_to(np.asarray(x, dtype=float), (n,)).copy()

    r = dispatch(DispatchInputs(load_backed_w=a(lb), load_grid_only_w=z, dc_out_w=z, dc_loss_w=z,
                                ac_backed_out_w=a(acb), ac_backed_loss_w=z, ac_grid_out_w=a(acg), ac_grid_loss_w=z,
                                grid_up=np.broadcast_to(np.asarray(up, dtype=bool), (n,)).copy(),
                                charge_window=a(window)), p)
    return {name: r[name] for name in FLOWS}


def mode(name, **changes):
    return params(ac_control=AC_CONTROL_CODES[name], **changes)


# A sunny hour with the battery full: 1 500 W from backed-up microinverters, 500 W of load.
# N = 500 − 1 500 = −1 000 W; the charger can absorb nothing (the battery is full).
FULL = dict(initial_wh=10_000.0, relay_open_wh=9_500.0, relay_close_wh=8_500.0)


def test_none_leaks_the_surplus():
    f = run(lb=500.0, acb=1500.0, p=mode("none", **FULL))
    assert f["export_uncontrolled_w"][0] == approx(1000.0)
    assert f["curtailed_ac_backed_w"][0] == approx(0.0)


def test_limiter_curtails_the_surplus():
    # The limiter holds export at zero: 1 000 W of the microinverters are curtailed; the standing draw is not met.
    f = run(lb=500.0, acb=1500.0, p=mode("limiter", **FULL))
    assert f["export_uncontrolled_w"][0] == approx(0.0)
    assert f["curtailed_limiter_w"][0] == approx(1000.0)
    assert f["ac_backed_used_w"][0] == approx(500.0)


def test_islanded_curtails_by_frequency_watt_and_nothing_reaches_the_grid():
    # Above the reserve with no deficit the backed-up side stays off-grid: the 1 000 W it cannot use are
    # curtailed by frequency-watt; the grid sees neither import nor export.
    f = run(lb=500.0, acb=1500.0, p=mode("islanded", **FULL))
    assert f["islanded"][0] == 1.0
    assert f["curtailed_fw_w"][0] == approx(1000.0)
    assert f["export_uncontrolled_w"][0] == approx(0.0) and f["grid_import_w"][0] == approx(0.0)
    assert f["load_served_w"][0] == approx(500.0)


def test_islanded_connects_below_the_reserve():
    # At the reserve (2 000 Wh) it connects: the load is served from the grid as in "none".
    f = run(lb=500.0, p=mode("islanded", initial_wh=2000.0))
    assert f["islanded"][0] == 0.0
    assert f["grid_import_w"][0] == approx(500.0)


def test_relay_opens_when_full_and_reconnects_after_the_delay():
    # Step 1: SOC 9 600 Wh ≥ 9 500 → the relay opens; all 1 000 W of microinverter output is held back, and the
    # 1 500 W load is served from the battery: 1 470 W AC (30 W standing draw from the grid) = 1 633.3 W DC,
    # 1 814.8 Wh out of the store → 7 785.2 Wh.
    # Step 2: 7 785.2 ≤ 8 500 → the relay closes; with a 1 800 s reconnect delay the microinverters produce for
    # half of the hour: 500 W of their 1 000 W is lost to the wait.
    p = mode("relay", initial_wh=9_600.0, relay_open_wh=9_500.0, relay_close_wh=8_500.0, reconnect_s=1800.0)
    f = run(lb=np.array([1500.0, 0.0]), acb=1000.0, p=p)
    assert f["curtailed_relay_w"][0] == approx(1000.0)
    assert f["inverter_ac_w"][0] == approx(1470.0)
    assert f["soc_wh"][0] == approx(9600.0 - 1470.0 / 0.9 / 0.9, abs=1e-6)
    assert f["curtailed_relay_w"][1] == approx(0.0)
    assert f["curtailed_wait_w"][1] == approx(500.0)
    assert f["ac_backed_used_w"][1] == approx(500.0)


def test_grid_side_microinverters_wait_after_an_outage():
    # Grid down in step 1 (anti-islanding stops them), back in step 2: a 1 800 s wait costs half of the hour.
    f = run(lb=np.array([0.0, 0.0]), acg=1000.0, up=np.array([False, True]), p=params(reconnect_s=1800.0))
    assert f["curtailed_ac_grid_w"][0] == approx(1000.0)
    assert f["curtailed_wait_w"][1] == approx(500.0)
    assert f["ac_grid_used_w"][1] == approx(500.0)


def test_taper_absorbs_at_60_pct_and_leaks_at_97_pct():
    # Δt = 15 min, charger 5 000 W, charge limit 5 000 W, knee at 9 000 Wh, 5 % at full; 3 000 W AC surplus.
    p = dict(dt_h=0.25, charger_rating_w=5000.0, taper_start_wh=9000.0, taper_end_fraction=0.05)
    # At 6 000 Wh the knee is 3 000 / (0.9 × 5 000) = 0.67 h away: full acceptance, the whole 3 030 W is absorbed.
    f = run(lb=0.0, acb=3000.0, p=params(initial_wh=6000.0, **p))
    assert f["charger_ac_w"][0] == approx(3030.0)
    assert f["export_uncontrolled_w"][0] == approx(0.0)
    # At 9 700 Wh: acceptance falls 5 000 × 0.95 / 1 000 = 4.75 W per Wh and would reach zero at
    # E* = 9 000 + 5 000 / 4.75 = 10 052.63 Wh; over the step E = E* − (E* − 9 700)·exp(−0.9 × 4.75 × 0.25)
    # = 10 052.63 − 352.63 × 0.34342 = 9 931.53 Wh, a mean of (9 931.53 − 9 700) / (0.9 × 0.25) = 1 029.0 W on the
    # bus = 1 143.3 W AC. The other 3 000 − 1 143.3 = 1 856.7 W leak.
    e_star = 9000.0 + 5000.0 / 4.75
    mean_bus = (e_star - (e_star - 9700.0) * math.exp(-0.9 * 4.75 * 0.25) - 9700.0) / (0.9 * 0.25)
    assert mean_bus == approx(1029.0, abs=0.1)
    f = run(lb=0.0, acb=3000.0, p=params(initial_wh=9700.0, **p))
    assert f["battery_charge_w"][0] == approx(mean_bus)
    assert f["export_uncontrolled_w"][0] == approx(3000.0 - mean_bus / 0.9)
    # Without the taper only the room limits: 300 Wh over 15 min at 0.9 = 1 333.3 W on the bus.
    g = run(lb=0.0, acb=3000.0, p=params(initial_wh=9700.0, dt_h=0.25, charger_rating_w=5000.0))
    assert g["battery_charge_w"][0] == approx(300.0 / 0.225)


def test_the_taper_does_not_depend_on_the_step():
    # Charging at the limit for an hour in one step or in sixty one-minute steps ends at the same stored energy.
    p = dict(charger_rating_w=9000.0, charge_max_w=5000.0, taper_start_wh=9000.0, taper_end_fraction=0.05,
             standing_draw_w=0.0, initial_wh=8000.0)
    hour = run(lb=0.0, acb=9000.0, p=params(**p))
    minutes = run(lb=np.zeros(60), acb=9000.0, p=params(dt_h=1 / 60, **p))
    assert hour["soc_wh"][0] == approx(minutes["soc_wh"][-1], rel=1e-9)


def test_discharge_limit_near_empty():
    # Outage, 300 Wh stored, floor 0, the limit falls linearly below 500 Wh: 5 000 × 300 / 500 = 3 000 W DC,
    # 2 700 W AC of a 4 000 W load; 1 300 W unserved (Δt = 1 min, so the store is not the limit).
    f = run(lb=4000.0, up=False, p=params(dt_h=1 / 60, initial_wh=300.0, floor_wh=0.0, discharge_taper_wh=500.0))
    assert f["battery_discharge_w"][0] == approx(3000.0)
    assert f["unserved_backed_up_w"][0] == approx(1300.0)


def test_charge_window_lifts_the_soc_from_the_grid():
    # Inside the window with a 6 000 Wh target from 5 000 Wh: 1 000 / 0.9 = 1 111.1 W on the bus,
    # 1 234.6 W AC from the grid; outside the window nothing.
    p = params(standing_draw_w=0.0, charge_window_target_wh=6000.0)
    f = run(lb=np.zeros(2), window=np.array([1.0, 0.0]), p=p)
    assert f["grid_to_battery_w"][0] == approx(1000.0 / 0.9)
    assert f["grid_import_w"][0] == approx(1000.0 / 0.81)
    assert f["soc_wh"][0] == approx(6000.0)
    assert f["grid_import_w"][1] == approx(0.0)


def test_kinetic_battery_model_limits_the_discharge_by_its_available_well():
    # Manwell & McGowan (1993), worked by hand: 5 000 Wh stored, c = 0.5, k = 1 /h, Δt = 1 h, the wells in balance
    # (q1 = 2 500 Wh). x = e^−1 = 0.367879, d = 1 − x + c(kΔt − 1 + x) = 0.632121 + 0.183940 = 0.816061; the
    # largest discharge is (k q1 x + q k c (1 − x)) / d = (919.70 + 1 580.30) / 0.816061 = 3 063.5 W (stored
    # side), 3 063.5 × 0.9 = 2 757.2 W on the bus. An outage with a 5 000 W load takes all of it.
    from core.model.battery import kibam_available_wh, kibam_limits_w

    dis, _ = kibam_limits_w(5000.0, 2500.0, 1.0, 0.5, 1.0, 10_000.0)
    assert dis == approx(3063.5, abs=0.1)
    # At that rate the available well is empty at the end of the step (the model's defining property).
    assert kibam_available_wh(5000.0, 2500.0, dis, 1.0, 0.5, 1.0) == approx(0.0, abs=1e-9)
    p = params(kibam_c=0.5, kibam_k_per_h=1.0, floor_wh=0.0, charge_max_w=20_000.0, discharge_max_w=20_000.0,
               inverter_ac_w=np.array([0.0, 20_000.0]), inverter_dc_w=np.array([0.0, 20_000.0 / 0.9]))
    f = run(lb=5000.0, up=False, p=p)
    assert f["battery_discharge_w"][0] == approx(dis * 0.9, abs=0.1)
    assert f["unserved_backed_up_w"][0] == approx(5000.0 - dis * 0.81, abs=0.1)
    # The same battery without the model is limited only by its store: 5 000 Wh × 0.9 = 4 500 W on the bus.
    g = run(lb=5000.0, up=False, p=params(floor_wh=0.0, charge_max_w=20_000.0, discharge_max_w=20_000.0,
                                          inverter_ac_w=np.array([0.0, 20_000.0]),
                                          inverter_dc_w=np.array([0.0, 20_000.0 / 0.9])))
    assert g["battery_discharge_w"][0] == approx(4500.0)


@pytest.mark.parametrize("name", ["none", "limiter", "islanded", "relay"])
def test_compiled_equals_plain_python_with_every_new_rule(name):
    # Taper, discharge limit, kinetic model, the mode, reconnect delays, a charge window: compiled and plain agree.
    rng = np.random.default_rng(3)
    n = 400
    p = mode(name, dt_h=0.25, taper_start_wh=8000.0, discharge_taper_wh=800.0, relay_open_wh=9000.0,
                           relay_close_wh=7000.0, reconnect_s=300.0, charge_window_target_wh=6000.0, kibam_c=0.6,
                           kibam_k_per_h=2.0, idle_w=20.0)
    z = np.zeros(n)
    inputs = DispatchInputs(load_backed_w=rng.uniform(0, 3000, n), load_grid_only_w=rng.uniform(0, 800, n),
                            dc_out_w=rng.uniform(0, 2500, n), dc_loss_w=z + 10.0,
                            ac_backed_out_w=rng.uniform(0, 2000, n), ac_backed_loss_w=z + 5.0,
                            ac_grid_out_w=rng.uniform(0, 900, n), ac_grid_loss_w=z + 4.0,
                            grid_up=rng.random(n) > 0.15, charge_window=(rng.random(n) < 0.2).astype(float))
    fast = dispatch(inputs, p, compiled=True).flows
    slow = dispatch(inputs, p, compiled=False).flows
    np.testing.assert_allclose(fast, slow, rtol=0, atol=1e-9)


def test_islanded_connects_to_cover_what_the_battery_cannot():
    # 9 000 Wh stored (above the 2 000 Wh reserve), but a 4 000 W load exceeds the 3 000 W inverter: it connects,
    # the grid-up rules apply (the standing draw held, the rest from the battery through the inverter).
    f = run(lb=4000.0, p=mode("islanded", initial_wh=9000.0))
    assert f["islanded"][0] == 0.0
    assert f["unserved_backed_up_w"][0] == approx(0.0)
    assert f["grid_import_w"][0] == approx(4000.0 - 3000.0)  # the inverter gives its rating, the grid the rest
    # Connected, a limiter (islanded_limiter) curtails what would leak; without it the surplus leaks.
    surplus = dict(initial_wh=2000.0, recharge_reserve_from_grid=False, charger_rating_w=0.0)
    leak = run(lb=0.0, acb=1000.0, p=mode("islanded", **surplus))
    held = run(lb=0.0, acb=1000.0, p=mode("islanded", limiter=True, **surplus))
    assert leak["export_uncontrolled_w"][0] == approx(1000.0) and held["curtailed_limiter_w"][0] == approx(1000.0)
