"""DC string checks: NEC 690.7(A) cold-voltage methods, NEC 690.8(A)(1) current, hot Vmp, mixed strings."""

from __future__ import annotations

import dataclasses

import pvlib
import pytest

from core.analyses.checks.common import DesignTemperatures, design_temperatures
from core.analyses.checks.strings import (
    nec_table_factor,
    pv_circuit_current_a,
    string_checks,
    vmp_at_v,
    voc_max_coefficient_v,
    voc_max_table_v,
)
from core.scenario import parse_scenario

approx = pytest.approx


def scenario(*, voc=37.0, vmp=30.8, isc=9.5, beta=-0.29, gamma=-0.35, series=4, strings=1, battery_v=24.0,
             max_v=150.0, max_a=30.0, low=-10.0, high=35.0, arrays_extra=""):
    text = f"""
name = "strings"
[site]
latitude = 45.0
longitude = 7.0
timezone = "Europe/Rome"
[weather]
source = "monthly"
ghi_kwh_m2_day = [2, 3, 4, 5, 6, 7, 7, 6, 5, 4, 2, 2]
temp_air_c = [2, 4, 8, 12, 16, 20, 23, 22, 18, 13, 7, 3]
[modules.m]
pmax_w = 290
vmp_v = {vmp}
imp_a = 9.0
voc_v = {voc}
isc_a = {isc}
beta_voc_pct_per_c = {beta}
gamma_pmax_pct_per_c = {gamma}
[battery]
usable_kwh = 5
nominal_v = {battery_v}
[inverter_charger]
rating_w = 3000
[controllers.c]
max_pv_voltage_v = {max_v}
mppt_min_v = 30
mppt_max_v = 145
max_input_current_a = {max_a}
max_charge_current_a = 60
[[arrays]]
name = "roof"
coupling = "dc"
module = "m"
tilt_deg = 30
azimuth_deg = 180
controller = "c"
modules_per_string = {series}
strings = {strings}
{arrays_extra}
[simulation]
design_low_temp_c = {low}
design_high_temp_c = {high}
"""
    return parse_scenario(text)


def by_id(checks):
    return {c.id: c for c in checks}


def temps(sc):
    return design_temperatures(sc)


def test_hand_worked_string_by_the_coefficient_and_the_table_methods():
    # Three modules of Voc 41.3 V, β = −0.26 %/°C, design low −12 °C.
    # NEC 690.7(A)(1): 3 × 41.3 × [1 + (−0.0026)(−12 − 25)] = 3 × 41.3 × 1.0962 = 135.82 V.
    assert voc_max_coefficient_v(41.3, -0.26, -12.0, 3) == approx(135.819, abs=1e-3)
    # NEC Table 690.7(A): −12 °C lies in the row "−11 to −15 °C", factor 1.16 (from memory):
    # 3 × 41.3 × 1.16 = 143.72 V.
    assert nec_table_factor(-12.0) == 1.16
    assert voc_max_table_v(41.3, -12.0, 3) == approx(143.724, abs=1e-3)


@pytest.mark.parametrize("t, factor", [
    # NEC 2017/2020 Table 690.7(A), crystalline silicon (from memory, docs/references.md); row edges included.
    (24, 1.02), (20, 1.02), (19, 1.04), (15, 1.04), (14, 1.06), (10, 1.06), (9, 1.08), (5, 1.08), (4, 1.10),
    (0, 1.10), (-1, 1.12), (-5, 1.12), (-6, 1.14), (-10, 1.14), (-11, 1.16), (-15, 1.16), (-16, 1.18),
    (-20, 1.18), (-21, 1.20), (-25, 1.20), (-26, 1.21), (-30, 1.21), (-31, 1.23), (-35, 1.23), (-36, 1.25),
    (-40, 1.25),
])
def test_nec_table_rows(t, factor):
    assert nec_table_factor(t) == factor


def test_nec_table_between_rows_and_outside():
    assert nec_table_factor(19.5) == 1.04  # between rows: the colder row, the cautious side
    assert nec_table_factor(25.0) == 1.0
    assert nec_table_factor(-41.0) is None


@pytest.mark.parametrize("beta", [-0.26, -0.30, -0.35])
def test_table_is_the_more_cautious_method_for_modern_modules(beta):
    # The table's factors correspond to about −0.38 %/°C (1.25 at −40 °C); for modules with a smaller coefficient
    # it should never give less than the coefficient method (both from NEC 690.7(A)).
    for t in range(-40, 25):
        assert voc_max_table_v(40.0, t, 1) >= voc_max_coefficient_v(40.0, beta, t, 1) - 1e-9


