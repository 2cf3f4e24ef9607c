"""Energy balance, key figures and the base-load view of one simulated year (docs/design.md §5).

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
    "unserved_backed_up", "shed_grid_only",
    # Where AC-coupled output was held back (parts of curtailed_ac): an export limiter, frequency-watt while
    # off-grid, the SOC relay open, the microinverters' reconnect wait.
    "curtailed_limiter", "curtailed_frequency_watt", "curtailed_relay", "reconnect_wait",
)
#: Further year figures (kWh) beside :data:`ENERGY_KEYS`, which the option deltas and the headline need: clipping
#: per side, allowed export, what the loads got from PV net of grid import (``loads_from_pv``) and the
#: microinverter output taken by the loads or the charger (``ac_used``).
DETAIL_KEYS = ("clipped_dc", "clipped_ac", "exported_allowed", "loads_from_pv", "ac_used")
#: Every key of :func:`year_totals`' energies.
TOTAL_KEYS = ENERGY_KEYS + DETAIL_KEYS
#: Powers below this count as none when counting hours (W): rounding of the engine's sums.
HOURS_EPS_W = 1e-6
#: Engine flows behind the held-back figures; a table without them (an older steps file) counts zero.
_HELD_BACK = {"curtailed_limiter": "curtailed_limiter_w", "curtailed_frequency_watt": "curtailed_fw_w",
              "curtailed_relay": "curtailed_relay_w", "reconnect_wait": "curtailed_wait_w"}

_CONVERSION_LOSSES = ("controller_loss_w", "ac_backed_conversion_loss_w", "ac_grid_conversion_loss_w", "inverter_loss_w",
                      "idle_w", "charger_loss_w")
#: Columns of the per-step table that the figures need (W unless named otherwise; ``grid_up`` is boolean).
INPUT_COLUMNS = (
    "load_backed_w", "load_grid_only_w", "grid_up", "load_served_w", "unserved_w", "pv_potential_dc_w",
    "pv_potential_ac_w", "curtailed_dc_w", "curtailed_ac_backed_w", "curtailed_ac_grid_w", "clipped_dc_w", "clipped_ac_w",
    "export_allowed_w", "export_uncontrolled_w", "grid_import_w", "grid_import_standing_w", "battery_charge_w",
    "battery_discharge_w", "battery_loss_w", "soc_wh", "ac_backed_used_w", "ac_grid_used_w", "inverter_pv_dc_w",
    "inverter_ac_w", "inverter_loss_w", "pv_to_battery_w", "ac_backed_out_w", "ac_grid_out_w", *_CONVERSION_LOSSES,
)


def ac_surplus_w(ac_backed_out_w, ac_grid_out_w, load_backed_w, load_grid_only_w, grid_up=None, *,
                 metering: str = "site") -> np.ndarray:
    """AC-coupled output above the loads it meets, per step, before the battery or any curtailment takes it (W).

    The one definition of "the AC surplus" (negative where the loads take more than the microinverters give):

    * grid up, ``metering="site"`` (the controller sees every load): ``H_acb + H_acg − L_b − L_g``;
    * grid up, ``metering="inverter"`` (it sees only its own output side): ``H_acb − L_b``;
    * grid down (``grid_up`` False): ``H_acb − L_b`` — grid-side microinverters stop (anti-islanding, IEEE 1547
      and EN 50549 require it) and grid-only loads are dropped.

    ``H`` are microinverter outputs before any curtailment, ``L`` the loads; ``grid_up=None`` means always up.
    """
    acb = np.asarray(ac_backed_out_w, dtype=float)
    lb = np.asarray(load_backed_w, dtype=float)
    backed = acb - lb
    if metering == "inverter":
        seen = backed
    elif metering == "site":
        seen = backed + np.asarray(ac_grid_out_w, dtype=float) - np.asarray(load_grid_only_w, dtype=float)
    else:
        raise ValueError(f"metering must be 'site' or 'inverter', not {metering!r}")
    if grid_up is None:
        return seen
    return np.where(np.asarray(grid_up, dtype=bool), seen, backed)


def hours_with(series_w: np.ndarray, dt_h: float) -> float:
    """Hours of the year in which a power series is above zero (beyond :data:`HOURS_EPS_W`)."""
    return float(np.count_nonzero(np.asarray(series_w) > HOURS_EPS_W) * dt_h)


def _arrays(steps: pd.DataFrame) -> dict[str, np.ndarray]:
    """The columns the figures need, as arrays."""
    out = {name: steps[name].to_numpy(dtype=bool if name == "grid_up" else float) for name in INPUT_COLUMNS}
    out.update({name: steps[name].to_numpy(dtype=float) for name in (*_HELD_BACK.values(), "islanded")
                if name in steps})
    return out


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
    d["shed_grid_only"] = d["unserved"] - d["unserved_backed_up"]  # grid-only load dropped in outages by design
    zero = np.zeros(len(d["unserved"]))
    for key, column in _HELD_BACK.items():
        d[key] = c[column] if column in c else zero
    d["islanded"] = c["islanded"] if "islanded" in c else zero  # 1 in steps the inverter-charger ran off-grid
    d["pv_potential_dc"] = c["pv_potential_dc_w"]
    d["pv_potential_ac"] = c["pv_potential_ac_w"]
    d["pv_potential"] = d["pv_potential_dc"] + d["pv_potential_ac"]
    d["curtailed_dc"] = c["curtailed_dc_w"]
    d["curtailed_ac"] = c["curtailed_ac_backed_w"] + c["curtailed_ac_grid_w"]
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
    d["ac_used"] = ac_used
    d["ac_direct"] = np.minimum(ac_used, np.maximum(c["load_served_w"] - c["grid_import_standing_w"], 0.0))
    inverter_dc = c["inverter_ac_w"] + c["inverter_loss_w"]
    inv_share = np.divide(c["inverter_pv_dc_w"], inverter_dc, out=np.zeros(len(soc)), where=inverter_dc > 0)
    dc_direct = np.maximum(c["inverter_ac_w"] * inv_share - c["export_allowed_w"], 0.0)
    d["pv_direct"] = d["ac_direct"] + dc_direct
    d["pv_to_battery"] = c["pv_to_battery_w"]
    d["clipped_dc"] = c["clipped_dc_w"]
    d["clipped_ac"] = c["clipped_ac_w"]
    d["exported_allowed"] = c["export_allowed_w"]
    # What the loads got that the grid did not give: served load less all grid import (which also covers the
    # system's own losses, so this is net, and may be below zero for a system that gives less than it uses).
    d["loads_from_pv"] = c["load_served_w"] - c["grid_import_w"]
    return d


class MonthGroups:
    """The steps grouped by calendar month, for sums per month without pandas (a groupby on plain arrays).

    ``month``: each step's month 1…12. Steps in time order (one nominal year) form at most twelve runs and are
    summed run by run; any other order falls back to counting by month number.
    """

    def __init__(self, month) -> None:
        m = np.asarray(month, dtype=np.intp)
        self._month = m
        self._starts: np.ndarray | None
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
    """Year and month figures from the per-step table (the engine's flows and the PV potentials, W)."""
    return summarise_columns(_arrays(steps), months=MonthGroups(steps.index.month), dt_h=dt_h,
                             initial_wh=initial_wh, usable_wh=usable_wh, daylight=daylight, weather=weather)


def summarise_columns(c: Mapping[str, np.ndarray], *, months: MonthGroups, dt_h: float, initial_wh: float,
                      usable_wh: float, daylight: np.ndarray, weather: dict | None = None) -> Results:
    """:func:`summarise` on the table's columns given as arrays (:data:`INPUT_COLUMNS`), steps grouped by month."""
    d = _derived(c, initial_wh=initial_wh, dt_h=dt_h)
    up = np.asarray(c["grid_up"], dtype=bool)
    totals = _totals(d, up, dt_h)
    to_kwh = dt_h / 1000.0
    year = totals.energy_kwh
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
    hours = totals.hours
    n = len(up)
    soc_pct = c["soc_wh"] / usable_wh * 100.0 if usable_wh > 0 else np.zeros(n)
    histogram, _ = np.histogram(soc_pct, bins=np.linspace(0.0, 100.0, 11))
    battery = {
        "equivalent_full_cycles": float(e["battery_discharge"] / (usable_wh / 1000.0)) if usable_wh > 0 else 0.0,
        "soc_share_by_decile": [float(x) for x in histogram / max(n, 1)],
        "min_soc_pct": float(soc_pct.min()) if len(soc_pct) else 0.0,
    }
    ac_harvest = d["ac_used"].sum()
    surplus = ac_surplus_w(c["ac_backed_out_w"], c["ac_grid_out_w"], c["load_backed_w"], c["load_grid_only_w"],
                           up) > HOURS_EPS_W
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


# ------------------------------------------------------------------------------------------------ totals
@dataclass(frozen=True)
class YearTotals:
    """A year's energy figures (kWh, keys :data:`TOTAL_KEYS`) and hours (h) — what :func:`delta` compares."""

    energy_kwh: dict[str, float]
    hours: dict[str, float]


def _hours(d: Mapping[str, np.ndarray], grid_up: np.ndarray, dt_h: float) -> dict[str, float]:
    up = np.asarray(grid_up, dtype=bool)
    return {
        "export": hours_with(d["exported"], dt_h),
        "export_uncontrolled": hours_with(d["exported_uncontrolled"], dt_h),
        "outage": float(np.count_nonzero(~up) * dt_h),
        "unserved": hours_with(d["unserved"], dt_h),
        "unserved_backed_up": hours_with(d["unserved_backed_up"], dt_h),
        "curtailment": hours_with(d["curtailed"], dt_h),
        "islanded": hours_with(d["islanded"], dt_h),
    }


def _totals(d: Mapping[str, np.ndarray], grid_up: np.ndarray, dt_h: float) -> YearTotals:
    to_kwh = dt_h / 1000.0
    return YearTotals(energy_kwh={k: float(d[k].sum() * to_kwh) for k in TOTAL_KEYS}, hours=_hours(d, grid_up, dt_h))


def year_totals(c: Mapping[str, np.ndarray], *, dt_h: float, initial_wh: float) -> YearTotals:
    """The year's energy figures (kWh) and hours from the per-step columns (:data:`INPUT_COLUMNS`, W).

    The one place a year total is computed: :func:`summarise_columns` (a simulated year), the sweep (many
    variants, reduced at once) and :func:`delta` (an option against the existing system) all read these.
    """
    return _totals(_derived(c, initial_wh=initial_wh, dt_h=dt_h), c["grid_up"], dt_h)


#: Keys of :func:`delta`, kWh a year unless the name says otherwise.
DELTA_KEYS = (
    "expansion_potential_kwh", "to_loads_added_kwh", "grid_import_saved_kwh", "unserved_added_kwh",
    "self_consumed_added_kwh", "harvested_added_kwh", "battery_charge_added_kwh", "battery_discharge_added_kwh",
    "battery_cycles_added", "curtailed_added_kwh", "curtailed_dc_added_kwh", "curtailed_ac_added_kwh",
    "clipped_added_kwh", "clipped_dc_added_kwh", "clipped_ac_added_kwh", "curtailed_share", "clipped_share",
    "exported_added_kwh", "export_allowed_added_kwh", "exported_uncontrolled_kwh", "exported_uncontrolled_hours",
    "exported_uncontrolled_added_kwh", "conversion_losses_added_kwh", "battery_losses_added_kwh",
)


def delta(base, option, *, expansion_potential_kwh: float = 0.0, usable_kwh: float = 0.0) -> dict[str, float]:
    """An option's year against the existing system's (both :class:`YearTotals` or :class:`Results`).

    The one definition of every "added" figure (keys :data:`DELTA_KEYS`):

    * ``to_loads_added_kwh`` — the change in ``loads_from_pv`` (load served less grid import): grid import
      saved plus load served in outages that was unserved before (the load itself is the same in both);
    * ``self_consumed_added_kwh`` — harvested PV not exported, after Luthander et al., "Photovoltaic
      self-consumption in buildings: a review", Applied Energy 142 (2015) 80–94;
    * ``curtailed_share`` and ``clipped_share`` — the added curtailment and clipping as shares (0…1) of the new
      panels' module energy ``expansion_potential_kwh``;
    * ``exported_uncontrolled_kwh`` and ``…_hours`` — the option's own (not a difference): any is too much under
      a zero-export connection.
    """
    b, o = base.energy_kwh, option.energy_kwh

    def d(key: str) -> float:
        return float(o[key] - b[key])

    pot = float(expansion_potential_kwh)
    return {
        "expansion_potential_kwh": pot,
        "to_loads_added_kwh": d("loads_from_pv"),
        "grid_import_saved_kwh": -d("grid_import"),
        "unserved_added_kwh": d("unserved"),
        "self_consumed_added_kwh": d("harvested") - d("exported"),
        "harvested_added_kwh": d("harvested"),
        "battery_charge_added_kwh": d("battery_charge"),
        "battery_discharge_added_kwh": d("battery_discharge"),
        "battery_cycles_added": d("battery_discharge") / usable_kwh if usable_kwh > 0 else 0.0,
        "curtailed_added_kwh": d("curtailed"),
        "curtailed_dc_added_kwh": d("curtailed_dc"),
        "curtailed_ac_added_kwh": d("curtailed_ac"),
        "clipped_added_kwh": d("clipped"),
        "clipped_dc_added_kwh": d("clipped_dc"),
        "clipped_ac_added_kwh": d("clipped_ac"),
        "curtailed_share": d("curtailed") / pot if pot > 0 else 0.0,
        "clipped_share": d("clipped") / pot if pot > 0 else 0.0,
        "exported_added_kwh": d("exported"),
        "export_allowed_added_kwh": d("exported_allowed"),
        "exported_uncontrolled_kwh": float(o["exported_uncontrolled"]),
        "exported_uncontrolled_hours": float(option.hours["export_uncontrolled"]),
        "exported_uncontrolled_added_kwh": d("exported_uncontrolled"),
        "conversion_losses_added_kwh": d("conversion_losses"),
        "battery_losses_added_kwh": d("battery_losses"),
    }
