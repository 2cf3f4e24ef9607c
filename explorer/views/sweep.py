"""The sweep: panel count × azimuth or tilt for the chosen coupling, as a heatmap of added self-consumed energy."""

from __future__ import annotations

import numpy as np
import pandas as pd
import streamlit as st

from core.analyses.options import OPTION_LABELS
from core.analyses.sweep import sweep
from core.present.figures import fmt_kwh
from explorer import caching, charts, state

#: A cell is marked "C" when the added curtailment and clipping exceed this share of the new panels' potential
#: (a quarter: our own choice, to mark where the new panels mostly displace other PV), "X" when any uncontrolled
#: export happens.
LOST_SHARE = 0.25
EXPORT_KWH = 0.5
AZIMUTHS = tuple(range(90, 271, 15))
TILTS = tuple(range(0, 91, 10))


def flags(table: pd.DataFrame) -> pd.Series:
    """The marker letters of each sweep row: C (curtailed or clipped), X (uncontrolled export), both, or none."""
    lost = (table["curtailed_share"] + table["clipped_share"]) > LOST_SHARE
    leak = table["uncontrolled_export_kwh"] > EXPORT_KWH
    return pd.Series(np.where(lost & leak, "CX", np.where(lost, "C", np.where(leak, "X", ""))), index=table.index)


#: What the cells' colour can show: (column of the heat frame, legend title).
COLOUR_BY = {
    "self_consumed_added_kwh": "Added self-consumed energy (kWh/yr)",
    "to_loads_added_kwh": "More to the loads from PV (kWh/yr)",
    "lost_pct": "New panels' output curtailed or clipped (%)",
}


def heat_frame(table: pd.DataFrame, axis: str) -> pd.DataFrame:
    out = table[["count", axis, "self_consumed_added_kwh", "to_loads_added_kwh", "curtailed_share",
                 "uncontrolled_export_kwh"]].copy()
    out["lost_pct"] = (table["curtailed_share"] + table["clipped_share"]).clip(lower=0.0) * 100.0
    out[axis] = out[axis].round(0).astype(int)
    out["flag"] = flags(table)
    return out


def render(m) -> None:
    sc, option, lay = m.scenario, m.option, m.comparison.layout
    if sc.expansion is None or option not in state.couplings(sc):
        st.info("The scenario's [expansion] allows no option to sweep.")
        return
    count_max = state.panel_count_max(sc)
    if not 1 <= st.session_state.get("sweep_top", 0) <= count_max:
        st.session_state["sweep_top"] = min(count_max, max(2 * lay.count, 6))
    left, mid, right = st.columns([2, 2, 1.3], vertical_alignment="bottom")
    axis = left.radio("Across", ["azimuth_deg", "tilt_deg"], horizontal=True, key="sweep_axis",
                      format_func={"azimuth_deg": "azimuth (90° east … 270° west)",
                                   "tilt_deg": "tilt (0° … 90°)"}.get)
    top = mid.slider("Panel counts up to", 1, count_max, key="sweep_top")
    counts = list(range(0, top + 1))
    values = AZIMUTHS if axis == "azimuth_deg" else TILTS
    fixed = (f"tilt {lay.tilt_deg:.0f}°" if axis == "azimuth_deg" else f"azimuth {lay.azimuth_deg:.0f}°")
    key = caching.site_key(sc) + repr((option, axis, counts, lay.tilt_deg, lay.azimuth_deg, sc.battery, sc.grid,
                                       sc.expansion))
    run = right.button("Run the sweep", type="primary", key="sweep_run")
    st.caption(f"{OPTION_LABELS[option]} (the sidebar's coupling), {fixed} fixed, {len(counts)} counts × "
               f"{len(values)} {'azimuths' if axis == 'azimuth_deg' else 'tilts'} = {len(counts) * len(values)} "
               "simulated years.")
    stored = st.session_state.get("sweep_result")
    if run:
        bar = st.progress(0.0, text="Preparing the sweep…")

        def progress(fraction: float, message: str) -> None:
            bar.progress(min(max(fraction, 0.0), 1.0), text=f"Sweep: {message}")

        kwargs = {"counts": counts, "options": [option], "site": caching.site_data(sc),
                  "cache": caching.orientation_cache(sc), "progress": progress}
        kwargs["azimuths" if axis == "azimuth_deg" else "tilts"] = list(values)
        table = sweep(sc, **kwargs)
        bar.empty()
        stored = {"key": key, "table": table, "axis": axis}
        st.session_state["sweep_result"] = stored
    if not stored:
        st.info("Press *Run the sweep* to simulate every combination (a few seconds).")
        return
    if stored["key"] != key:
        st.warning("The settings changed since this sweep was run: press *Run the sweep* to update it.")
    table, axis = stored["table"], stored["axis"]
    title = "Azimuth (°)" if axis == "azimuth_deg" else "Tilt (°)"
    frame = heat_frame(table, axis)
    current = {"count": lay.count, axis: int(round(lay.azimuth_deg if axis == "azimuth_deg" else lay.tilt_deg))}
    colour = st.radio("Colour by", list(COLOUR_BY), format_func=COLOUR_BY.get, horizontal=True, key="sweep_colour")
    charts.draw(charts.sweep_heatmap(frame, x=axis, x_title=title, value=colour, value_title=COLOUR_BY[colour],
                                     current=current))
    best = frame.loc[frame["self_consumed_added_kwh"].idxmax()]
    clean = frame[(frame["flag"] == "") & (frame["count"] > 0)]
    text = (f"Most added self-consumed energy: {int(best['count'])} panels at {title.split(' ')[0].lower()} "
            f"{int(best[axis])}°, {fmt_kwh(best['self_consumed_added_kwh'])} a year.")
    if len(clean):
        b2 = clean.loc[clean["self_consumed_added_kwh"].idxmax()]
        text += (f" Best without curtailment above {LOST_SHARE:.0%} or uncontrolled export: {int(b2['count'])} "
                 f"panels at {int(b2[axis])}°, {fmt_kwh(b2['self_consumed_added_kwh'])}.")
    else:
        text += (f" Every setting here curtails or clips more than {LOST_SHARE:.0%} of the new panels' output, or "
                 "exports without control.")
    st.markdown(text)
    st.caption(f"C: added curtailment and clipping above {LOST_SHARE:.0%} of the new panels' potential. "
               "X: uncontrolled export. The framed cell is the sidebar's setting.")
