"""What running the system costs for a year under the tariff, and what its own draws cost.

``standing_draw_cost``: the import the zero-export margin causes — the year with the scenario's standing
draw minus the same year with none, priced by the hour. ``idle_cost``: the same for the inverter-charger's
own (idle) draw. Both are also given in kWh; the re-runs reuse the year's sources and go through the
engine only.
"""

from __future__ import annotations

import numpy as np

from core.model import dispatch, outages, tariff
from core.simulate import SimulationResult, dispatch_inputs, dispatch_params, import_prices, reconnect_delay_s


def money(sim: SimulationResult, *, compiled: bool = True) -> dict:
    """The first year's bill and the cost of the standing and idle draws (tariff currency; kWh alongside)."""
    sc, site = sim.scenario, sim.site
    t, dt_h = sc.tariff, site.dt_h
    price = import_prices(sc, site)
    paid_export = sim.steps["export_allowed_w"].to_numpy() if sc.grid.export_allowed else np.zeros(len(price))
    imp = sim.steps["grid_import_w"].to_numpy()
    out = {"currency": t.currency, **tariff.bill(imp, paid_export, price, dt_h=dt_h,
                                                  export_price_per_kwh=t.export_price_per_kwh,
                                                  fixed_per_month=t.fixed_per_month)}
    inputs = dispatch_inputs(sc, site, sim.sources)

    def without(**change) -> tuple[float, float]:
        other = dispatch.dispatch(inputs, dispatch_params(sc, dt_h, **change), compiled=compiled)["grid_import_w"]
        return (float(np.sum((imp - other) * price) * dt_h / 1000.0), float(np.sum(imp - other) * dt_h / 1000.0))

    out["standing_draw_cost"], out["standing_draw_kwh"] = without(standing_draw_w=0.0)
    out["idle_cost"], out["idle_kwh"] = without(idle_w=0.0)
    out["mean_import_price_per_kwh"] = float(np.sum(imp * price) / np.sum(imp)) if np.sum(imp) > 0 else None
    return {k: (round(v, 2) if isinstance(v, float) else v) for k, v in out.items()}


def charge_window_value(sim: SimulationResult, *, compiled: bool = True) -> dict | None:
    """Whether grid charging by the clock pays: the year's import cost with the window minus without it."""
    sc = sim.scenario
    if sc.grid.charge_window is None:
        return None
    site, dt_h = sim.site, sim.site.dt_h
    price = import_prices(sc, site)
    imp = sim.steps["grid_import_w"].to_numpy()
    other = dispatch.dispatch(dispatch_inputs(sc, site, sim.sources), dispatch_params(sc, dt_h, charge_window_target_wh=0.0),
                              compiled=compiled)["grid_import_w"]
    cost = float(np.sum((imp - other) * price) * dt_h / 1000.0)
    return {"extra_import_kwh": round(float(np.sum(imp - other) * dt_h / 1000.0), 2),
            "cost": round(cost, 2), "pays": cost < 0.0}


def outage_figures(sim: SimulationResult, draws=None) -> dict:
    """The ``outages`` record: statistics over the draws (or the one year when outages are not random), and
    the expected effects of momentary interruptions and of the grid-only loads' restore delay."""
    sc, site = sim.scenario, sim.site
    e, h = sim.results.energy_kwh, sim.results.hours
    if draws is not None:
        out = draws.to_dict()
    else:
        one = {"p50": round(e["unserved_backed_up"], 2), "p90": round(e["unserved_backed_up"], 2),
               "worst": round(e["unserved_backed_up"], 2)}
        hrs = {k: round(h["unserved_backed_up"], 2) for k in ("p50", "p90", "worst")}
        out = {"draws": 1, "unserved_backed_up_kwh": one, "unserved_backed_up_hours": hrs}
    g = sc.grid
    steps = sim.steps
    out["momentary"] = outages.momentary_effects(
        per_year=12.0 * g.momentary_per_month, transfer_ms=sc.inverter_charger.transfer_ms,
        mean_grid_side_pv_w=float(steps["ac_grid_out_w"].mean()),
        mean_grid_only_load_w=float(steps["load_grid_only_w"].mean()), reconnect_s=reconnect_delay_s(sc),
        restore_delay_s=g.restore_delay_s)
    out["restore_delay_shed_kwh"] = round(outages.restore_delay_shed_wh(
        site.grid_up, site.load_grid_only_w, step_s=site.step_s, restore_delay_s=g.restore_delay_s) / 1000.0, 3)
    return out
