"""The options side by side (existing system, AC backed-up side, AC grid side, DC) with the verdict in plain words."""

from __future__ import annotations

import math

import pandas as pd
import streamlit as st

from core.analyses.compare import LOADS_ROW
from core.analyses.options import OPTION_LABELS
from core.analyses.validity import why_set_aside
from core.present.figures import fmt_kwh, fmt_pct, fmt_years
from explorer import charts

#: (delta key, label) of the energy rows, kWh a year against the existing system.
ENERGY_ROWS = (
    ("to_loads_added_kwh", LOADS_ROW),
    ("self_consumed_added_kwh", "More PV self-consumed"),
    ("battery_discharge_added_kwh", "More from the battery"),
    ("curtailed_added_kwh", "More curtailed"),
    ("clipped_added_kwh", "More clipped"),
    ("export_allowed_added_kwh", "More export within the limit"),
    ("exported_uncontrolled_kwh", "Uncontrolled export"),
)
CHART_ROWS = ("to_loads_added_kwh", "curtailed_added_kwh", "clipped_added_kwh", "exported_uncontrolled_kwh")


def _years(x: float | None) -> str:
    """A payback; None means it does not happen within the analysis period."""
    return fmt_years(math.inf if x is None else x)


def _passes(r) -> str:
    """"yes", or "no: " and the rules broken in the verdict's words (the figures are in the rows above)."""
    return "yes" if r.valid else "no: " + why_set_aside(r.failed_rules)


def options_table(comparison) -> pd.DataFrame:
    """Figures × options, as text with units (the baseline column holds the existing system's own year)."""
    opts = [k for k in comparison.options if k != "baseline"]
    rows = []
    for key, label in ENERGY_ROWS:
        rows.append([label + " (kWh/yr)", *[fmt_kwh(comparison.options[k].delta[key], signed=key != "exported_uncontrolled_kwh")
                                            for k in opts]])
    rows.append(["Hours with uncontrolled export (h/yr)",
                 *[f"{comparison.options[k].delta['exported_uncontrolled_hours']:,.0f} h" for k in opts]])
    rows.append(["More battery cycles (per year)",
                 *[f"{comparison.options[k].delta['battery_cycles_added']:+,.0f}" for k in opts]])
    rows.append(["Passes every rule", *[_passes(comparison.options[k]) for k in opts]])
    cur = comparison.scenario.tariff.currency
    for label, get in (
        (f"Investment ({cur})", lambda e: f"{e.investment:,.0f}"),
        (f"First-year saving ({cur})", lambda e: f"{e.annual_saving:,.0f}"),
        ("Simple payback", lambda e: _years(e.simple_payback_years)),
        ("Discounted payback", lambda e: _years(e.discounted_payback_years)),
        (f"NPV ({cur})", lambda e: f"{e.npv:,.0f}"),
        ("IRR", lambda e: "—" if e.irr is None else fmt_pct(e.irr * 100.0)),
    ):
        rows.append([label, *[get(comparison.options[k].economics) for k in opts]])
    return pd.DataFrame(rows, columns=["Against the existing system", *[OPTION_LABELS[k] for k in opts]])


def chart_frame(comparison) -> pd.DataFrame:
    labels = dict(ENERGY_ROWS)
    return pd.DataFrame([{"option": str(k), "figure": labels[key], "kwh": r.delta[key]}
                         for k, r in comparison.options.items() if k != "baseline" for key in CHART_ROWS])


def render(comparison, chosen: str):
    """Draw the comparison; returns (table for the report, verdict text) or (None, None)."""
    if len(comparison.options) < 2:
        st.info("The scenario's [expansion] allows no option to compare.")
        return None, None
    lay = comparison.layout
    st.markdown(f"**{lay.count} panel{'s' if lay.count != 1 else ''} at {lay.tilt_deg:.0f}° tilt, {lay.azimuth_deg:.0f}° azimuth**, each way of "
                f"connecting them against the existing system. The sidebar's choice, "
                f"*{OPTION_LABELS[chosen]}*, is the one in the headline figures.")
    v = comparison.verdict
    with st.container(border=True):
        st.markdown("**Verdict**")
        # the energy winner (or "no option passes"), the options set aside and the money winner are the answer;
        # the rest explains it
        first, *why = v.reasons or (v.text,)
        shown = [r for r in why if r.startswith(("Set aside", "Uncontrolled export is", "On money"))]
        why = [r for r in why if r not in shown]
        st.markdown(first)
        for r in shown:
            st.markdown(r)
        if why:
            with st.expander(f"Why, in {len(why)} point{'s' if len(why) != 1 else ''}"):
                for r in why:
                    st.markdown(f"- {r}")
    table = options_table(comparison)
    st.dataframe(table, hide_index=True, width="stretch", height=36 * (len(table) + 1) + 3)
    charts.draw(charts.options_chart(chart_frame(comparison)))
    st.caption(f"{LOADS_ROW} = grid import saved + load served in outages that went unserved before (the change in "
               "the headline's Loads supplied from PV). An option that fails a design check or sends energy into a "
               "grid that may not be fed (uncontrolled export) is set aside and never named the winner. "
               "Self-consumed = harvested − exported (Luthander et al. 2015). Money: paid export only; uncontrolled "
               "export earns nothing. Investment: the scenario's cost_ac / cost_dc, priced per panel for the panels "
               "simulated when the count differs from the file's.")
    return table, v.text
