"""Compare: the options side by side on hand-built cases whose outcome follows from the conversion chains.

The site is a few clear-sky days (tests/expansion_cases.py). Efficiencies: microinverter 0.965, controller 0.97,
inverter-charger 0.94 flat, charger 0.93, battery round trip 0.9.
"""

from __future__ import annotations

import dataclasses
import json

import numpy as np
import pytest
from expansion_cases import hand_scenario, synthetic_site

import core.simulate
from core.analyses.checks import run_checks
from core.analyses.compare import compare
from core.analyses.options import Layout

approx = pytest.approx
ETA_MICRO, ETA_CTRL, ETA_INV = 0.965, 0.97, 0.94


def test_ac_delivers_more_to_daytime_loads_by_the_ratio_of_the_conversion_chains():
    # The loads (2000 W, day and night) are larger than the small existing array (1 module) plus the addition
    # (2 modules), and the battery starts at its reserve, so it is never used: every watt of the new panels goes
    # straight to the loads. AC-coupled it passes the microinverter (0.965); DC-coupled the controller and the
    # inverter (0.97 × 0.94 = 0.9118). So the grid import saved is the new panels' module energy times those chains,
    # and AC beats DC by 0.965 / 0.9118 = 1.058 (hand calculation from the datasheet efficiencies).
    sc = hand_scenario()
    site = synthetic_site(load_backed_w=2000.0)
    c = compare(sc, site=site)
    assert set(c.options) == {"baseline", "ac_backed_up", "ac_grid", "dc"}
    ac, dc = c.options["ac_backed_up"].delta, c.options["dc"].delta
    potential = ac["expansion_potential_kwh"]
    assert potential > 5.0  # four clear June days of two 400 W modules
    assert dc["expansion_potential_kwh"] == approx(potential)
    assert ac["grid_import_saved_kwh"] == approx(potential * ETA_MICRO, rel=1e-3)
    assert dc["grid_import_saved_kwh"] == approx(potential * ETA_CTRL * ETA_INV, rel=1e-3)
    assert ac["to_loads_added_kwh"] / dc["to_loads_added_kwh"] == approx(ETA_MICRO / (ETA_CTRL * ETA_INV), rel=2e-3)
    # Nothing stored, curtailed or exported: the addition is below the daytime load.
    for d in (ac, dc):
        assert abs(d["battery_charge_added_kwh"]) < 1e-6
        assert d["curtailed_added_kwh"] == approx(0.0, abs=1e-6)
        assert d["exported_uncontrolled_kwh"] == approx(0.0, abs=1e-9)
    # The grid side and the backed-up side are the same while the grid is up and metering is site-wide.
    assert c.options["ac_grid"].delta["grid_import_saved_kwh"] == approx(ac["grid_import_saved_kwh"])
    # The verdict names the AC option as the energy winner and gives the chain efficiencies as the reason.
    assert c.verdict.energy in ("ac_backed_up", "ac_grid")
    assert "one conversion" in c.verdict.text and "96.5 %" in c.verdict.text
    # Economics follow the import saved at the tariff (0.30 EUR/kWh, first year).
    assert c.options["dc"].economics.annual_saving == approx(dc["grid_import_saved_kwh"] * 0.30)
    assert c.options["baseline"].economics is None
    json.dumps(c.to_dict())  # the whole comparison is JSON-ready


def test_compare_reuses_the_site_and_one_module_output_per_orientation(monkeypatch):
    # Four options, two orientations (existing roof and expansion): the module chain runs exactly twice.
    calls = []
    real = core.simulate.pv.module_output
    monkeypatch.setattr(core.simulate.pv, "module_output", lambda *a, **k: calls.append(1) or real(*a, **k))
    compare(hand_scenario(), site=synthetic_site(days=1))
    assert len(calls) == 2


