"""Converters: limits, clipping and efficiency curves against outside references."""

from __future__ import annotations

import numpy as np
import pvlib
import pytest

from core.model.conversion import controller_output, efficiency_at, inverter_curve, microinverter_output


def test_part_load_curve_follows_pvwatts_inverter_model():
    # Dobos, "PVWatts Version 5 Manual", NREL/TP-6A20-62641 (2014): nominal efficiency 0.96, reference
    # 0.9637; pvlib.inverter.pvwatts is the reference implementation. Sampling that curve at a few
    # datasheet-like load fractions and interpolating must track it within 0.6 % points above 10 % load
    # and within 1.2 % points on the steep part below it.
    pdc0 = 5000 / 0.96
    fractions = np.array([0.05, 0.1, 0.2, 0.3, 0.5, 0.75, 1.0])
    p_dc = np.linspace(0.02, 1.0, 400) * pdc0
    p_ac_ref = pvlib.inverter.pvwatts(p_dc, pdc0, eta_inv_nom=0.96, eta_inv_ref=0.9637)
    eta_ref = p_ac_ref / p_dc
    sample_ac = pvlib.inverter.pvwatts(fractions * pdc0, pdc0, eta_inv_nom=0.96, eta_inv_ref=0.9637)
    curve = inverter_curve(5000.0, tuple(zip(sample_ac / 5000.0, sample_ac / (fractions * pdc0), strict=True)))
    error = np.abs(efficiency_at(curve, p_ac_ref) - eta_ref)
    above = p_ac_ref >= sample_ac[1]
    inside = p_ac_ref >= sample_ac[0]
    assert np.max(error[above]) < 0.006
    assert np.max(error[inside]) < 0.012


def test_inverter_table_is_its_own_inverse():
    curve = inverter_curve(3000.0, ((0.05, 0.85), (0.2, 0.935), (1.0, 0.92)))
    ac = np.linspace(0, 3000, 77)
    np.testing.assert_allclose(curve.ac_for_dc(curve.dc_for_ac(ac)), ac, atol=1e-9)
    # Flat efficiency: DC = AC / η exactly.
    flat = inverter_curve(3000.0, 0.9)
    assert flat.dc_for_ac(900.0) == pytest.approx(1000.0)


def test_controller_output_limit_is_charge_current_times_battery_voltage():
    # Common practice: an MPPT controller's output is limited by its rated charge current at the
    # battery's voltage; 60 A × 51.2 V = 3072 W. 4000 W of module DC at 97 %: 3072 W out, the rest of
    # the module side (4000 − 3072 / 0.97) clipped.
    r = controller_output(np.array([4000.0, 1000.0]), efficiency=0.97, max_charge_current_a=60, battery_nominal_v=51.2)
    assert r.out_w[0] == pytest.approx(3072.0)
    assert r.clipped_w[0] == pytest.approx(4000.0 - 3072.0 / 0.97)
    assert r.out_w[1] == pytest.approx(970.0) and r.clipped_w[1] == 0.0
    # Input current limit: 40 A at a 100 V string operating point accepts at most 4000 W.
    r = controller_output(np.array([5000.0]), efficiency=1.0, max_charge_current_a=200, battery_nominal_v=48,
                          max_input_current_a=40.0, vmp_string_v=np.array([100.0]))
    assert r.out_w[0] == pytest.approx(4000.0)


def test_microinverter_clips_at_its_ac_rating():
    # Common practice: a ~430 W module on a ~350 VA microinverter clips on bright, cool hours.
    # 430 W × 0.965 = 415 W > 350 W: output 350 W, clipped 430 − 350 / 0.965 module-side.
    r = microinverter_output(np.array([430.0, 200.0]), modules=1, efficiency=0.965, ac_rating_w=350,
                             max_dc_input_w=500)
    assert r.out_w[0] == pytest.approx(350.0)
    assert r.clipped_w[0] == pytest.approx(430.0 - 350.0 / 0.965)
    assert r.out_w[1] == pytest.approx(193.0)
    # Three modules on two-input units: one full unit and one half-filled unit.
    r = microinverter_output(np.array([300.0]), modules=3, efficiency=1.0, ac_rating_w=500, max_dc_input_w=800,
                             inputs=2)
    assert r.out_w[0] == pytest.approx(500.0 + 300.0)
    assert r.out_w[0] + r.loss_w[0] + r.clipped_w[0] == pytest.approx(900.0)
