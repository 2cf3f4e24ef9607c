"""Energy balance, key figures and the base-load view of one simulated year (DESIGN.md §6).

Input is the table of per-step flows (W, step means) that the orchestrator assembles; output is a
small record of year and month figures. Ratios follow Luthander et al., "Photovoltaic
self-consumption in buildings: a review", Applied Energy 142 (2015) 80–94:
self-consumption = 1 − export / harvested PV; self-sufficiency = 1 − grid import / load.
"""

from __future__ import annotations

from collections.abc import Mapping
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

_CONVERSION_LOSSES = ("controller_loss_w", "ac_backed_conversion_loss_w", "ac_grid_conversion_loss_w", "inverter_loss_w",
                      "idle_w", "charger_loss_w")
#: Columns of the per-step table that the figures need (W unless named otherwise; ``grid_up`` is boolean).
INPUT_COLUMNS = (
    "load_backed_w", "load_grid_only_w", "grid_up", "load_served_w", "unserved_w", "pv_potential_dc_w",
    "pv_potential_ac_w", "curtailed_dc_w", "curtailed_acb_w", "curtailed_acg_w", "clipped_dc_w", "clipped_ac_w",
    "export_allowed_w", "export_uncontrolled_w", "grid_import_w", "grid_import_standing_w", "battery_charge_w",
    "battery_discharge_w", "battery_loss_w", "soc_wh", "ac_backed_used_w", "ac_grid_used_w", "inverter_pv_dc_w",
    "inverter_ac_w", "inverter_loss_w", "pv_to_battery_w", "ac_backed_out_w", "ac_grid_out_w", *_CONVERSION_LOSSES,
)


def _arrays(steps: pd.DataFrame) -> dict[str, np.ndarray]:
    """The columns the figures need, as arrays."""
    return {name: steps[name].to_numpy(dtype=bool if name == "grid_up" else float) for name in INPUT_COLUMNS}


def _derived(c: Mapping[str, np.ndarray], *, initial_wh: float, dt_h: float) -> dict[str, np.ndarray]:
    """Per-step series of every energy figure (W) as plain arrays, from the engine's flows and the PV potentials.

    Plain numpy rather than DataFrame columns: this runs on every what-if, and a year of one-minute steps
    has half a million rows (docs/performance.md).
    """
    d: dict[str, np.ndarray] = {}
    d["load"] = c["load_backed_w"] + c["load_grid_only_w"]
    d["load_served"] = c["load_served_w"]
    d["unserved"] = c["unserved_w"]
    # Grid-only loads are dropped in every outage by design; the backed-up part is what ride-through is about.
    d["unserved_backed_up"] = np.maximum(c["unserved_w"] - c["load_grid_only_w"] * ~np.asarray(c["grid_up"], dtype=bool),
                                         0.0)
    d["pv_potential_dc"] = c["pv_potential_dc_w"]
    d["pv_potential_ac"] = c["pv_potential_ac_w"]
    d["pv_potential"] = d["pv_potential_dc"] + d["pv_potential_ac"]
    d["curtailed_dc"] = c["curtailed_dc_w"]
    d["curtailed_ac"] = c["curtailed_acb_w"] + c["curtailed_acg_w"]
    d["curtailed"] = d["curtailed_dc"] + d["curtailed_ac"]
    d["clipped"] = c["clipped_dc_w"] + c["clipped_ac_w"]
    d["harvested"] = d["pv_potential"] - d["curtailed"] - d["clipped"]
    d["exported_uncontrolled"] = c["export_uncontrolled_w"]
    d["exported"] = c["export_allowed_w"] + c["export_uncontrolled_w"]
    d["grid_import"] = c["grid_import_w"]
    d["grid_import_standing"] = c["grid_import_standing_w"]
    d["battery_charge"] = c["battery_charge_w"]
    d["battery_discharge"] = c["battery_discharge_w"]
    conversion = np.array(c[_CONVERSION_LOSSES[0]], dtype=float)
    for name in _CONVERSION_LOSSES[1:]:
        conversion += c[name]
    d["conversion_losses"] = conversion
    d["battery_losses"] = c["battery_loss_w"]
    d["losses"] = d["conversion_losses"] + d["battery_losses"]
    soc = c["soc_wh"]
    previous = np.concatenate([[initial_wh], soc[:-1]])
    d["stored_change"] = (soc - previous) / dt_h
    d["balance_error"] = (d["pv_potential"] + d["grid_import"]
                          - (d["load_served"] + d["exported"] + d["curtailed"] + d["clipped"] + d["losses"]
                             + d["stored_change"]))
    # Where the PV energy goes: used by the loads as it is made (AC-coupled output, and DC PV through
    # the inverter), or stored. AC-coupled output serves the loads first, less the standing draw that
    # the controller keeps importing.
    ac_used = c["ac_backed_used_w"] + c["ac_grid_used_w"]
    d["ac_direct"] = np.minimum(ac_used, np.maximum(c["load_served_w"] - c["grid_import_standing_w"], 0.0))
    inverter_dc = c["inverter_ac_w"] + c["inverter_loss_w"]
    inv_share = np.divide(c["inverter_pv_dc_w"], inverter_dc, out=np.zeros(len(soc)), where=inverter_dc > 0)
    dc_direct = np.maximum(c["inverter_ac_w"] * inv_share - c["export_allowed_w"], 0.0)
    d["pv_direct"] = d["ac_direct"] + dc_direct
    d["pv_to_battery"] = c["pv_to_battery_w"]
    return d