def test_small_battery_and_large_ac_addition_export_or_curtail_where_expected():
    # A 1 kWh battery, 300 W of load and ten 400 W modules on microinverters: at midday the AC output is several
    # kW above the load, the charger fills the small battery within the first hours, and then — zero export, no
    # limiter — the surplus flows into the grid uncontrolled. DC-coupled, the controller is throttled instead.
    sc = hand_scenario(battery_kwh=1.0, initial_pct=50.0, reserve_pct=20.0, count=10)
    site = synthetic_site(load_backed_w=300.0)
    c = compare(sc, site=site)
    for option in ("ac_backed_up", "ac_grid"):
        d = c.options[option].delta
        assert d["exported_uncontrolled_kwh"] > 1.0 and d["exported_uncontrolled_hours"] > 0
        steps = c.options[option].simulation.steps
        leak = steps["export_uncontrolled_w"] > 1e-6
        # only where the AC-coupled output exceeds the loads plus the standing draw, and never more than that surplus
        surplus = steps["ac_backed_out_w"] + steps["ac_grid_out_w"] - steps["load_backed_w"] - steps["load_grid_only_w"]
        assert (surplus[leak] > 0).all()
        assert (steps["export_uncontrolled_w"][leak] <= surplus[leak] + 30.0 + 1e-6).all()
        # and the battery cannot take more: it is full at the end or the start of the step, or the charger is at
        # its limit
        full = (steps["soc_wh"] >= 1000.0 - 1e-6) | (steps["soc_wh"].shift(1, fill_value=500.0) >= 1000.0 - 1e-6)
        at_limit = steps["charger_ac_w"] >= 3000.0 - 1e-6
        assert (full | at_limit)[leak].all()
        ids = {ch.id: ch.status for ch in run_checks(c.options[option].scenario, c.options[option].simulation)}
        assert ids["ac_coupling.uncontrolled_export"] == "fail"
    dc = c.options["dc"]
    assert dc.delta["exported_uncontrolled_kwh"] == approx(0.0, abs=1e-9)
    assert dc.delta["curtailed_dc_added_kwh"] > 1.0
    ids = {ch.id: ch.status for ch in run_checks(dc.scenario, dc.simulation)}
    assert "ac_coupling.uncontrolled_export" not in ids
    # The verdict does not let an option that leaks win on energy.
    assert c.verdict.energy == "dc"
    assert "uncontrolled" in c.verdict.text
    # and it names every option it set aside and why, in the options table's words: its uncontrolled export and
    # what it would have given the loads
    aside = [r for r in c.verdict.reasons if r.startswith("Set aside")]
    for option in ("ac_backed_up", "ac_grid"):
        d = c.options[option].delta
        line = next(r for r in aside if c.options[option].label in r)
        assert f"uncontrolled export {d['exported_uncontrolled_kwh']:,.0f} kWh/yr" in line
        assert f"{d['to_loads_added_kwh']:,.0f} kWh/yr more from PV" in line

    # With an export limiter the same surplus is curtailed at the microinverters instead.
    limited = dataclasses.replace(sc, grid=dataclasses.replace(sc.grid, ac_export_control="limiter"))
    c2 = compare(limited, site=site, options=("ac_backed_up",))
    d2 = c2.options["ac_backed_up"].delta
    assert d2["exported_uncontrolled_kwh"] == approx(0.0, abs=1e-9)
    assert d2["curtailed_ac_added_kwh"] > 1.0


def test_layout_overrides_the_expansion_and_the_baseline_delta_is_zero():
    sc = hand_scenario()
    site = synthetic_site(days=1)
    c0 = compare(sc, Layout(0, 20.0, 240.0), site=site)
    for option, r in c0.options.items():
        assert r.delta["to_loads_added_kwh"] == approx(0.0, abs=1e-9), option
    c4 = compare(sc, Layout(4, 20.0, 240.0), site=site)
    c2 = compare(sc, Layout(2, 20.0, 240.0), site=site)
    p4 = c4.options["ac_backed_up"].delta["expansion_potential_kwh"]
    p2 = c2.options["ac_backed_up"].delta["expansion_potential_kwh"]
    assert p4 == approx(2 * p2)
    assert np.isfinite(c4.options["dc"].economics.npv)


def test_an_option_that_fails_a_design_check_cannot_win():
    # Maple Hollow's DC option puts two modules in series on a 48 V battery: in hot sun their Vmp falls below
    # the battery voltage plus the controller's margin (common practice: such a string cannot charge), and its
    # AC options leak into a zero-export grid without a limiter. No option passes; the verdict says why.
    from pathlib import Path

    from core.scenario import load_scenario

    sc = load_scenario(Path(__file__).resolve().parents[1] / "sample_sites" / "maple_hollow" / "scenario.toml")
    result = compare(sc)
    assert [c.id for c in result.options["dc"].failed] == ["strings.vmp_hot"]
    assert result.verdict.text.startswith("No option passes as it stands")
    assert any("strings.vmp_hot" in r for r in result.verdict.reasons)
    # With a limiter the AC options curtail instead of leaking, pass, and one of them wins.
    limited = sc.replace(grid=dataclasses.replace(sc.grid, ac_export_control="limiter"))
    result = compare(limited)
    assert result.verdict.energy in ("ac_backed_up", "ac_grid")
    assert result.verdict.text.startswith("On energy,")
    assert "On money, " in result.verdict.text
