"""Microinverter input checks and the controller clipping check, against hand calculation."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from expansion_cases import hand_scenario, synthetic_site

from core.analyses.checks import run_checks
from core.analyses.checks.clipping import clipping_checks, controller_clipping
from core.analyses.checks.common import DesignTemperatures
from core.analyses.checks.microinverter import microinverter_checks
from core.analyses.options import Layout, with_option
from core.simulate import simulate

approx = pytest.approx
TEMPS = DesignTemperatures(low_c=-20.0, high_air_c=35.0, low_basis="given", high_basis="given")


def by_id(checks):
    return {c.id: c for c in checks}


def _micro(sc, **changes):
    return dataclasses.replace(sc, microinverters={"mi": dataclasses.replace(sc.microinverters["mi"], **changes)})


def test_module_voc_when_cold_against_the_microinverter_input_limit():
    # NEC 690.7(A)(1): 41.0 × [1 + (−0.0027)(−20 − 25)] = 41.0 × 1.1215 = 45.98 V against 60 V: pass;
    # a 45 V limit fails.
    sc = with_option(hand_scenario(), "ac_backed_up")
    c = by_id(microinverter_checks(sc, TEMPS))["micro.voc_cold"]
    assert c.value == approx(45.98, abs=0.01) and c.status == "pass"
    assert by_id(microinverter_checks(_micro(sc, max_input_voltage_v=45.0), TEMPS))["micro.voc_cold"].status == "fail"


def test_microinverter_current_by_nec_690_8():
    # 1.25 × 12.5 A = 15.6 A (NEC 690.8(A)(1), from memory): within 20 A; above 14 A warns; below Isc (12 A) fails.
    sc = with_option(hand_scenario(), "ac_backed_up")
    assert by_id(microinverter_checks(sc, TEMPS))["micro.current"].status == "pass"
    assert by_id(microinverter_checks(_micro(sc, max_input_current_a=14.0), TEMPS))["micro.current"].status == "warn"
    assert by_id(microinverter_checks(_micro(sc, max_input_current_a=12.0), TEMPS))["micro.current"].status == "fail"


def test_vmp_outside_the_mppt_range_warns():
    sc = with_option(hand_scenario(), "ac_backed_up")
    assert by_id(microinverter_checks(sc, TEMPS))["micro.vmp_window"].status == "pass"
    narrow = _micro(sc, mppt_min_v=32.0)
    assert by_id(microinverter_checks(narrow, TEMPS))["micro.vmp_window"].status == "warn"


def test_microinverter_clipping_share_from_a_simulation():
    # A 400 W module (about 305 W at a clear midday after losses and heat) on a 250 W microinverter clips; on a
    # 450 W unit it does not.
    site = synthetic_site(days=2, load_backed_w=3000.0)
    sc = hand_scenario()
    small = with_option(_micro(sc, ac_rating_w=250.0), "ac_backed_up", Layout(2, 30, 180))
    sim = simulate(small, site)
    c = by_id(run_checks(small, sim))["micro.clipping"]
    clipped = float(sim.steps["clipped_ac_w"].sum())
    potential = float(sim.sources.per_array_dc_w["expansion"].sum())
    assert c.value == approx(clipped / potential * 100.0, abs=0.05)
    assert c.status == "warn"
    big = with_option(sc, "ac_backed_up", Layout(2, 30, 180))
    assert by_id(run_checks(big, simulate(big, site)))["micro.clipping"].status == "pass"
    assert by_id(run_checks(big, simulate(big, site)))["micro.grid_code"].caution


def test_controller_clipping_share_by_hand():
    # 4000 W of module power into a controller limited to 60 A × 50 V = 3000 W output at 97 % efficiency: it
    # accepts 3000 / 0.97 = 3092.78 W and clips the rest, 907.22 W = 22.68 % of the module power.
    share = controller_clipping(np.array([4000.0, 0.0]), efficiency=0.97, max_charge_current_a=60.0,
                                battery_nominal_v=50.0)
    assert share == approx((4000.0 - 3000.0 / 0.97) / 4000.0)


def test_controller_clipping_check_with_and_without_a_simulation():
    sc = hand_scenario()
    # Without a simulation: 400 W of modules on 100 A × 48 V = 4800 W: ratio 0.08, pass.
    [c] = clipping_checks(sc)
    assert c.status == "pass" and c.value == approx(400 / 4800, abs=0.005)
    # Eight modules on a controller limited to 10 A × 48 V = 480 W clip most of the midday output.
    small = dataclasses.replace(sc, controllers={"main": dataclasses.replace(sc.controllers["main"],
                                                                             max_charge_current_a=10.0)})
    small = with_option(small, "dc", Layout(8, 30, 180))
    sim = simulate(small, synthetic_site(days=1, load_backed_w=3000.0))
    [c] = clipping_checks(small, sim)
    total = sum(float(v.sum()) for v in sim.sources.per_array_dc_w.values())
    assert c.status == "warn"
    assert c.value == approx(float(sim.steps["clipped_dc_w"].sum()) / total * 100.0, abs=0.05)
