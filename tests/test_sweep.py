"""Sweep: the batched variants agree with single runs, and the table behaves as the physics says."""

from __future__ import annotations

import numpy as np
import pytest
from expansion_cases import hand_scenario, synthetic_site

import core.simulate
from core.analyses.compare import compare
from core.analyses.options import Layout
from core.analyses.sweep import COLUMNS, sweep
from core.model.metrics import DELTA_KEYS

approx = pytest.approx


def test_sweep_rows_equal_single_full_runs():
    # The batched engine (dispatch_many) and the one-option path (compare → simulate) must give the same figures.
    sc = hand_scenario(battery_kwh=2.0, initial_pct=50.0, reserve_pct=20.0)
    site = synthetic_site(days=2, load_backed_w=600.0)
    table = sweep(sc, counts=[0, 3, 6], tilts=[15.0, 35.0], azimuths=[180.0, 250.0], site=site, batch_bytes=1)
    assert list(table.columns) == list(COLUMNS)
    assert len(table) == 3 * 3 * 2 * 2  # options × counts × tilts × azimuths
    for option, count, tilt, az in (("ac_backed_up", 6, 35.0, 250.0), ("dc", 3, 15.0, 180.0), ("ac_grid", 6, 15.0, 180.0)):
        row = table[(table.option == option) & (table["count"] == count) & (table.tilt_deg == tilt)
                    & (table.azimuth_deg == az)].iloc[0]
        r = compare(sc, Layout(count, tilt, az), site=site, options=(option,)).options[option]
        for key in DELTA_KEYS:  # one definition of every figure: the same names, the same values
            assert row[key] == approx(r.delta[key], rel=1e-9, abs=1e-9), (option, key)
        # the same verdict on validity (the same design checks and export rule) and the same money
        assert bool(row["valid"]) == r.valid and row["failed_checks"] == ", ".join(r.failed_rules), option
        assert row["modules"] == r.modules
        assert row["npv"] == approx(r.economics.npv, rel=1e-9) and row["investment"] == approx(r.economics.investment)


def test_count_zero_is_the_existing_system_and_potential_grows_with_count():
    sc = hand_scenario()
    table = sweep(sc, counts=range(0, 5), site=synthetic_site(days=1), options=["ac_backed_up"])
    zero = table[table["count"] == 0].iloc[0]
    for col in (*DELTA_KEYS, "modules", "investment", "npv"):
        assert zero[col] == approx(0.0, abs=1e-9), col
    assert zero["valid"] and zero["failed_checks"] == ""  # nothing added: nothing to set aside
    # one module's potential times the count (the same orientation, the same module)
    pot = table.set_index("count")["expansion_potential_kwh"]
    np.testing.assert_allclose(pot.to_numpy(), pot[1] * np.arange(5), rtol=1e-12)


def test_many_panels_on_a_small_battery_leak_more_hours_as_the_count_rises():
    # AC-coupled surplus grows with the count; with a small battery and no limiter the hours of uncontrolled
    # export cannot fall as panels are added, and some appear once the addition exceeds load + charger.
    sc = hand_scenario(battery_kwh=1.0, initial_pct=50.0, reserve_pct=20.0)
    table = sweep(sc, counts=[0, 2, 6, 12], site=synthetic_site(days=2, load_backed_w=300.0), options=["ac_grid", "dc"])
    ac = table[table.option == "ac_grid"].set_index("count")["exported_uncontrolled_hours"]
    assert (np.diff(ac.to_numpy()) >= 0).all() and ac[12] > 0
    # a cell that leaks is invalid, and names the rule; one that does not leak is not set aside for it
    leaking = table[table["exported_uncontrolled_kwh"] > 1e-3]
    assert len(leaking) and (~leaking["valid"]).all()
    assert leaking["failed_checks"].str.contains("ac_coupling.uncontrolled_export").all()
    dc = table[table.option == "dc"]
    assert (dc["exported_uncontrolled_hours"] == 0).all()
    assert not dc["failed_checks"].str.contains("uncontrolled_export").any()
    assert dc.set_index("count")["curtailed_share"][12] > 0.3


def test_sweep_reuses_orientations_and_reports_progress(monkeypatch):
    calls, seen = [], []
    real = core.simulate.pv.module_output
    monkeypatch.setattr(core.simulate.pv, "module_output", lambda *a, **k: calls.append(1) or real(*a, **k))
    sweep(hand_scenario(), counts=[0, 1, 2, 3], tilts=[10.0, 20.0], azimuths=[180.0], site=synthetic_site(days=1),
          progress=lambda f, what: seen.append(f))
    assert len(calls) == 1 + 2  # the existing array, and one per swept orientation
    assert seen[-1] == 1.0 and all(0.0 <= f <= 1.0 for f in seen)
