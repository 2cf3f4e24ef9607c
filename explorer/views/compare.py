"""The options side by side (existing system, AC backed-up side, AC grid side, DC) with the verdict in plain words."""

from __future__ import annotations

import streamlit as st

from core.analyses.compare import LOADS_ROW
from core.analyses.design_verdict import CHECKED_FIX, NO_FIX, with_design
from core.analyses.options import OPTION_LABELS
from core.present.options_table import CHART_ROWS, ENERGY_ROWS, chart_frame, options_table
from explorer import charts
from explorer.guard import section
from explorer.views import design, resolution

__all__ = ["CHART_ROWS", "ENERGY_ROWS", "chart_frame", "options_table", "render"]


def render(m) -> None:
    """The options side by side with the verdict, then what an hourly model would hide."""
    comparison, chosen = m.comparison, m.option
    if len(comparison.options) < 2:
        st.info("The scenario's [expansion] allows no option to compare.")
        return
    lay = comparison.layout
    e = m.scenario.expansion
    where = f"at {lay.tilt_deg:.0f}° tilt, {lay.azimuth_deg:.0f}° azimuth"
    if e is not None and e.restring:  # DC-coupled, they go where the re-strung array is
        where += f" (DC-coupled: re-strung with '{e.restring}', on its face)"
    st.markdown(f"**{lay.count} panel{'s' if lay.count != 1 else ''} {where}**, each way of "
                f"connecting them against the existing system. The sidebar's choice, "
                f"*{OPTION_LABELS[chosen]}*, is the one in the headline figures.")
    searchable = m.scenario.design is not None or bool(m.scenario.faces)
    found = design.current_search(m.scenario) if searchable else None
    if found is not None:  # a search on these very settings: the verdict names its design and checked fixes
        comparison = with_design(comparison, found)
    v = comparison.verdict
    with st.container(border=True):
        st.markdown("**Verdict**")
        # the design to pick (or the energy winner, or "no option passes"), the options set aside with their checked
        # fixes and the money winner are the answer; the rest explains it
        first, *why = v.reasons or (v.text,)
        shown = [r for r in why if r.startswith(("Set aside", "Uncontrolled export is", "On money", CHECKED_FIX,
                                                 NO_FIX, "On energy", "No option passes"))]
        why = [r for r in why if r not in shown]
        st.markdown(first)
        for r in shown:
            st.markdown(r)
        if why:
            with st.expander(f"Why, in {len(why)} point{'s' if len(why) != 1 else ''}"):
                for r in why:
                    st.markdown(f"- {r}")
        if searchable and found is None:
            # the search takes seconds, so it runs on request only (or is reused from the Best layouts tab)
            st.caption("The fixes above are the usual ones, not yet checked for this system. The design search "
                       "tries every arrangement and names a design that passes every check.")
            if st.button("Find the design to pick", key="compare_search"):
                design.run_search(m.scenario)
                st.rerun()
    table = options_table(comparison)
    # every row and no blank one below them: Streamlit's rows and header are 35 px, plus the frame's 2 px
    st.dataframe(table, hide_index=True, width="stretch", row_height=35, height=35 * (len(table) + 1) + 2)
    charts.draw(charts.options_chart(chart_frame(comparison)))
    st.caption(f"{LOADS_ROW} = grid import saved + load served in outages that went unserved before (the change in "
               "the headline's Loads supplied from PV). An option that fails a design check or sends energy into a "
               "grid that may not be fed (uncontrolled export) is set aside and never named the winner. "
               "Self-consumed = harvested − exported (Luthander et al. 2015). Money: paid export only; uncontrolled "
               "export earns nothing. Investment: the scenario's cost_ac / cost_dc, priced per panel for the panels "
               "simulated when the count differs from the file's.")
    st.divider()
    with section("Time resolution"):
        resolution.render(m)
