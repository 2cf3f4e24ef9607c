"""Save and report: the scenario file of the current settings, the HTML report and the step-by-step CSV."""

from __future__ import annotations

import dataclasses

import streamlit as st

from core.present.report import steps_csv_text
from core.present.report_html import report_html
from core.present.scenario_report import settings_rows
from explorer import caching, state
from explorer.views import compare, design


def settings_list(m) -> list[tuple[str, str]]:
    """The what-if settings in words, for the report (read back from the scenario the page simulated)."""
    return settings_rows(m.scenario, m.option, m.comparison.layout)


def report_text(m) -> str:
    """The HTML report of the page's setting: the existing system's checks are named as such."""
    existing = [dataclasses.replace(c, subject=f"{c.subject or c.id} (existing system)") for c in m.existing_checks]
    return report_html(m.sim, m.baseline, option_label=m.label, headline=m.headline, more=m.more,
                       month=st.session_state.get("day_month"),
                       base_load_w=caching.daytime_base_load(m.option_scenario, m.option),
                       options=compare.options_table(m.comparison) if len(m.comparison.options) > 1 else None,
                       verdict=m.comparison.verdict.text, checks=[*m.changed_checks, *existing],
                       settings=settings_list(m), designs=design.report_summary(m.scenario))


def render(m) -> None:
    """The report is built only when it is downloaded."""
    sc, option, sim = m.scenario, m.option, m.sim
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
        st.download_button("Download the report (HTML)", lambda: report_text(m),
                           file_name=state.download_name(sc, ".html"), mime="text/html", key="dl_report",
                           on_click="ignore")
        st.caption("One file with the figures, charts, design checks and safety cautions; opens offline.")
    with c2:
        st.download_button("Download the step-by-step results (CSV)", lambda: steps_csv_text(sim),
                           file_name=state.download_name(sc, "_steps.csv"), mime="text/csv", key="dl_steps",
                           on_click="ignore")
        st.caption("Every step's flows in W (SOC in Wh), interval starts in local standard time.")
