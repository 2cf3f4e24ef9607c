"""What the system's own draws cost a year: the standing draw the zero-export controller keeps and the
inverter-charger's idle draw, in money and kWh."""

from __future__ import annotations

import streamlit as st

from explorer import caching


def render(sim) -> None:
    m = caching.money(sim)
    cur = m["currency"]
    c = st.columns(3)
    c[0].metric("Grid import this year", f"{m['import_cost']:,.0f} {cur}", border=True,
                help=f"priced by the hour under the tariff; fixed charges {m['fixed_charges']:,.0f} {cur} on top")
    c[1].metric("Standing draw costs", f"{m['standing_draw_cost']:,.0f} {cur} a year", border=True,
                help=f"{m['standing_draw_kwh']:,.0f} kWh of import a year")
    c[2].metric("Idle draw costs", f"{m['idle_cost']:,.0f} {cur} a year", border=True,
                help=f"{m['idle_kwh']:,.0f} kWh of import a year")
    st.caption(f"Standing draw cost = this year's grid import priced by the hour, minus the same year simulated "
               f"with no standing draw ({m['standing_draw_kwh']:,.0f} kWh); idle draw cost is the same with the "
               f"inverter-charger drawing nothing when idle ({m['idle_kwh']:,.0f} kWh).")
