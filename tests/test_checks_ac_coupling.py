"""AC-coupling checks: rating against the inverter-charger, battery absorption, uncontrolled export."""

from __future__ import annotations

import dataclasses

import numpy as np
import pandas as pd
import pytest
from expansion_cases import hand_scenario, synthetic_site

from core.analyses.checks import run_checks
from core.analyses.checks.ac_coupling import (
    ac_coupled_rating_w,
    ac_coupling_checks,
    charger_absorption_limit_w,
    worst_ac_surplus_w,
)
from core.analyses.options import Layout, with_option
from core.simulate import simulate

approx = pytest.approx


def by_id(checks):
    return {c.id: c for c in checks}


def test_ac_coupled_rating_should_not_exceed_the_inverter_charger_rating():
    # Common practice: AC-coupled PV on the backed-up side should not be rated above the inverter-charger's
    # continuous rating (here 5000 W). Ten 450 W microinverters = 4500 W pass; twelve = 5400 W fail.
    sc = hand_scenario()
    ten = with_option(sc, "ac_backed_up", Layout(10, 20, 240))
    twelve = with_option(sc, "ac_backed_up", Layout(12, 20, 240))
    assert ac_coupled_rating_w(ten, "backed_up") == approx(4500.0)
    assert by_id(ac_coupling_checks(ten))["ac_coupling.ratio"].status == "pass"
    c = by_id(ac_coupling_checks(twelve))["ac_coupling.ratio"]
    assert c.status == "fail" and c.value == approx(5400.0) and c.limit == approx(5000.0)
    assert c.caution and "licensed electrician" in c.caution
    # On the grid side the rule does not apply (they stop in an outage; the inverter-charger does not carry them).
    assert "ac_coupling.ratio" not in by_id(ac_coupling_checks(with_option(sc, "ac_grid", Layout(12, 20, 240))))


def test_charger_absorption_limit_by_hand():
    sc = hand_scenario()
    # charger 3000 W AC; battery 100 A × 48 V = 4800 W DC / 0.93 = 5161 W AC → the charger limits: 3000 W.
    assert charger_absorption_limit_w(sc) == approx(3000.0)
    weak = dataclasses.replace(sc, battery=dataclasses.replace(sc.battery, max_charge_a=50.0))
    # 50 A × 48 V = 2400 W DC / 0.93 = 2580.6 W AC → the battery limits.
    assert charger_absorption_limit_w(weak) == approx(2400.0 / 0.93)


def test_worst_surplus_as_the_inverter_charger_sees_it():
    steps = pd.DataFrame({
        "ac_backed_out_w": [1000.0, 1000.0, 1000.0], "ac_grid_out_w": [500.0, 2000.0, 2000.0],
        "load_backed_w": [200.0, 200.0, 100.0], "load_grid_only_w": [100.0, 100.0, 100.0], "grid_up": [True, True, False]})
    # site metering: 1000 + 2000 − 200 − 100 = 2700 W (step 2); in the outage only the backed-up side: 900 W.
    assert worst_ac_surplus_w(steps, "site") == approx(2700.0)
    # inverter metering: only the backed-up side is in view: 1000 − 100 = 900 W (outage) and 800 W.
    assert worst_ac_surplus_w(steps, "inverter") == approx(900.0)


def test_absorption_without_a_simulation_uses_the_nameplate():
    sc = hand_scenario()
    small = by_id(ac_coupling_checks(with_option(sc, "ac_backed_up", Layout(4, 20, 240))))
    assert small["ac_coupling.absorption"].status == "pass"  # 1800 W ≤ 3000 W
    big = with_option(sc, "ac_backed_up", Layout(10, 20, 240))
    c = by_id(ac_coupling_checks(big))["ac_coupling.absorption"]
    assert c.status == "fail" and c.value == approx(4500.0)  # zero export, no limiter: it would leak
    limited = dataclasses.replace(big, grid=dataclasses.replace(big.grid, ac_export_control="limiter"))
    assert by_id(ac_coupling_checks(limited))["ac_coupling.absorption"].status == "warn"


def test_uncontrolled_export_under_zero_export_is_a_fail():
    # Six 400 W modules on microinverters, a 1 kWh battery and 300 W of load: once the battery is full the
    # surplus leaks (zero export, no limiter). With a limiter it is curtailed and the check passes.
    sc = hand_scenario(battery_kwh=1.0, initial_pct=90.0, reserve_pct=20.0)
    site = synthetic_site(days=2, load_backed_w=300.0)
    leaky = with_option(sc, "ac_grid", Layout(6, 20, 180))
    sim = simulate(leaky, site)
    c = by_id(run_checks(leaky, sim))["ac_coupling.uncontrolled_export"]
    assert sim.results.energy_kwh["exported_uncontrolled"] > 0
    assert c.status == "fail" and c.value == approx(sim.results.energy_kwh["exported_uncontrolled"], abs=1e-3)
    limited = dataclasses.replace(leaky, grid=dataclasses.replace(leaky.grid, ac_export_control="limiter"))
    sim2 = simulate(limited, site)
    assert by_id(run_checks(limited, sim2))["ac_coupling.uncontrolled_export"].status == "pass"
    # the worst step in the simulated year is below the nameplate and above zero
    worst = by_id(run_checks(limited, sim2))["ac_coupling.absorption"].value
    assert 0 < worst < ac_coupled_rating_w(limited)
    assert np.isfinite(worst)
