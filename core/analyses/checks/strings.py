"""DC string checks on the charge controllers: voltage when cold, voltage when hot, current, mixed strings.

Physics in small pure functions; :func:`string_checks` applies them to every controller of a scenario.

* Maximum string voltage by the datasheet-coefficient method of NFPA 70 (NEC) 690.7(A)(1):
  ``Voc,max = n · Voc,STC · [1 + β · (T_min − 25 °C)]``.
* Cross-check by NEC 2017/2020 Table 690.7(A) (crystalline and multicrystalline silicon; values from memory,
  see docs/references.md). The NEC lets the table stand in where the maker gives no coefficient; with a coefficient
  the coefficient method governs, so the table result only warns.
* Maximum PV circuit current, NEC 690.8(A)(1): ``1.25 × Isc`` per parallel string (from memory).
* Vmp in hot sun against the MPPT window and above the battery voltage plus the controller's margin; Vmp is
  scaled with the module's power temperature coefficient (the voltage carries nearly all of the power's
  temperature dependence; common practice, and more cautious than using β).
"""

from __future__ import annotations

import math

from core.analyses.checks.common import (
    CAUTION_BATTERY,
    CAUTION_DC,
    Check,
    DesignTemperatures,
    array_words,
    hot_cell_temperature_c,
)
from core.scenario import Array, Scenario

#: NEC 2017/2020 Table 690.7(A), crystalline and multicrystalline silicon: (lowest °C of the row, factor).
#: A row "24 to 20" covers 20 ≤ T ≤ 24 °C. Values from memory (docs/references.md).
NEC_690_7_TABLE = (
    (20, 1.02), (15, 1.04), (10, 1.06), (5, 1.08), (0, 1.10), (-5, 1.12), (-10, 1.14), (-15, 1.16),
    (-20, 1.18), (-25, 1.20), (-30, 1.21), (-35, 1.23), (-40, 1.25),
)
#: NEC 690.8(A)(1): maximum PV circuit current = 1.25 × Isc (from memory).
NEC_690_8_FACTOR = 1.25
#: Battery voltage at full charge over its nominal voltage: between LFP's 3.6 V / 3.2 V = 1.125 and lead-acid's
#: 2.4 V / 2.0 V = 1.2 per cell (common practice, from memory).
FULL_CHARGE_FACTOR = 1.15
#: Share of the limit above which a passing voltage is flagged as leaving little margin (our own choice).
VOLTAGE_MARGIN_SHARE = 0.98
#: Orientation differences below which two arrays count as facing the same way (our own choice).
SAME_TILT_DEG = 5.0
SAME_AZIMUTH_DEG = 10.0


def voc_max_coefficient_v(voc_stc_v: float, beta_voc_pct_per_c: float, t_low_c: float, n_series: int) -> float:
    """String open-circuit voltage at the design low temperature, NEC 690.7(A)(1) coefficient method, V."""
    return n_series * voc_stc_v * (1.0 + beta_voc_pct_per_c / 100.0 * (t_low_c - 25.0))


def nec_table_factor(t_low_c: float) -> float | None:
    """The NEC Table 690.7(A) correction factor for the design low temperature (°C).

    Temperatures between two rows' integer bounds are rounded down (the colder row, the cautious side);
    25 °C and warmer gives 1.00; below −40 °C the table has no row (None).
    """
    if t_low_c >= 25.0:
        return 1.0
    t = math.floor(t_low_c)
    for lowest, factor in NEC_690_7_TABLE:
        if t >= lowest:
            return factor
    return None


def voc_max_table_v(voc_stc_v: float, t_low_c: float, n_series: int) -> float | None:
    """String open-circuit voltage by the NEC Table 690.7(A) method, V (None below the table)."""
    factor = nec_table_factor(t_low_c)
    return None if factor is None else n_series * voc_stc_v * factor


def vmp_at_v(vmp_stc_v: float, coefficient_pct_per_c: float, t_cell_c: float, n_series: int) -> float:
    """String maximum-power voltage at a cell temperature, linear in the temperature coefficient, V."""
    return n_series * vmp_stc_v * (1.0 + coefficient_pct_per_c / 100.0 * (t_cell_c - 25.0))


def pv_circuit_current_a(isc_stc_a: float, strings: int) -> float:
    """Maximum PV circuit current of parallel strings, NEC 690.8(A)(1): 1.25 × Isc × strings, A."""
    return NEC_690_8_FACTOR * isc_stc_a * strings


def _voltage_status(value: float, limit: float) -> str:
    if value > limit:
        return "fail"
    return "warn" if value > VOLTAGE_MARGIN_SHARE * limit else "pass"


