"""Microinverter input checks: module Voc when cold, Vmp in the MPPT range, current, DC/AC ratio and clipping.

Each input of a microinverter takes one module (the scenario's ``inputs`` is the number of modules per unit).
"""

from __future__ import annotations

import math

import numpy as np

from core.analyses.checks.common import (
    CAUTION_DC,
    CAUTION_MICRO,
    Check,
    DesignTemperatures,
    array_words,
    hot_cell_temperature_c,
)
from core.analyses.checks.frequency_watt import PRESETS
from core.analyses.checks.strings import NEC_690_8_FACTOR, vmp_at_v, voc_max_coefficient_v
from core.model.conversion import microinverter_output
from core.scenario import Scenario

#: DC/AC ratio above which clipping becomes noticeable (common practice: 1.1 to 1.3 is usual for microinverters).
DC_AC_RATIO_HIGH = 1.3
#: Share of the array's energy clipped above which the check warns (our own choice).
CLIPPING_SHARE_WARN = 0.03


def microinverter_checks(sc: Scenario, temps: DesignTemperatures, per_array_dc_w: dict | None = None) -> list[Check]:
    """Checks for every AC-coupled array; ``per_array_dc_w`` (module DC of each array from a simulation,
    W per step) adds the clipping share."""
    checks: list[Check] = []
    for a in sc.arrays:
        if a.coupling != "ac" or a.module_count <= 0:
            continue
        mi = sc.microinverters[a.microinverter]
        m = sc.modules[a.module]
        subject = f"array {a.name} on {a.microinverter}"
        voc = voc_max_coefficient_v(m.voc_v, m.beta_voc_pct_per_c, temps.low_c, 1)
        over = voc > mi.max_input_voltage_v
        checks.append(Check(
            id="micro.voc_cold", status="fail" if over else "pass", value=round(voc, 2), limit=mi.max_input_voltage_v,
            unit="V",
            sentence=(f"{array_words(a.name)}: one module reaches {voc:.1f} V open-circuit at {temps.low_c:.1f} °C "
                      f"({temps.low_basis}), " + ("above" if over else "below")
                      + f" the microinverter's {mi.max_input_voltage_v:.0f} V input limit"
                      + ("; choose a microinverter for higher-voltage modules." if over else ".")),
            source="NFPA 70 (NEC) 690.7(A)(1), datasheet temperature coefficient", caution=CAUTION_DC,
            subject=subject))
        t_hot = hot_cell_temperature_c(temps.high_air_c, a.mount)
        vmp_hot = vmp_at_v(m.vmp_v, m.gamma_pmax_pct_per_c, t_hot, 1)
        vmp_cold = vmp_at_v(m.vmp_v, m.gamma_pmax_pct_per_c, temps.low_c, 1)
        inside = mi.mppt_min_v <= vmp_hot and vmp_cold <= mi.mppt_max_v
        checks.append(Check(
            id="micro.vmp_window", status="pass" if inside else "warn", value=round(vmp_hot, 2),
            limit=mi.mppt_min_v, unit="V",
            sentence=(f"{array_words(a.name)}: the module's maximum-power voltage runs from {vmp_hot:.1f} V (cells at "
                      f"{t_hot:.0f} °C) to {vmp_cold:.1f} V (at {temps.low_c:.0f} °C); the microinverter tracks "
                      f"{mi.mppt_min_v:.0f}–{mi.mppt_max_v:.0f} V" + (
                          ", so it stays on the maximum-power point." if inside else
                          ", so part of the year it works off the maximum-power point and harvests less.")),
            source="microinverter datasheet MPPT range (common practice)", subject=subject))
        circuit = NEC_690_8_FACTOR * m.isc_a
        if m.isc_a > mi.max_input_current_a:
            status, what = "fail", "even the module's Isc at STC is above it; choose a microinverter rated for this module"
        elif circuit > mi.max_input_current_a:
            status, what = "warn", ("1.25 × Isc is above it; confirm the microinverter's maximum input short-circuit "
                                    "current on its datasheet (many units rate it higher than the operating current)")
        else:
            status, what = "pass", "1.25 × Isc is within it"
        checks.append(Check(
            id="micro.current", status=status, value=round(circuit, 2), limit=mi.max_input_current_a, unit="A",
            sentence=(f"{array_words(a.name)}: module Isc {m.isc_a:.1f} A against the microinverter's "
                      f"{mi.max_input_current_a:.1f} A input limit: {what}."),
            source="NFPA 70 (NEC) 690.8(A)(1) (from memory)", caution=CAUTION_MICRO, subject=subject))
        ratio = mi.inputs * m.pmax_w / mi.ac_rating_w
        share = None
        if per_array_dc_w is not None and a.name in per_array_dc_w:
            p_array = np.asarray(per_array_dc_w[a.name], dtype=float)
            p_module = p_array / a.module_count
            conv = microinverter_output(p_module, modules=a.module_count, efficiency=mi.efficiency,
                                        ac_rating_w=mi.ac_rating_w, max_dc_input_w=mi.max_dc_input_w, inputs=mi.inputs)
            total = float(p_array.sum())
            share = float(conv.clipped_w.sum()) / total if total > 0 else 0.0
        if share is not None:
            status = "warn" if share > CLIPPING_SHARE_WARN else "pass"
            sentence = (f"{array_words(a.name)}: DC/AC ratio {ratio:.2f} ({mi.inputs} × {m.pmax_w:.0f} W on "
                        f"{mi.ac_rating_w:.0f} W AC); {share * 100:.1f} % of the year's module energy is clipped"
                        + (", more than a few percent: a larger microinverter would harvest it." if status == "warn"
                           else "."))
            value, limit, unit = round(share * 100, 1), CLIPPING_SHARE_WARN * 100, "%"
        else:
            status = "warn" if ratio > DC_AC_RATIO_HIGH else "pass"
            sentence = (f"{array_words(a.name)}: DC/AC ratio {ratio:.2f} ({mi.inputs} × {m.pmax_w:.0f} W on "
                        f"{mi.ac_rating_w:.0f} W AC)" + (", high enough to clip noticeably in clear weather."
                                                        if status == "warn" else "."))
            value, limit, unit = round(ratio, 2), DC_AC_RATIO_HIGH, ""
        checks.append(Check(id="micro.clipping", status=status, value=value, limit=limit, unit=unit,
                            sentence=sentence, source="common practice", subject=subject))
        units = math.ceil(a.module_count / mi.inputs)
        checks.append(Check(
            id="micro.grid_code", status="pass", value=None, limit=None, unit="",
            sentence=(f"{array_words(a.name)}: {units} microinverter{'s' if units != 1 else ''} set to "
                      f"{PRESETS[mi.grid_code].name}; they must be certified and configured for the local "
                      "grid code."),
            source="local grid code", caution=CAUTION_MICRO, subject=subject))
    return checks
