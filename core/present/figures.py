"""The small tidy tables behind every figure of the explorer and the HTML report.

Pure functions over a simulated year (the per-step table and its :class:`core.model.metrics.Results`); each returns a
long-format DataFrame with the unit in a column name, so that a chart builder only maps columns to channels.
The explorer draws them with Altair, the HTML report as inline SVG; both read the same numbers.
"""

from __future__ import annotations

import calendar
from dataclasses import dataclass

import numpy as np
import pandas as pd

from core.model.metrics import ac_surplus_w
from core.present.formats import (  # noqa: F401 - the formats are also reached through figures
    fmt_hours,
    fmt_kwh,
    fmt_pct,
    fmt_value,
    fmt_w,
    fmt_years,
)
from core.present.palette import (  # noqa: F401 - the palette is also reached through figures
    BLACK,
    BLUE,
    BLUISH_GREEN,
    DESTINATION_COLOURS,
    DIVERGING_SCHEME,
    GREY,
    OPTION_COLOURS,
    ORANGE,
    REDDISH_PURPLE,
    SEQUENTIAL_SCHEME,
    SERIES_COLOURS,
    SKY_BLUE,
    STATUS_COLOURS,
    VERMILLION,
    YELLOW,
)
from core.timebase import MONTH_NAMES

MONTH_FULL_NAMES = tuple(calendar.month_name[m] for m in range(1, 13))

#: Where PV energy goes: (figure key in Results.months, label), in stacking order.
DESTINATIONS = (
    ("pv_direct", "Used directly by the loads"),
    ("pv_to_battery", "Into the battery"),
    ("curtailed", "Curtailed"),
    ("clipped", "Clipped"),
    ("exported", "Exported"),
)


def pv_destinations_by_month(months: list[dict]) -> pd.DataFrame:
    """Where the PV energy goes, month by month.

    Parameters
    ----------
    months : list of dict
        The year's month records (``Results.months``): ``month`` 1…12 and energies in kWh.

    Returns
    -------
    pandas.DataFrame
        One row per month and destination: ``month``, ``month_name``, ``destination`` (in words), ``order``
        (stacking order) and ``kwh`` (never negative).
    """
    rows = []
    for m in months:
        for order, (key, label) in enumerate(DESTINATIONS):
            rows.append({"month": int(m["month"]), "month_name": MONTH_NAMES[int(m["month"]) - 1],
                         "destination": label, "order": order, "kwh": max(float(m.get(key, 0.0)), 0.0)})
    return pd.DataFrame(rows, columns=["month", "month_name", "destination", "order", "kwh"])


def pv_destinations_by_system(months: dict[str, list[dict]]) -> pd.DataFrame:
    """:func:`pv_destinations_by_month` of several systems (for example the existing one and one with the new
    panels), with their names in a ``system`` column, in the order given."""
    parts = [pv_destinations_by_month(m).assign(system=name) for name, m in months.items()]
    return pd.concat(parts, ignore_index=True)


def _hour_of_day(index: pd.DatetimeIndex) -> np.ndarray:
    return index.hour.to_numpy() + index.minute.to_numpy() / 60.0


