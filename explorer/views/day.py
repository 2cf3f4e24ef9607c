"""A typical day of a chosen month: loads, base load, AC- and DC-coupled output and the battery SOC."""

from __future__ import annotations

import numpy as np
import pandas as pd
import streamlit as st

from core.present.figures import MONTH_FULL_NAMES, fmt_w, typical_day
from explorer import caching, charts


def sunniest_month(sim) -> int:
    """The month with the most PV output, a sensible first look."""
    s = sim.steps
    out = (s["ac_backed_out_w"] + s["ac_grid_out_w"] + s["dc_out_w"]).groupby(s.index.month).sum()
    return int(out.idxmax()) if len(out) and out.max() > 0 else 6


#: Most rows a chart is given (Altair embeds at most 5,000 rows inline; below it with room to spare).
MAX_CHART_ROWS = 2000
#: Bin widths tried, in minutes of the day, finest first.
_BIN_MINUTES = (5, 10, 15, 30, 60)


def aggregate_day(frame: pd.DataFrame, max_rows: int = MAX_CHART_ROWS) -> pd.DataFrame:
    """The typical day's long table (``hour``, ``series``, ``value``, ``unit``) with its times of day averaged into
    the finest equal bins (5 to 60 minutes) that keep it within ``max_rows``; unchanged when already small.

    Bins of equal length keep each series' daily mean (the mean of bin means is the mean)."""
    if len(frame) <= max_rows:
        return frame
    n_series = max(frame["series"].nunique(), 1)
    for minutes in _BIN_MINUTES:
        if 24 * 60 // minutes * n_series <= max_rows or minutes == _BIN_MINUTES[-1]:
            break
    width_h = minutes / 60.0
    binned = frame.assign(hour=np.floor(frame["hour"].to_numpy() / width_h + 1e-9) * width_h)
    return binned.groupby(["hour", "series", "unit"], as_index=False, sort=True)["value"].mean()[
        ["hour", "series", "value", "unit"]]


def render(m) -> None:
    sim = m.sim
    base_load_w = caching.daytime_base_load(m.option_scenario, m.option)
    if st.session_state.get("day_month") not in range(1, 13):
        st.session_state["day_month"] = sunniest_month(sim)
    month = st.select_slider("Month", options=list(range(1, 13)), format_func=lambda m: MONTH_FULL_NAMES[m - 1],
                             key="day_month")
    usable_wh = sim.scenario.battery.usable_kwh * 1000.0 if sim.scenario.battery else 0.0
    base = base_load_w[month - 1]
    frame = aggregate_day(typical_day(sim.steps, month, usable_wh=usable_wh, base_load_w=base))
    charts.draw(charts.typical_day_chart(frame, MONTH_FULL_NAMES[month - 1]))
    w = frame[frame["unit"] == "W"].pivot_table(index="hour", columns="series", values="value")
    ac = w.get("AC-coupled PV output")
    peak_ac = float(ac.max()) if ac is not None else 0.0
    text = f"In {MONTH_FULL_NAMES[month - 1]} the mean AC-coupled output peaks at {fmt_w(peak_ac)}"
    if np.isfinite(base):
        text += f", against a daytime base load of {fmt_w(base)}"
    st.caption(text + ". Means over the month's days hide the sunniest ones; *Output vs base load* shows every "
               "hour of the year.")
