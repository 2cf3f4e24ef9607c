"""Where the PV energy goes, month by month."""

from __future__ import annotations

import streamlit as st

from core.present.figures import (
    DESTINATIONS,
    MONTH_NAMES,
    pv_destinations_by_month,
    pv_destinations_by_system,
)
from explorer import charts


def render(m) -> None:
    sim, baseline = m.sim, m.baseline
    frame = pv_destinations_by_month(sim.results.months)
    both = pv_destinations_by_system({"Existing system": baseline.results.months,
                                      f"With the new panels ({m.label})": sim.results.months})
    charts.draw(charts.pv_destinations_chart(both))
    table = frame.pivot_table(index="destination", columns="month", values="kwh", sort=False)
    table.columns = [MONTH_NAMES[m - 1] for m in table.columns]
    months = list(table.columns)
    table["Year"] = table.sum(axis=1)
    base = {label: baseline.results.energy_kwh[key] for key, label in DESTINATIONS}
    table["Existing, year"] = [base[d] for d in table.index]
    table = table[["Year", "Existing, year", *months]]  # the year first: it must not hide behind a scroll bar
    table.index.name = "kWh"
    st.dataframe(table.map(lambda v: f"{v:,.0f}"), width="stretch")
    st.caption("Used directly: PV output taken by the loads as it is made. Into the battery: PV energy charged "
               "(DC bus side). Curtailed and clipped energy are counted on the module side. Conversion losses "
               "are not shown.")


def render_tab(m) -> None:
    """The tab: the year's energy month by month, then what the system's own draws cost."""
    from explorer.guard import section
    from explorer.views import running_costs

    render(m)
    with section("What the system's own draws cost"):
        running_costs.render(m.sim)