def typical_day(steps: pd.DataFrame, month: int, *, usable_wh: float,
                base_load_w: float | None = None) -> pd.DataFrame:
    """Mean powers by time of day over one month, and the mean battery SOC.

    Series: backed-up loads, all loads, AC-coupled and DC-coupled PV output, what all the panels could make (their
    module-side potential) and the part of it curtailed or clipped (when the steps carry them), the month's daytime
    base load (a constant, when given) and the battery SOC (when there is a battery).

    Parameters
    ----------
    steps : pandas.DataFrame
        The year's step table (W, step means; ``soc_wh`` in Wh), indexed by interval start.
    month : int
        1…12.
    usable_wh : float
        Usable battery energy, Wh; 0 leaves the SOC out.
    base_load_w : float, optional
        The month's daytime base load, W, drawn as a constant.

    Returns
    -------
    pandas.DataFrame
        Long form: ``hour`` (interval start, hours after local standard midnight), ``series`` (in words),
        ``value`` and ``unit`` ("W", or "%" for the SOC).
    """
    part = steps[steps.index.month == month]
    hour = _hour_of_day(part.index)
    frame = pd.DataFrame({
        "hour": hour,
        "Backed-up loads": part["load_backed_w"].to_numpy(),
        "All loads": (part["load_backed_w"] + part["load_grid_only_w"]).to_numpy(),
        "AC-coupled PV output": (part["ac_backed_out_w"] + part["ac_grid_out_w"]).to_numpy(),
        "DC-coupled PV output": part["dc_out_w"].to_numpy(),
    })
    if "pv_potential_dc_w" in part:
        frame["What the panels could make"] = (part["pv_potential_dc_w"] + part["pv_potential_ac_w"]).to_numpy()
        lost = [c for c in ("curtailed_dc_w", "curtailed_ac_backed_w", "curtailed_ac_grid_w", "clipped_dc_w", "clipped_ac_w")
                if c in part]
        frame["Curtailed or clipped"] = part[lost].sum(axis=1).to_numpy()
    if usable_wh > 0:
        frame["Battery SOC"] = part["soc_wh"].to_numpy() / usable_wh * 100.0
    means = frame.groupby("hour").mean()
    if base_load_w is not None and np.isfinite(base_load_w):
        means["Daytime base load"] = float(base_load_w)
    long = means.reset_index().melt(id_vars="hour", var_name="series", value_name="value")
    long["unit"] = np.where(long["series"] == "Battery SOC", "%", "W")
    return long


def surplus_by_month_hour(steps: pd.DataFrame, base_load_w: np.ndarray | list | None = None, *,
                          loads_w: pd.Series | None = None) -> pd.DataFrame:
    """AC-coupled output against the base load by month and hour of day.

    Parameters
    ----------
    steps : pandas.DataFrame
        The year's step table (W, step means).
    base_load_w : array-like of 12, optional
        Monthly daytime base loads, W (None or NaN for a month without one). Without them the mean load of that
        month and hour is the reference.
    loads_w : pandas.Series, optional
        The loads to compare with, W per step; all loads when not given.

    Returns
    -------
    pandas.DataFrame
        ``month``, ``month_name``, ``hour``, ``ac_w`` (mean AC-coupled output), ``reference_w`` and
        ``surplus_w`` = ``ac_w`` − ``reference_w``, all W. Above zero the output exceeds what the base load
        takes, and must go into the battery, be curtailed or leave the site.
    """
    ac = steps["ac_backed_out_w"] + steps["ac_grid_out_w"]
    load = loads_w if loads_w is not None else steps["load_backed_w"] + steps["load_grid_only_w"]
    frame = pd.DataFrame({"month": steps.index.month, "hour": steps.index.hour, "ac_w": ac.to_numpy(),
                          "load_w": np.asarray(load, dtype=float)})
    means = frame.groupby(["month", "hour"], as_index=False).mean()
    if base_load_w is not None:
        base = np.asarray([np.nan if v is None else v for v in base_load_w], dtype=float)
        means["reference_w"] = base[means["month"].to_numpy() - 1]
        missing = ~np.isfinite(means["reference_w"])
        means.loc[missing, "reference_w"] = means.loc[missing, "load_w"]
    else:
        means["reference_w"] = means["load_w"]
    means["surplus_w"] = means["ac_w"] - means["reference_w"]
    means["month_name"] = [MONTH_NAMES[m - 1] for m in means["month"]]
    return means[["month", "month_name", "hour", "ac_w", "reference_w", "surplus_w"]]


