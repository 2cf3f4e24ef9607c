"""What an hourly model hides: the chosen option at the load's own step and hourly (core.analyses.resolution)."""

from __future__ import annotations

import pandas as pd
import streamlit as st

from core.analyses.options import OPTION_LABELS
from core.analyses.resolution import resolution_check
from explorer import caching


def table(result) -> pd.DataFrame:
    """Native against hourly, and the difference, for the figures an hourly model smooths away."""
    rows = [("AC-coupled surplus over the loads (kWh/yr)", result.native_surplus["ac_surplus_kwh"],
             result.hourly_surplus["ac_surplus_kwh"]),
            ("Hours with AC-coupled surplus (h/yr)", result.native_surplus["ac_surplus_hours"],
             result.hourly_surplus["ac_surplus_hours"]),
            ("Largest surplus in one step (W)", result.native_surplus["ac_surplus_peak_w"],
             result.hourly_surplus["ac_surplus_peak_w"]),
            ("Uncontrolled export (kWh/yr)", result.native.energy_kwh["exported_uncontrolled"],
             result.hourly.energy_kwh["exported_uncontrolled"]),
            ("Curtailed (kWh/yr)", result.native.energy_kwh["curtailed"], result.hourly.energy_kwh["curtailed"])]
    out = pd.DataFrame(rows, columns=["Figure", "At the load's own step", "Hourly"])
    out["Hidden by the hourly model"] = out["At the load's own step"] - out["Hourly"]
    return out


def render(m) -> None:
    sc, option = m.scenario, m.option
    st.markdown("**What would an hourly model hide?**")
    # every setting counts (battery, grid, outages, files…), not just the layout: a table is shown only for the
    # setting it was simulated for
    key = caching.comparison_key(sc) + option
    stored = st.session_state.get("resolution_result")
    if st.button("Simulate at the load's own step and hourly", key="resolution_run"):
        with st.spinner("Simulating the year twice…"):
            stored = {"key": key, "result": resolution_check(sc, option)}
        st.session_state["resolution_result"] = stored
    if not stored or stored["key"] != key:
        st.caption(f"{OPTION_LABELS[option]}: short AC-coupled surpluses average out within an hour, so an hourly "
                   "model can miss export and curtailment that a finer load record shows.")
        if stored:
            st.info("The settings changed since the last comparison: press the button to simulate this setting.")
        return
    result = stored["result"]
    if not result.applicable:
        st.info("The load data are hourly or coarser here: an hourly model hides nothing more.")
        return
    st.dataframe(table(result), hide_index=True, width="stretch", column_config={
        c: st.column_config.NumberColumn(format="%.0f") for c in ("At the load's own step", "Hourly",
                                                                  "Hidden by the hourly model")})
    st.caption(result.sentence)
