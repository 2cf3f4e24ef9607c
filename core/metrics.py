"""Energy balance, key figures and the base-load view of one simulated year (DESIGN.md §6).

Input is the table of per-step flows (W, step means) that the orchestrator assembles; output is a
small record of year and month figures. Ratios follow Luthander et al., "Photovoltaic
self-consumption in buildings: a review", Applied Energy 142 (2015) 80–94:
self-consumption = 1 − export / harvested PV; self-sufficiency = 1 − grid import / load.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

#: Energy figures (kWh), in report order; each is the sum of a per-step column (W) × Δt.
ENERGY_KEYS = (
    "load", "load_served", "unserved", "pv_potential", "pv_potential_dc", "pv_potential_ac", "harvested",
    "curtailed", "curtailed_dc", "curtailed_ac", "clipped", "exported", "exported_uncontrolled", "grid_import",
    "grid_import_standing", "battery_charge", "battery_discharge", "losses", "conversion_losses",
    "battery_losses", "stored_change", "balance_error", "pv_direct", "pv_to_battery", "ac_direct",
    "unserved_backed_up",
)

#: Columns of the per-step table that the figures need (W unless named otherwise).
_CONVERSION_LOSSES = ("controller_loss_w", "micro_backed_loss_w", "micro_grid_loss_w", "inverter_loss_w",
                      "idle_w", "charger_loss_w")


def derived_columns(steps: pd.DataFrame, *, initial_wh: float, dt_h: float) -> pd.DataFrame:
    """Per-step series of every energy figure (W), from the engine's flows and the PV potentials."""
    s = steps
    d = pd.DataFrame(index=s.index)
    d["load"] = s["load_backed_w"] + s["load_grid_w"]
    d["load_served"] = s["load_served_w"]
    d["unserved"] = s["unserved_w"]
    # Grid-only loads are dropped in every outage by design; the backed-up part is what ride-through is about.
    d["unserved_backed_up"] = np.maximum(s["unserved_w"] - s["load_grid_w"] * (~s["grid_up"].astype(bool)), 0.0)
    d["pv_potential_dc"] = s["pv_potential_dc_w"]
    d["pv_potential_ac"] = s["pv_potential_ac_w"]
    d["pv_potential"] = d["pv_potential_dc"] + d["pv_potential_ac"]
    d["curtailed_dc"] = s["curtailed_dc_w"]
    d["curtailed_ac"] = s["curtailed_acb_w"] + s["curtailed_acg_w"]
    d["curtailed"] = d["curtailed_dc"] + d["curtailed_ac"]
    d["clipped"] = s["clipped_dc_w"] + s["clipped_ac_w"]
    d["harvested"] = d["pv_potential"] - d["curtailed"] - d["clipped"]
    d["exported_uncontrolled"] = s["export_uncontrolled_w"]
    d["exported"] = s["export_allowed_w"] + s["export_uncontrolled_w"]
    d["grid_import"] = s["grid_import_w"]
    d["grid_import_standing"] = s["grid_import_standing_w"]
    d["battery_charge"] = s["battery_charge_w"]
    d["battery_discharge"] = s["battery_discharge_w"]
    d["conversion_losses"] = s[list(_CONVERSION_LOSSES)].sum(axis=1)
    d["battery_losses"] = s["battery_loss_w"]
    d["losses"] = d["conversion_losses"] + d["battery_losses"]
    soc = s["soc_wh"].to_numpy()
    previous = np.concatenate([[initial_wh], soc[:-1]])
    d["stored_change"] = (soc - previous) / dt_h
    d["balance_error"] = (d["pv_potential"] + d["grid_import"]
                          - (d["load_served"] + d["exported"] + d["curtailed"] + d["clipped"] + d["losses"]
                             + d["stored_change"]))
    # Where the PV energy goes: used by the loads as it is made (AC-coupled output, and DC PV through
    # the inverter), or stored. AC-coupled output serves the loads first, less the standing draw that
    # the controller keeps importing.
    ac_used = s["ac_backed_used_w"] + s["ac_grid_used_w"]
    d["ac_direct"] = np.minimum(ac_used, np.maximum(s["load_served_w"] - s["grid_import_standing_w"], 0.0))
    inv_share = np.divide(s["inverter_pv_dc_w"], s["inverter_ac_w"] + s["inverter_loss_w"],
                          out=np.zeros(len(s)), where=(s["inverter_ac_w"] + s["inverter_loss_w"]) > 0)
    dc_direct = np.maximum(s["inverter_ac_w"] * inv_share - s["export_allowed_w"], 0.0)
    d["pv_direct"] = d["ac_direct"] + dc_direct
    d["pv_to_battery"] = s["pv_to_battery_w"]
    return d


