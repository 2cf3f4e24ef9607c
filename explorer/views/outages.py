"""Outage ride-through: unserved energy and hours, per outage."""

from __future__ import annotations

import streamlit as st

from core.present.figures import fmt_hours, fmt_kwh, fmt_pct, outage_events
from explorer import charts


def render(m) -> None:
    sim, baseline = m.sim, m.baseline
    usable_wh = sim.scenario.battery.usable_kwh * 1000.0 if sim.scenario.battery else 0.0
    events = outage_events(sim.steps, sim.site.dt_h, usable_wh)
    h, e = sim.results.hours, sim.results.energy_kwh
    hb, eb = baseline.results.hours, baseline.results.energy_kwh
    if events.empty:
        st.info("No grid outages in this setting. Choose random outages in the sidebar to test the ride-through.")
        return
    c = st.columns(4)
    c[0].metric("Outages", f"{len(events)}", border=True)
    c[1].metric("Hours without grid", fmt_hours(h["outage"]), border=True)
    dh, de = h["unserved"] - hb["unserved"], e["unserved"] - eb["unserved"]
    c[2].metric("Hours with unserved loads", fmt_hours(h["unserved"]),
                delta=None if abs(dh) < 0.05 else f"{dh:+.1f} h", delta_color="inverse", border=True)
    c[3].metric("Unserved energy", fmt_kwh(e["unserved"]),
                delta=None if abs(de) < 0.5 else fmt_kwh(de, signed=True), delta_color="inverse", border=True)
    charts.draw(charts.outage_chart(events))
    table = events.assign(start=[s.strftime("%d %b %H:%M") for s in events["start"]])
    table.columns = ["Start (local standard time)", "Length (h)", "Unserved (kWh)", "Unserved (h)",
                     "Lowest SOC (%)"]
    st.dataframe(table, hide_index=True, width="stretch", column_config={
        c: st.column_config.NumberColumn(format="%.1f") for c in table.columns[1:]})
    floor = sim.scenario.battery.floor_pct if sim.scenario.battery else 0.0
    st.caption(f"In an outage grid-only loads are dropped, grid-side microinverters stop (anti-islanding) and the "
               f"battery may go down to its floor of {fmt_pct(floor)}. Existing system: "
               f"{fmt_kwh(eb['unserved'])} unserved in {fmt_hours(hb['unserved'])}.")
