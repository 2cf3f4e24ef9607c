"""Frequency-watt: the droop presets against hand calculation, and the outage curtailment check."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from expansion_cases import hand_scenario

from core.analyses.checks.frequency_watt import (
    PRESETS,
    frequency_for_reduction_hz,
    frequency_watt_checks,
    frequency_watt_of,
    output_fraction,
    required_reduction,
)
from core.analyses.options import with_option

approx = pytest.approx
IEEE = PRESETS["ieee1547_2018"]
EN = PRESETS["en50549_1"]


@pytest.mark.parametrize("f, expected", [
    # IEEE 1547-2018 defaults (from memory): dead band 0.036 Hz, droop 5 % of 60 Hz = 3 Hz for 100 % of power.
    (59.9, 1.0),
    (60.036, 1.0),                       # end of the dead band
    (61.0, 1.0 - (61.0 - 60.036) / 3.0),  # 0.678667
    (62.0, 1.0 - (62.0 - 60.036) / 3.0),  # 0.345333
    (63.036, 0.0),                        # 60.036 + 3
    (63.5, 0.0),
])
def test_ieee_1547_droop_by_hand(f, expected):
    assert output_fraction(f, IEEE) == approx(expected, abs=1e-12)


@pytest.mark.parametrize("f, expected", [
    # EN 50549-1:2019 LFSM-O (from memory): from 50.2 Hz, droop 5 % of 50 Hz = 2.5 Hz ≡ 40 % per Hz, zero at 52.7 Hz.
    (50.0, 1.0),
    (50.2, 1.0),
    (50.7, 0.8),   # 0.5 Hz × 40 %/Hz = 20 % less
    (51.0, 0.68),  # 0.8 Hz × 40 %/Hz = 32 % less
    (52.0, 0.28),  # 1.8 Hz × 40 %/Hz = 72 % less
    (52.7, 0.0),
    (53.0, 0.0),
])
def test_en_50549_lfsm_o_by_hand(f, expected):
    assert output_fraction(f, EN) == approx(expected, abs=1e-12)


def test_droop_slopes_and_zero_points():
    assert EN.zero_hz == approx(52.7)  # EN 50549-1: output reaches zero at 52.7 Hz (from memory)
    assert IEEE.zero_hz == approx(63.036)
    # 40 % of the reference power per Hz (EN 50549-1, from memory)
    assert output_fraction(51.0, EN) - output_fraction(52.0, EN) == approx(0.40)
    # vectorised, and the inverse of the droop
    f = np.array([60.5, 61.5, 62.5])
    np.testing.assert_allclose(output_fraction(f, IEEE), 1.0 - (f - 60.036) / 3.0)
    for r in (0.0, 0.25, 0.5, 1.0):
        assert 1.0 - output_fraction(frequency_for_reduction_hz(r, EN), EN) == approx(r)


def test_microinverter_settings_override_the_preset():
    sc = hand_scenario()
    mi = dataclasses.replace(sc.microinverters["mi"], grid_code="en50549_1", fw_start_hz=50.5, fw_droop_pct=4.0,
                             trip_hz=52.0)
    fw = frequency_watt_of(mi)
    assert (fw.nominal_hz, fw.start_hz, fw.droop_pct, fw.trip_hz) == (50.0, 50.5, 4.0, 52.0)
    # 4 % of 50 Hz = 2 Hz for 100 %: at 51.5 Hz half the output is gone.
    assert output_fraction(51.5, fw) == approx(0.5)


def test_required_reduction_by_hand():
    # 1000 W of backed-up AC output against 250 W of load: 75 % must be shed with the battery full.
    assert required_reduction(np.array([0.0, 500.0, 1000.0]), np.array([300.0, 250.0, 250.0]), 1000.0) == approx(0.75)
    assert required_reduction(None, None, 1000.0) == 1.0


def _with(sc, islanded_max_hz=None, **micro):
    sc = with_option(sc, "ac_backed_up")
    ic = dataclasses.replace(sc.inverter_charger, islanded_max_hz=islanded_max_hz)
    mis = {"mi": dataclasses.replace(sc.microinverters["mi"], **micro)}
    return dataclasses.replace(sc, inverter_charger=ic, microinverters=mis)


def test_curtailment_check_outcomes():
    sc = hand_scenario()
    # Not given: unknown → warn.
    [c] = frequency_watt_checks(_with(sc))
    assert c.status == "warn" and "not given" in c.sentence
    assert c.caution and "fire" in c.caution
    # Without a simulation all of the output must go (1.0): IEEE needs 63.036 Hz, past the 61.2 Hz trip.
    # An inverter-charger that goes up to 62 Hz makes the microinverters trip instead → warn.
    [c] = frequency_watt_checks(_with(sc, 62.0))
    assert c.value == approx(63.036) and c.status == "warn" and "disconnect" in c.sentence
    # One that stops at 61.0 Hz neither curtails them enough nor trips them → fail.
    [c] = frequency_watt_checks(_with(sc, 61.0))
    assert c.status == "fail"
    # With a trip above the droop's end and an inverter-charger that reaches it, the droop alone does it → pass.
    [c] = frequency_watt_checks(_with(sc, 63.5, trip_hz=64.0))
    assert c.status == "pass"


def test_no_check_without_backed_up_microinverters():
    assert frequency_watt_checks(with_option(hand_scenario(), "ac_grid")) == []
    assert frequency_watt_checks(hand_scenario()) == []