@dataclass(frozen=True)
class Results:
    """The figures of one simulated year."""

    energy_kwh: dict[str, float]
    months: list[dict[str, float]]
    ratios: dict[str, float | None]
    hours: dict[str, float]
    battery: dict[str, object]
    baseload: dict[str, float | None]
    weather: dict[str, object] = field(default_factory=dict)

    def to_dict(self) -> dict:
        return {"energy_kwh": self.energy_kwh, "ratios": self.ratios, "hours": self.hours,
                "battery": self.battery, "baseload": self.baseload, "months": self.months,
                "weather": self.weather}


def _ratio(num: float, den: float) -> float | None:
    return None if den <= 1e-9 else float(num / den)


def summarise(steps: pd.DataFrame, *, dt_h: float, initial_wh: float, usable_wh: float,
              daylight: np.ndarray, weather: dict | None = None) -> Results:
    """Year and month figures from the per-step table (see :func:`derived_columns`)."""
    d = derived_columns(steps, initial_wh=initial_wh, dt_h=dt_h)
    kwh = d[list(ENERGY_KEYS)] * (dt_h / 1000.0)
    year = {k: float(v) for k, v in kwh.sum().items()}
    by_month = kwh.groupby(kwh.index.month).sum()
    months = [{"month": int(m), **{k: float(v) for k, v in row.items()}} for m, row in by_month.iterrows()]
    e = year
    ratios = {
        "self_consumption": None if _ratio(e["exported"], e["harvested"]) is None
        else 1.0 - e["exported"] / e["harvested"],
        "self_sufficiency": None if e["load"] <= 1e-9 else 1.0 - e["grid_import"] / e["load"],
        "pv_utilisation": _ratio(e["harvested"], e["pv_potential"]),
    }
    up = steps["grid_up"].to_numpy(dtype=bool)
    hours = {
        "export": float((steps["export_allowed_w"] + steps["export_uncontrolled_w"] > 1e-6).sum() * dt_h),
        "export_uncontrolled": float((steps["export_uncontrolled_w"] > 1e-6).sum() * dt_h),
        "outage": float((~up).sum() * dt_h),
        "unserved": float((steps["unserved_w"] > 1e-6).sum() * dt_h),
        "unserved_backed_up": float((d["unserved_backed_up"] > 1e-6).sum() * dt_h),
        "curtailment": float((d["curtailed"] > 1e-6).sum() * dt_h),
    }
    soc_pct = steps["soc_wh"].to_numpy() / usable_wh * 100.0 if usable_wh > 0 else np.zeros(len(steps))
    histogram, _ = np.histogram(soc_pct, bins=np.linspace(0.0, 100.0, 11))
    battery = {
        "equivalent_full_cycles": float(e["battery_discharge"] / (usable_wh / 1000.0)) if usable_wh > 0 else 0.0,
        "soc_share_by_decile": [float(x) for x in histogram / max(len(steps), 1)],
        "min_soc_pct": float(soc_pct.min()) if len(soc_pct) else 0.0,
    }
    ac_out = steps["ac_backed_out_w"] + steps["ac_grid_out_w"]
    ac_harvest = (steps["ac_backed_used_w"] + steps["ac_grid_used_w"]).sum()
    surplus = (ac_out - d["load"]) > 1e-6
    day = np.asarray(daylight, dtype=bool)
    backed_day = steps["load_backed_w"].to_numpy()[day]
    covered = np.minimum(backed_day, d["pv_direct"].to_numpy()[day])
    baseload = {
        "ac_direct_share": _ratio(float(d["ac_direct"].sum()), float(ac_harvest)),
        "ac_surplus_daylight_hours": float((surplus.to_numpy() & day).sum() * dt_h),
        "daytime_backed_up_covered_share": _ratio(float(covered.sum()), float(backed_day.sum())),
    }
    return Results(energy_kwh=year, months=months, ratios=ratios, hours=hours, battery=battery,
                   baseload=baseload, weather=weather or {})