def derived_columns(steps: pd.DataFrame, *, initial_wh: float, dt_h: float) -> pd.DataFrame:
    """Per-step series of every energy figure (W), from the engine's flows and the PV potentials."""
    return pd.DataFrame(_derived(_arrays(steps), initial_wh=initial_wh, dt_h=dt_h), index=steps.index)


class MonthGroups:
    """The steps grouped by calendar month, for sums per month without pandas (a groupby on plain arrays).

    ``month``: each step's month 1…12. Steps in time order (one nominal year) form at most twelve runs and are
    summed run by run; any other order falls back to counting by month number.
    """

    def __init__(self, month) -> None:
        m = np.asarray(month, dtype=np.intp)
        self._month = m
        if len(m) and np.all(m[1:] >= m[:-1]):
            self._starts = np.concatenate([[0], np.flatnonzero(np.diff(m)) + 1])
            self.present = m[self._starts]
        else:
            self._starts = None
            self.present = np.flatnonzero(np.bincount(m, minlength=13))

    def sums(self, values: np.ndarray) -> np.ndarray:
        """The sum of ``values`` in each month of :attr:`present`."""
        if self._starts is not None:
            return np.add.reduceat(np.asarray(values, dtype=float), self._starts)
        return np.bincount(self._month, weights=values, minlength=13)[self.present]


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
    return summarise_columns(_arrays(steps), months=MonthGroups(steps.index.month), dt_h=dt_h,
                             initial_wh=initial_wh, usable_wh=usable_wh, daylight=daylight, weather=weather)


def summarise_columns(c: Mapping[str, np.ndarray], *, months: MonthGroups, dt_h: float, initial_wh: float,
                      usable_wh: float, daylight: np.ndarray, weather: dict | None = None) -> Results:
    """:func:`summarise` on the table's columns given as arrays (:data:`INPUT_COLUMNS`), steps grouped by month."""
    d = _derived(c, initial_wh=initial_wh, dt_h=dt_h)
    to_kwh = dt_h / 1000.0
    year = {k: float(d[k].sum() * to_kwh) for k in ENERGY_KEYS}
    by_month = {k: months.sums(d[k]) * to_kwh for k in ENERGY_KEYS}
    month_rows = [{"month": int(m), **{k: float(by_month[k][i]) for k in ENERGY_KEYS}}
                  for i, m in enumerate(months.present)]
    e = year
    ratios = {
        "self_consumption": None if _ratio(e["exported"], e["harvested"]) is None
        else 1.0 - e["exported"] / e["harvested"],
        # Self-sufficiency as Luthander et al. (2015, Applied Energy 142, 80-94) define it: the share of the load
        # covered by local production, against the WHOLE load, served or not (1 - import / load would call a year
        # of unserved outages self-sufficient). Local supply = load served less grid import; the grid also feeds
        # the system's own draw (idle, charger losses), so the share is floored at 0 rather than shown negative.
        "self_sufficiency": None if e["load"] <= 1e-9
        else min(1.0, max(0.0, (e["load_served"] - e["grid_import"]) / e["load"])),
        # ... with the load's served and unserved shares beside it (they add up to 1).
        "load_served_share": _ratio(e["load_served"], e["load"]),
        "load_unserved_share": _ratio(e["unserved"], e["load"]),
        "pv_utilisation": _ratio(e["harvested"], e["pv_potential"]),
    }
    up = np.asarray(c["grid_up"], dtype=bool)
    hours = {
        "export": float(np.count_nonzero(d["exported"] > 1e-6) * dt_h),
        "export_uncontrolled": float(np.count_nonzero(d["exported_uncontrolled"] > 1e-6) * dt_h),
        "outage": float(np.count_nonzero(~up) * dt_h),
        "unserved": float(np.count_nonzero(d["unserved"] > 1e-6) * dt_h),
        "unserved_backed_up": float(np.count_nonzero(d["unserved_backed_up"] > 1e-6) * dt_h),
        "curtailment": float(np.count_nonzero(d["curtailed"] > 1e-6) * dt_h),
    }
    n = len(up)
    soc_pct = c["soc_wh"] / usable_wh * 100.0 if usable_wh > 0 else np.zeros(n)
    histogram, _ = np.histogram(soc_pct, bins=np.linspace(0.0, 100.0, 11))
    battery = {
        "equivalent_full_cycles": float(e["battery_discharge"] / (usable_wh / 1000.0)) if usable_wh > 0 else 0.0,
        "soc_share_by_decile": [float(x) for x in histogram / max(n, 1)],
        "min_soc_pct": float(soc_pct.min()) if len(soc_pct) else 0.0,
    }
    ac_out = c["ac_backed_out_w"] + c["ac_grid_out_w"]
    ac_harvest = (c["ac_backed_used_w"] + c["ac_grid_used_w"]).sum()
    surplus = (ac_out - d["load"]) > 1e-6
    day = np.asarray(daylight, dtype=bool)
    backed_day = c["load_backed_w"][day]
    covered = np.minimum(backed_day, d["pv_direct"][day])
    baseload = {
        "ac_direct_share": _ratio(float(d["ac_direct"].sum()), float(ac_harvest)),
        "ac_surplus_daylight_hours": float(np.count_nonzero(surplus & day) * dt_h),
        "daytime_backed_up_covered_share": _ratio(float(covered.sum()), float(backed_day.sum())),
    }
    return Results(energy_kwh=year, months=month_rows, ratios=ratios, hours=hours, battery=battery,
                   baseload=baseload, weather=weather or {})