def _longer_string_advice(module, controller, t_low_c: float, vmp_hot_per_module_v: float, need_v: float) -> str:
    """Advice for a string too short to charge the battery in hot sun, only if it can be followed: the shortest
    string long enough (by maximum-power voltage in hot sun) when it stays below the controller's limit on the
    coldest morning (NEC 690.7(A)(1) coefficient method); otherwise that no length fits this controller."""
    longer = math.ceil(need_v / vmp_hot_per_module_v) if vmp_hot_per_module_v > 0 else 0
    if longer > 0:
        voc = voc_max_coefficient_v(module.voc_v, module.beta_voc_pct_per_c, t_low_c, longer)
        if voc <= controller.max_pv_voltage_v:
            return f"put at least {longer} modules in series"
        return (f"a string long enough ({longer} in series) would reach {voc:.0f} V open-circuit on the coldest "
                f"morning, above the controller's {controller.max_pv_voltage_v:.0f} V limit, so no string of this "
                "module fits this controller and battery: use a controller with a higher voltage limit")
    return "no string of this module fits this controller and battery"


def dc_arrays_by_controller(sc: Scenario) -> dict[str, list[Array]]:
    out: dict[str, list[Array]] = {}
    for a in sc.arrays:
        if a.coupling == "dc" and a.module_count > 0:
            out.setdefault(a.controller, []).append(a)
    return out


