"""Save and report: the scenario file of the current settings, the HTML report and the step-by-step CSV."""

from __future__ import annotations

import streamlit as st

from core.present.report import steps_csv_text
from explorer import state


def render(sc, option: str, sim, make_report) -> None:
    """``make_report`` returns the HTML text; it runs only when the report is downloaded."""
    st.markdown("#### Scenario file")
    text = state.scenario_download(sc, option)
    st.session_state["scenario_download"] = text
    name = state.download_name(sc, ".toml")
    st.session_state["scenario_download_name"] = name
    st.download_button("Download the scenario with these settings", text, file_name=name, mime="application/toml",
                       key="dl_scenario", on_click="ignore")
    files = ", ".join(p.name for p in state.data_files(sc)) or "none"
    st.caption(f"To reload it, choose \"My own scenario file\" and upload it together with the data files it names "
               f"({files}).")
    st.markdown("#### Report")
    c1, c2 = st.columns(2)
    with c1:
        st.download_button("Download the report (HTML)", make_report, file_name=state.download_name(sc, ".html"),
                           mime="text/html", key="dl_report", on_click="ignore")
        st.caption("One file with the figures, charts, design checks and safety cautions; opens offline.")
    with c2:
        st.download_button("Download the step-by-step results (CSV)", lambda: steps_csv_text(sim),
                           file_name=state.download_name(sc, "_steps.csv"), mime="text/csv", key="dl_steps",
                           on_click="ignore")
        st.caption("Every step's flows in W (SOC in Wh), interval starts in local standard time.")

