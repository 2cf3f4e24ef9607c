"""AC-coupled output against the base load over the year: does the new panel stay under the daytime base load?"""

from __future__ import annotations

import numpy as np
import streamlit as st

from core.present.figures import (
    MONTH_FULL_NAMES,
    ac_surplus_duration,
    fmt_hours,
    fmt_pct,
    fmt_w,
    surplus_by_month_hour,
)
from core.present.reference_loads import reference_label, reference_loads_w
from explorer import caching, charts


def answer(frame, duration, dt_h: float, daylight_hours: float) -> str:
    """The question answered in one or two sentences."""
    if frame["ac_w"].max() <= 0.5:
        return "There is no AC-coupled output in this setting: nothing to compare with the base load."
    worst = frame.loc[frame["surplus_w"].idxmax()]
    over_hours = float((duration["surplus_w"] > 0.5).sum() * dt_h)
    if worst["surplus_w"] <= 0.5:
        head = ("Yes, on average: in every month and hour the mean AC-coupled output stays under the daytime "
                f"base load (closest: {MONTH_FULL_NAMES[int(worst['month']) - 1]} at {int(worst['hour']):02d}:00, "
                f"{fmt_w(-worst['surplus_w'])} below it).")
    else:
        head = (f"No: the mean AC-coupled output exceeds the daytime base load, most in "
                f"{MONTH_FULL_NAMES[int(worst['month']) - 1]} at {int(worst['hour']):02d}:00 "
                f"(by {fmt_w(worst['surplus_w'])}).")
    share = over_hours / daylight_hours * 100.0 if daylight_hours > 0 else np.nan
    return (f"{head} Hour by hour, the output is above the load at that moment in {fmt_hours(over_hours)} of "
            f"{fmt_hours(daylight_hours)} daylight hours ({fmt_pct(share)}); that surplus must go into the "
            "battery, be curtailed, or leave the site.")


def render(m) -> None:
    sim, option = m.sim, m.option
    base_load_w = caching.daytime_base_load(m.option_scenario, option)
    sc, site = sim.scenario, sim.site
    loads = reference_loads_w(sc, site, option)
    frame = surplus_by_month_hour(sim.steps, base_load_w, loads_w=loads)
    duration = ac_surplus_duration(sim.steps, site.daylight, site.dt_h, loads_w=loads)
    daylight_hours = float(np.sum(site.daylight) * site.dt_h)
    st.markdown(answer(frame, duration, site.dt_h, daylight_hours))
    charts.draw(charts.surplus_map_chart(frame))
    # about 1,500 points draw the curve as well as every step would
    charts.draw(charts.surplus_duration_chart(duration.iloc[:: max(1, len(duration) // 1500)]))
    b = sim.results.baseload
    st.caption(f"Compared with {reference_label(sc, option)}. Daytime base load: the 5th percentile of 1-hour mean "
               "load in daylight, per month. "
               f"AC-coupled energy used directly by the loads: {fmt_pct(_pct(b.get('ac_direct_share')))}; "
               f"daytime backed-up load covered directly by PV: "
               f"{fmt_pct(_pct(b.get('daytime_backed_up_covered_share')))}.")


def _pct(x):
    return None if x is None else x * 100.0