def string_checks(sc: Scenario, temps: DesignTemperatures) -> list[Check]:
    """Voltage, current and mixing checks for every controller that has DC-coupled arrays."""
    checks: list[Check] = []
    for name, arrays in dc_arrays_by_controller(sc).items():
        c = sc.controllers[name]
        subject = f"controller {name}"
        # --- open-circuit voltage on the coldest morning, per array (each array is its own set of strings)
        for a in arrays:
            m = sc.modules[a.module]
            n = a.modules_per_string
            voc = voc_max_coefficient_v(m.voc_v, m.beta_voc_pct_per_c, temps.low_c, n)
            at_stc = n * m.voc_v
            status = _voltage_status(voc, c.max_pv_voltage_v)
            if status == "fail":
                fewer = max(1, int(c.max_pv_voltage_v // (voc / n)))
                advice = (f"split it into shorter strings (at most {fewer} modules in series) in parallel"
                          if fewer < n else "use a controller with a higher voltage limit")
                what = (f"exceeds the controller's {c.max_pv_voltage_v:.0f} V limit at {temps.low_c:.0f} °C "
                        f"although it is only {at_stc:.0f} V at 25 °C; {advice}.")
            elif status == "warn":
                what = f"is within 2 % of the controller's {c.max_pv_voltage_v:.0f} V limit; little margin is left."
            else:
                what = f"stays below the controller's {c.max_pv_voltage_v:.0f} V limit."
            checks.append(Check(
                id="strings.voc_cold", status=status, value=round(voc, 2), limit=c.max_pv_voltage_v, unit="V",
                sentence=(f"{array_words(a.name)}: {n} modules in series reach {voc:.1f} V open-circuit at the design low "
                          f"temperature of {temps.low_c:.1f} °C ({temps.low_basis}), which {what}"),
                source="NFPA 70 (NEC) 690.7(A)(1), datasheet temperature coefficient", caution=CAUTION_DC,
                subject=subject))
            table = voc_max_table_v(m.voc_v, temps.low_c, n)
            if table is None:
                checks.append(Check(
                    id="strings.voc_cold_table", status="warn", value=None, limit=c.max_pv_voltage_v, unit="V",
                    sentence=(f"{array_words(a.name)}: the NEC table has no factor below −40 °C; rely on the coefficient "
                              "method and the maker's data."),
                    source="NEC 2017/2020 Table 690.7(A) (values from memory)", caution=CAUTION_DC, subject=subject))
            else:
                over = table > c.max_pv_voltage_v
                checks.append(Check(
                    id="strings.voc_cold_table", status="warn" if over else "pass", value=round(table, 2),
                    limit=c.max_pv_voltage_v, unit="V",
                    sentence=(f"{array_words(a.name)}: cross-check by the NEC table (factor {nec_table_factor(temps.low_c):.2f}"
                              f" for crystalline silicon at {temps.low_c:.0f} °C) gives {table:.1f} V, "
                              + ("above the limit: the coefficient method governs when the maker gives β, but "
                                 "confirm the module's coefficient before relying on the margin." if over
                                 else "below the limit.")),
                    source="NEC 2017/2020 Table 690.7(A) (values from memory)", caution=CAUTION_DC, subject=subject))
            # --- maximum-power voltage in hot sun: MPPT window and battery voltage
            t_hot = hot_cell_temperature_c(temps.high_air_c, a.mount)
            vmp_hot = vmp_at_v(m.vmp_v, m.gamma_pmax_pct_per_c, t_hot, n)
            b = sc.battery
            v_batt = b.nominal_v if b else 0.0
            need_nominal = v_batt + c.battery_margin_v
            need_full = FULL_CHARGE_FACTOR * v_batt + c.battery_margin_v
            limit = max(c.mppt_min_v, need_full)
            if vmp_hot < need_nominal:
                limit = need_nominal
                status, what = "fail", (f"below the battery's {v_batt:.1f} V nominal plus the controller's "
                                        f"{c.battery_margin_v:.0f} V margin: in hot sun the controller cannot charge; "
                                        + _longer_string_advice(m, c, temps.low_c, vmp_hot / n, need_nominal))
            elif vmp_hot < need_full:
                limit = need_full
                status, what = "warn", (f"below the battery's full-charge voltage (about {FULL_CHARGE_FACTOR:.2f} × "
                                        f"nominal) plus margin, {need_full:.0f} V: charging slows in hot sun near full")
            elif vmp_hot < c.mppt_min_v:
                limit = c.mppt_min_v
                status, what = "warn", (f"below the MPPT window's {c.mppt_min_v:.0f} V minimum: the controller "
                                        "leaves the maximum-power point in hot sun and harvests less")
            else:
                status, what = "pass", (f"inside the MPPT window (from {c.mppt_min_v:.0f} V) and above the battery "
                                        "voltage plus margin")
            checks.append(Check(
                id="strings.vmp_hot", status=status, value=round(vmp_hot, 2),
                limit=round(limit, 2), unit="V",
                sentence=(f"{array_words(a.name)}: at a cell temperature of {t_hot:.0f} °C (full sun on the hottest hour, "
                          f"{temps.high_air_c:.0f} °C air) the string's maximum-power voltage is {vmp_hot:.1f} V, "
                          f"{what}."),
                source="controller datasheet limits; Vmp scaled with the power coefficient (common practice); "
                       "full-charge factor from memory",
                caution=CAUTION_BATTERY if status == "fail" else None, subject=subject))
            vmp_cold = vmp_at_v(m.vmp_v, m.gamma_pmax_pct_per_c, temps.low_c, n)
            checks.append(Check(
                id="strings.vmp_cold", status="warn" if vmp_cold > c.mppt_max_v else "pass", value=round(vmp_cold, 2),
                limit=c.mppt_max_v, unit="V",
                sentence=(f"{array_words(a.name)}: on a cold bright morning ({temps.low_c:.0f} °C cells) the maximum-power "
                          f"voltage is {vmp_cold:.1f} V, "
                          + (f"above the MPPT window's {c.mppt_max_v:.0f} V maximum: the controller tracks off the "
                             "maximum-power point." if vmp_cold > c.mppt_max_v
                             else f"inside the MPPT window (up to {c.mppt_max_v:.0f} V).")),
                source="controller datasheet MPPT window (common practice)", subject=subject))
        # --- current: all arrays on the controller are in parallel on its input
        current = sum(pv_circuit_current_a(sc.modules[a.module].isc_a, a.strings) for a in arrays)
        strings = sum(a.strings for a in arrays)
        over = current > c.max_input_current_a
        checks.append(Check(
            id="strings.current", status="fail" if over else "pass", value=round(current, 2),
            limit=c.max_input_current_a, unit="A",
            sentence=(f"{strings} parallel string{'s' if strings != 1 else ''} on {name}: 1.25 × Isc × strings = "
                      f"{current:.1f} A, " + (f"above the controller's {c.max_input_current_a:.0f} A input limit; "
                                              "use fewer parallel strings or a second controller." if over else
                                              f"within its {c.max_input_current_a:.0f} A input limit.")),
            source="NFPA 70 (NEC) 690.8(A)(1) (from memory)", caution=CAUTION_DC, subject=subject))
        checks.append(_mixed_check(sc, name, arrays))
    return checks


def _mixed_check(sc: Scenario, name: str, arrays: list[Array]) -> Check:
    subject = f"controller {name}"
    modules = {sc.modules[a.module] for a in arrays}
    lengths = {a.modules_per_string for a in arrays}
    t0, z0 = arrays[0].tilt_deg, arrays[0].azimuth_deg
    turned = any(abs(a.tilt_deg - t0) > SAME_TILT_DEG or
                 abs((a.azimuth_deg - z0 + 180.0) % 360.0 - 180.0) > SAME_AZIMUTH_DEG for a in arrays)
    source = "common practice"
    if len(modules) > 1 or len(lengths) > 1:
        kinds = ", ".join(f"'{a.name}' ({a.modules_per_string} × {a.module})" for a in arrays)
        return Check(id="strings.mixed", status="warn", value=None, limit=None, unit="",
                     sentence=(f"One MPPT input on {name} carries strings of different modules or lengths ({kinds}): "
                               "their maximum-power voltages differ and the controller can follow only one; use equal "
                               "strings or give the new panels their own controller or input."),
                     source=source, subject=subject)
    if turned:
        return Check(id="strings.mixed", status="warn", value=None, limit=None, unit="",
                     sentence=(f"Strings on {name} face different ways ("
                               + ", ".join(f"'{a.name}' {a.tilt_deg:.0f}°/{a.azimuth_deg:.0f}°" for a in arrays)
                               + "): with equal strings in parallel the loss is small, but their currents peak at "
                               "different times and the controller's input current is shared."),
                     source=source, subject=subject)
    return Check(id="strings.mixed", status="pass", value=None, limit=None, unit="",
                 sentence=f"All strings on {name} use the same module, length and orientation.",
                 source=source, subject=subject)
