"""Charge-controller output limit against its arrays: the share of the year's module energy clipped.

A controller delivers at most ``max_charge_current_a × battery nominal voltage`` (and draws at most its input
current); module power above that is never converted (clipped). A little clipping is normal when the array's
STC power exceeds the controller's output (common practice: oversizing by 10–30 % costs a few percent).
"""

from __future__ import annotations

import numpy as np

from core.analyses.checks.common import Check
from core.analyses.checks.strings import dc_arrays_by_controller
from core.model.conversion import controller_output
from core.scenario import Scenario

#: Share of the module energy clipped above which the check warns (our own choice, in line with common practice).
CLIPPING_SHARE_WARN = 0.02


def controller_clipping(p_module_w: np.ndarray, *, efficiency: float, max_charge_current_a: float,
                        battery_nominal_v: float, max_input_current_a: float | None = None,
                        vmp_string_v: np.ndarray | None = None) -> float:
    """Share (0…1) of the module energy that a controller clips."""
    p = np.asarray(p_module_w, dtype=float)
    total = float(np.clip(p, 0.0, None).sum())
    if total <= 0.0:
        return 0.0
    conv = controller_output(p, efficiency=efficiency, max_charge_current_a=max_charge_current_a,
                             battery_nominal_v=battery_nominal_v, max_input_current_a=max_input_current_a,
                             vmp_string_v=vmp_string_v)
    return float(conv.clipped_w.sum()) / total


def clipping_checks(sc: Scenario, sim=None, cache=None) -> list[Check]:
    """One check per controller: without a simulation (``sim``), the array's STC power against the output limit;
    with one, the share of the year's module energy clipped (``cache`` reuses module outputs)."""
    checks = []
    for name, arrays in dc_arrays_by_controller(sc).items():
        c = sc.controllers[name]
        limit_w = c.max_charge_current_a * sc.battery.nominal_v
        stc_w = sum(sc.modules[a.module].pmax_w * a.module_count for a in arrays)
        ratio = stc_w / limit_w
        subject = f"controller {name}"
        head = (f"{name} delivers at most {c.max_charge_current_a:.0f} A × {sc.battery.nominal_v:.1f} V = "
                f"{limit_w:.0f} W for {stc_w:.0f} W of modules (ratio {ratio:.2f})")
        if sim is None:
            status = "warn" if ratio > 1.3 else "pass"
            checks.append(Check(id="clipping.controller", status=status, value=round(ratio, 2), limit=1.3, unit="",
                                sentence=head + ("; expect noticeable clipping in clear weather." if status == "warn"
                                                 else "."), source="common practice", subject=subject))
            continue
        from core.simulate import OrientationCache

        cache = cache if cache is not None else OrientationCache()
        p = sum(np.asarray(sim.sources.per_array_dc_w[a.name], dtype=float) for a in arrays)
        first = arrays[0]
        mo = cache.module_output(sim.site, sc, first)
        share = controller_clipping(p, efficiency=c.efficiency, max_charge_current_a=c.max_charge_current_a,
                                    battery_nominal_v=sc.battery.nominal_v, max_input_current_a=c.max_input_current_a,
                                    vmp_string_v=mo.vmp_v * first.modules_per_string)
        status = "warn" if share > CLIPPING_SHARE_WARN else "pass"
        checks.append(Check(
            id="clipping.controller", status=status, value=round(share * 100.0, 1),
            limit=CLIPPING_SHARE_WARN * 100.0, unit="%",
            sentence=head + f"; {share * 100:.1f} % of the year's module energy is clipped"
            + (": a larger controller or a second one would harvest it." if status == "warn" else "."),
            source="common practice", subject=subject))
    return checks
