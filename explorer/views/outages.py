"""Outage ride-through: backed-up load unserved (a failure) apart from grid-only load shed by design, per outage
and over many simulated outage years."""

from __future__ import annotations

import streamlit as st

from core.present.figures import fmt_hours, fmt_kwh, fmt_pct, outage_events
from explorer import caching, charts


def render(m) -> None:
    sim, baseline = m.sim, m.baseline
    usable_wh = sim.scenario.battery.usable_kwh * 1000.0 if sim.scenario.battery else 0.0
    events = outage_events(sim.steps, sim.site.dt_h, usable_wh)
    h, e = sim.results.hours, sim.results.energy_kwh
    hb, eb = baseline.results.hours, baseline.results.energy_kwh
    if events.empty:
        st.info("No grid outages in this setting. Choose random outages in the sidebar to test the ride-through.")
        return
    c = st.columns([1, 1, 1.45, 1.45])  # the last two labels are longer: room for them in full
    c[0].metric("Outages", f"{len(events)}", border=True)
    c[1].metric("Hours without grid", fmt_hours(h["outage"]), border=True)
    dh = h["unserved_backed_up"] - hb["unserved_backed_up"]
    de = e["unserved_backed_up"] - eb["unserved_backed_up"]
    c[2].metric("Backed-up loads unserved", _kwh(e["unserved_backed_up"]),
                delta=None if abs(de) < 0.5 else fmt_kwh(de, signed=True), delta_color="inverse", border=True,
                help=f"a failure of the backup: {fmt_hours(h['unserved_backed_up'])} with backed-up loads unserved"
                     + ("" if abs(dh) < 0.05 else f" ({dh:+.1f} h against the existing system)"))
    c[3].metric("Grid-only loads shed", _kwh(e["shed_grid_only"]), border=True,
                help="by design: loads wired outside the backed-up side are meant to go off in an outage; not a "
                     "failure")
    charts.draw(charts.outage_chart(events))
    table = events.assign(start=[s.strftime("%d %b %H:%M") for s in events["start"]])
    table.columns = ["Start (local standard time)", "Length (h)", "Backed-up unserved (kWh)",
                     "Backed-up unserved (h)", "Lowest SOC (%)"]
    st.dataframe(table, hide_index=True, width="stretch", column_config={
        c: st.column_config.NumberColumn(format="%.1f") for c in table.columns[1:]})
    floor = sim.scenario.battery.floor_pct if sim.scenario.battery else 0.0
    st.caption(f"In an outage grid-only loads are dropped, grid-side microinverters stop (anti-islanding) and the "
               f"battery may go down to its floor of {fmt_pct(floor)}. Existing system: "
               f"{fmt_kwh(eb['unserved_backed_up'])} of backed-up load unserved in "
               f"{fmt_hours(hb['unserved_backed_up'])}.")
    _momentary(sim)
    _draws(sim)


def _momentary(sim) -> None:
    """Short interruptions, if the scenario expects any: what the transfer and the reconnect delays cost."""
    g = sim.scenario.grid
    if g.momentary_per_month <= 0:
        return
    from core.analyses.running_costs import outage_figures

    m = outage_figures(sim)["momentary"]
    rides = ("within" if m["backed_up_loads_ride_through"] else "beyond")
    st.caption(f"{m['per_year']:.0f} short interruptions a year: the inverter-charger's {m['transfer_ms']:.0f} ms "
               f"transfer is {rides} the {m['ride_through_limit_ms']:.0f} ms at zero voltage that the ITI (CBEMA) "
               f"curve asks equipment to ride through"
               + ("" if m["backed_up_loads_ride_through"] else ", so computers on the backed-up side may restart")
               + f". Grid-side microinverters lose about {m['grid_side_pv_lost_kwh']:.1f} kWh a year waiting to "
               f"reconnect; grid-only loads about {m['grid_only_shed_kwh']:.1f} kWh waiting for their restore delay.")


def _draws(sim) -> None:
    """The distribution over many independent outage years (random outages only), on request: a few seconds
    of work that a slider move should not wait for."""
    r = sim.scenario.grid.random_outages
    if r is None:
        return
    if not st.toggle(f"Spread over {r.draws} simulated outage years", key="outage_draws",
                     help="the same system through many independent years of random outages: how much backed-up "
                          "load a typical year and a bad year leave unserved"):
        return
    with st.spinner(f"Simulating {r.draws} outage years…"):
        draws = caching.outage_draws(sim)
    d = draws.to_dict()
    u, hrs, soc = d["unserved_backed_up_kwh"], d["unserved_backed_up_hours"], d["soc_at_start_pct"]
    c = st.columns(3)
    c[0].metric("Typical year (P50)", _kwh(u["p50"]), border=True,
                help=f"backed-up load unserved; {fmt_hours(hrs['p50'])} with loads unserved")
    c[1].metric("One year in ten (P90)", _kwh(u["p90"]), border=True,
                help=f"backed-up load unserved; {fmt_hours(hrs['p90'])} with loads unserved")
    c[2].metric(f"Worst of {d['draws']} years", _kwh(u["worst"]), border=True,
                help=f"backed-up load unserved; {fmt_hours(hrs['worst'])} with loads unserved")
    charts.draw(charts.outage_draws_chart(draws.unserved_backed_up_kwh, u["p50"], u["p90"]))
    if soc["p50"] is not None:
        st.caption(f"Battery charge when outages begin, over all {d['draws']} years: typically "
                   f"{fmt_pct(soc['p50'])}, one outage in ten at or below {fmt_pct(soc['p10'])}, lowest "
                   f"{fmt_pct(soc['lowest'])}. Each year draws its outages afresh: how many from a Poisson "
                   "distribution, when uniformly over the year, how long from an exponential distribution.")


def _kwh(x: float | None) -> str:
    """Outage energies are small: one decimal below 100 kWh."""
    return "—" if x is None else (f"{x:.1f} kWh" if abs(x) < 100 else f"{x:,.0f} kWh")