def ac_surplus_duration(steps: pd.DataFrame, daylight: np.ndarray, dt_h: float,
                        loads_w: pd.Series | None = None) -> pd.DataFrame:
    """Duration curve over the daylight steps of AC-coupled output minus the load at that moment.

    Parameters
    ----------
    steps : pandas.DataFrame
        The year's step table (W, step means).
    daylight : array-like of bool
        Whether each step is in daylight.
    dt_h : float
        The step, h.
    loads_w : pandas.Series, optional
        The loads to compare with, W per step; all loads when not given.

    Returns
    -------
    pandas.DataFrame
        ``hours`` (cumulative daylight hours) and ``surplus_w`` (W), from the highest surplus down.
    """
    ac = (steps["ac_backed_out_w"] + steps["ac_grid_out_w"]).to_numpy()
    load = np.asarray(loads_w if loads_w is not None else steps["load_backed_w"] + steps["load_grid_only_w"], dtype=float)
    day = np.asarray(daylight, dtype=bool)
    # Without loads_w this is the one definition of the AC surplus, core.model.metrics.ac_surplus_w (all loads;
    # grid-side units stop in an outage); with it, the output against those loads (the ones an option meets first).
    per_step = ac - load if loads_w is not None else ac_surplus_w(
        steps["ac_backed_out_w"], steps["ac_grid_out_w"], steps["load_backed_w"], steps["load_grid_only_w"],
        steps.get("grid_up"))
    surplus = np.sort(per_step[day])[::-1]
    return pd.DataFrame({"hours": np.arange(1, len(surplus) + 1) * dt_h, "surplus_w": surplus})


@dataclass(frozen=True)
class Headline:
    """One headline figure: the option's value, the baseline's and which way is better."""

    key: str
    label: str
    unit: str
    value: float | None
    baseline: float | None
    higher_is_better: bool
    alarm_when_nonzero: bool = False
    help: str = ""

    @property
    def delta(self) -> float | None:
        if self.value is None or self.baseline is None:
            return None
        return self.value - self.baseline


def loads_from_pv_kwh(energy_kwh: dict) -> float:
    """Energy delivered to the loads that did not come from the grid (kWh): loads served − grid import, the year
    total ``loads_from_pv`` of :func:`core.model.metrics.year_totals`.

    Grid import that fed conversion losses or the battery is subtracted too, so this is a conservative figure
    for what PV (directly or through the battery) gave the loads. It is not floored at zero, so that the
    headline's change is exactly the options table's "Loads supplied from PV, added".
    """
    if "loads_from_pv" in energy_kwh:
        return float(energy_kwh["loads_from_pv"])
    return float(energy_kwh["load_served"] - energy_kwh["grid_import"])


def headline_figures(results, baseline, *, payback_years: float | None = None,
                     baseline_payback_years: float | None = None) -> list[Headline]:
    """The headline figures of an option against the existing system (both :class:`core.model.metrics.Results`)."""
    e, b = results.energy_kwh, baseline.energy_kwh

    def pct(r, key):
        v = r.ratios.get(key)
        return None if v is None else v * 100.0

    return [
        Headline("loads_from_pv", "Loads supplied from PV", "kWh/yr", loads_from_pv_kwh(e), loads_from_pv_kwh(b),
                 True, help="loads served minus all grid import, over the year; its change is the options "
                            "table's \"Loads supplied from PV, added\""),
        Headline("curtailed", "Curtailed", "kWh/yr", e["curtailed"], b["curtailed"], False,
                 help="PV energy the controllers or the frequency-watt response held back"),
        Headline("clipped", "Clipped", "kWh/yr", e["clipped"], b["clipped"], False,
                 help="PV energy above a converter's rating"),
        Headline("exported_uncontrolled", "Uncontrolled export", "kWh/yr", e["exported_uncontrolled"],
                 b["exported_uncontrolled"], False, alarm_when_nonzero=True,
                 help="energy that left the site where export is not allowed or above the export limit"),
        Headline("grid_import", "Grid import", "kWh/yr", e["grid_import"], b["grid_import"], False,
                 help="including the standing draw"),
        Headline("self_sufficiency", "Self-sufficiency", "%", pct(results, "self_sufficiency"),
                 pct(baseline, "self_sufficiency"), True,
                 help="share of the whole load, served or not, covered by local production (Luthander et al. "
                      f"2015); load served {_pct_text(results, 'load_served_share')}, unserved "
                      f"{_pct_text(results, 'load_unserved_share')}"),
        Headline("payback", "Simple payback", "years", payback_years, baseline_payback_years, False,
                 help="cost of the new panels over the first year's saving"),
    ]