def test_a_string_that_fits_in_summer_exceeds_the_limit_on_a_cold_morning_and_splitting_fixes_it():
    # Common practice: four modules of Voc 37.0 V (β −0.29 %/°C) on a 150 V controller give 148 V at 25 °C and
    # about 149 V on a mild summer morning — it fits — but 4 × 37 × (1 + 0.0029 × 35) = 163.0 V at −10 °C.
    assert voc_max_coefficient_v(37.0, -0.29, 22.0, 4) < 150.0
    long = by_id(string_checks(scenario(), temps(scenario())))
    assert long["strings.voc_cold"].status == "fail"
    assert long["strings.voc_cold"].value == approx(163.0, abs=0.05)
    assert "split" in long["strings.voc_cold"].sentence and "at most 3" in long["strings.voc_cold"].sentence
    assert long["strings.voc_cold"].caution and "arc" in long["strings.voc_cold"].caution
    # Installers split the long string into two shorter ones in parallel: 2 × 37 × 1.1015 = 81.5 V, and the
    # current doubles to 1.25 × 9.5 × 2 = 23.75 A, still within the 30 A input (NEC 690.8(A)(1)).
    split = by_id(string_checks(scenario(series=2, strings=2), temps(scenario())))
    assert split["strings.voc_cold"].status == "pass"
    assert split["strings.current"].value == approx(23.75)
    assert split["strings.current"].status == "pass"


def test_parallel_strings_against_the_input_current_limit():
    # NEC 690.8(A)(1): 1.25 × Isc per string (from memory). 3 × 1.25 × 12.7 = 47.6 A ≤ 50; 4 strings 63.5 A > 50.
    assert pv_circuit_current_a(12.7, 3) == approx(47.625)
    ok = by_id(string_checks(scenario(isc=12.7, series=2, strings=3, max_a=50), temps(scenario())))
    over = by_id(string_checks(scenario(isc=12.7, series=2, strings=4, max_a=50), temps(scenario())))
    assert ok["strings.current"].status == "pass"
    assert over["strings.current"].status == "fail" and over["strings.current"].value == approx(63.5, abs=0.05)


def test_hot_vmp_uses_the_sapm_cell_temperature_and_fails_below_the_battery_voltage():
    # Two modules of Vmp 34.2 V (power coefficient −0.34 %/°C) on a 51.2 V battery with a 5 V controller margin.
    # Cell temperature on the hottest hour (36 °C air, full sun 1000 W/m², 1 m/s, flush mount) from pvlib's SAPM
    # model with King et al. (2004)'s close-mount glass/glass parameters — the reference implementation.
    p = pvlib.temperature.TEMPERATURE_MODEL_PARAMETERS["sapm"]["close_mount_glass_glass"]
    t_cell = float(pvlib.temperature.sapm_cell(1000.0, 36.0, 1.0, p["a"], p["b"], p["deltaT"]))
    expected = 2 * 34.2 * (1 - 0.0034 * (t_cell - 25.0))
    assert vmp_at_v(34.2, -0.34, t_cell, 2) == approx(expected)
    sc = scenario(vmp=34.2, gamma=-0.34, series=2, battery_v=51.2, high=36.0)
    sc = dataclasses.replace(sc, arrays=(dataclasses.replace(sc.arrays[0], mount="flush"),))
    c = by_id(string_checks(sc, temps(sc)))["strings.vmp_hot"]
    assert c.value == approx(expected, abs=0.05)
    assert expected < 51.2 + 5.0  # so the check must fail: the controller cannot charge in hot sun
    assert c.status == "fail" and c.limit == approx(56.2)
    # Three in series clear it comfortably.
    sc3 = dataclasses.replace(sc, arrays=(dataclasses.replace(sc.arrays[0], modules_per_string=3),))
    assert by_id(string_checks(sc3, temps(sc3)))["strings.vmp_hot"].status == "pass"


def test_mixed_strings_on_one_controller_warn():
    same = by_id(string_checks(scenario(), temps(scenario())))
    assert same["strings.mixed"].status == "pass"
    extra = """
[[arrays]]
name = "porch"
coupling = "dc"
module = "m"
tilt_deg = 15
azimuth_deg = 260
controller = "c"
modules_per_string = 2
strings = 1
"""
    sc = scenario(series=3, arrays_extra=extra)
    mixed = by_id(string_checks(sc, temps(sc)))
    assert mixed["strings.mixed"].status == "warn"
    assert "different modules or lengths" in mixed["strings.mixed"].sentence


def test_design_low_temperature_from_the_weather_minus_the_margin():
    sc = scenario()
    sc = dataclasses.replace(sc, simulation=dataclasses.replace(sc.simulation, design_low_temp_c=None,
                                                                design_high_temp_c=None))
    t = design_temperatures(sc, [3.0, -7.5, 12.0, 31.0])
    assert isinstance(t, DesignTemperatures)
    assert t.low_c == approx(-12.5)  # coldest hour −7.5 °C minus the documented 5 °C margin
    assert t.high_air_c == approx(31.0)
    with pytest.raises(ValueError):
        design_temperatures(sc, None)