def _share(results, key: str) -> float | None:
    value = results.ratios.get(key)
    return None if value is None else value * 100.0


def _pct_text(results, key: str) -> str:
    value = results.ratios.get(key)
    return "—" if value is None else f"{value * 100:.1f} %"


def secondary_figures(sim, baseline_sim) -> list[Headline]:
    """Further figures of an option against the existing system (both :class:`core.simulate.SimulationResult`)."""
    r, b = sim.results, baseline_sim.results
    e, eb = r.energy_kwh, b.energy_kwh
    return [
        Headline("harvested", "PV harvested", "kWh/yr", e["harvested"], eb["harvested"], True,
                 help="module DC potential less curtailment and clipping"),
        Headline("ac_harvest", "AC-coupled PV used", "kWh/yr", e["ac_used"], eb["ac_used"], True,
                 help="microinverter output taken by the loads or the charger"),
        Headline("exported_allowed", "Export within the limit", "kWh/yr", e["exported_allowed"],
                 eb["exported_allowed"], True, help="allowed export only"),
        Headline("unserved", "Backed-up loads unserved", "kWh/yr", e["unserved_backed_up"], eb["unserved_backed_up"],
                 False, help="backed-up load that could not be served during grid outages (a failure); grid-only "
                             "loads shed by design are not counted"),
        Headline("load_unserved_share", "Load unserved", "%", _share(r, "load_unserved_share"),
                 _share(b, "load_unserved_share"), False,
                 help="share of the whole load that could not be served (outages); the rest was served"),
        Headline("cycles", "Battery cycles", "cycles/yr", r.battery.get("equivalent_full_cycles"),
                 b.battery.get("equivalent_full_cycles"), False, help="equivalent full cycles"),
    ]


def outage_events(steps: pd.DataFrame, dt_h: float, usable_wh: float) -> pd.DataFrame:
    """One row per grid outage of the year.

    Unserved counts the backed-up loads only: grid-only loads are shed in every outage by design.

    Parameters
    ----------
    steps : pandas.DataFrame
        The year's step table (``grid_up``, ``unserved_w`` in W, ``soc_wh`` in Wh).
    dt_h : float
        The step, h.
    usable_wh : float
        Usable battery energy, Wh (0 without a battery).

    Returns
    -------
    pandas.DataFrame
        ``start`` (interval start, site standard time), ``hours`` (length, h), ``unserved_kwh``,
        ``unserved_hours`` (h with unserved backed-up loads) and ``lowest_soc_pct`` (%).
    """
    up = steps["grid_up"].to_numpy(dtype=bool)
    columns = ["start", "hours", "unserved_kwh", "unserved_hours", "lowest_soc_pct"]
    if up.all():
        return pd.DataFrame(columns=columns)
    down = (~up).astype(np.int8)
    edges = np.diff(np.concatenate([[0], down, [0]]))
    starts = np.flatnonzero(edges == 1)
    ends = np.flatnonzero(edges == -1)
    unserved = (steps["unserved_backed_up_w"] if "unserved_backed_up_w" in steps
                else steps["unserved_w"] - steps["load_grid_only_w"] * ~steps["grid_up"]).to_numpy()
    soc = steps["soc_wh"].to_numpy()
    rows = []
    for s, e in zip(starts, ends, strict=True):
        rows.append({
            "start": steps.index[s],
            "hours": (e - s) * dt_h,
            "unserved_kwh": float(unserved[s:e].sum() * dt_h / 1000.0),
            "unserved_hours": float((unserved[s:e] > 1e-6).sum() * dt_h),
            "lowest_soc_pct": float(soc[s:e].min() / usable_wh * 100.0) if usable_wh > 0 else 0.0,
        })
    return pd.DataFrame(rows, columns=columns)


def ac_harvest_kwh(steps: pd.DataFrame, dt_h: float) -> float:
    """AC-coupled PV output that was used (by the loads or the charger) over the year (kWh): the year total
    ``ac_used`` of :func:`core.model.metrics.year_totals`, from a per-step table."""
    return float((steps["ac_backed_used_w"] + steps["ac_grid_used_w"]).sum() * dt_h / 1000.0)
