"""secondroof explorer: what would a few more panels add to a zero-export hybrid PV system?

Run with ``make run`` (serves http://127.0.0.1:8501 on the sample site named by SECONDROOF_SCENARIO).
The page: the site and the what-if controls in the sidebar; headline figures against the existing system; one tab
per view; the safety cautions at the foot. Every section runs inside :func:`explorer.guard.section`, so bad input
shows one message and the rest of the page keeps working.
"""

from __future__ import annotations

import math
import os
import sys
from pathlib import Path

import streamlit as st

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:  # `streamlit run explorer/app.py` puts explorer/ first on the path, not the root
    sys.path.insert(0, str(ROOT))

from core.analyses.checks import run_checks  # noqa: E402
from core.analyses.options import OPTION_LABELS, with_option  # noqa: E402
from core.present.figures import headline_figures, secondary_figures  # noqa: E402
from core.present.report_html import report_html  # noqa: E402
from core.present.safety import SAFETY_CAUTIONS  # noqa: E402
from explorer import caching, state, uploads  # noqa: E402
from explorer.guard import harden, section  # noqa: E402
from explorer.views import (  # noqa: E402
    baseload,
    checks,
    controls,
    data_files,
    day,
    energy,
    headline,
    outages,
    report,
    start,
)
from explorer.views import compare as compare_view  # noqa: E402
from explorer.views import resolution as resolution_view  # noqa: E402
from explorer.views import sweep as sweep_view  # noqa: E402

SAMPLES = ROOT / "sample_sites"
TABS = ("Energy by month", "Typical day", "Output vs base load", "Options", "Sweep", "Checks", "Outages",
        "Data files", "Save and report")


def upload_folder() -> Path:
    return uploads.session_folder(st.session_state)


def settings_list(sc, c: state.Controls) -> list[tuple[str, str]]:
    """The what-if settings in words, for the report."""
    rows = [("Coupling of the new panels", state.COUPLING_LABELS.get(c.option, c.option)),
            ("Panels added", f"{c.count} × {c.module} ({sc.modules[c.module].pmax_w:,.0f} W STC)"),
            ("Tilt / azimuth", f"{c.tilt_deg:.0f}° / {c.azimuth_deg:.0f}° ({controls.compass(c.azimuth_deg)})")]
    if c.option != "dc" and c.microinverter:
        rows.append(("Microinverter", c.microinverter))
    if sc.battery is not None:
        rows += [("Battery usable capacity", f"{sc.battery.usable_kwh:,.1f} kWh"),
                 ("Outage reserve / floor", f"{sc.battery.reserve_pct:.0f} % / {sc.battery.floor_pct:.0f} %")]
    g = sc.grid
    export = f"allowed up to {g.export_limit_w:,.0f} W" if g.export_allowed else "zero export"
    rows += [("Standing draw", f"{g.standing_draw_w:,.0f} W"),
             ("Export", f"{export}; limiter on the microinverters: {'yes' if c.limiter else 'no'}"),
             ("Outages", state.OUTAGE_LABELS[c.outages] + (
                 f": {c.outages_per_year:g} per year, mean {c.outage_mean_hours:g} h" if c.outages == "random" else ""))]
    return rows


def safety() -> None:
    with st.container(border=True):
        st.markdown("**Safety and limits of these results**\n\n" + "\n".join(f"- {c}" for c in SAFETY_CAUTIONS))


def main() -> None:
    harden()
    st.set_page_config(page_title="secondroof · what would more panels add?", layout="wide",
                       initial_sidebar_state="expanded")
    # less empty space above the title than Streamlit's default
    st.html("<style>[data-testid='stMainBlockContainer']{padding-top:2.5rem}</style>")
    folder = upload_folder()
    with st.sidebar:
        source = start.render(SAMPLES, os.environ.get("SECONDROOF_SCENARIO"), folder)
    if source is None:
        st.subheader("secondroof · what would a few more panels add?", divider="blue")
        st.markdown(
            "A year of your zero-export hybrid system, simulated at the resolution of your data, with and without "
            "the panels you are considering — AC-coupled on microinverters or DC-coupled on a charge controller.\n\n"
            "To start, choose a sample site in the sidebar, or upload your own scenario file (`.toml`) together "
            "with the weather and load files it names. A scenario of your own is easiest to begin from a sample: "
            "open one, then *Save and report → Download the scenario*, and edit it.")
        safety()
        return

    title = st.container()
    head = st.container()
    tabs = dict(zip(TABS, st.tabs(list(TABS)), strict=True))
    safety()

    overrides = state.DataOverrides()
    with tabs["Data files"]:
        with section("Data files"):
            overrides = data_files.render_uploads(source.scenario, folder)
    base = state.apply_overrides(source.scenario, overrides)
    if st.session_state.get("_identity") != source.identity:
        controls.reset(base, source.option_hint)
        st.session_state["_identity"] = source.identity
    with st.sidebar:
        c = controls.render(base)

    with title:
        st.subheader(f"{base.name} · what would the new panels add?", divider="blue")
        st.caption("One simulated year against the existing system. Estimates, not a design approval — see the "
                   "safety notes at the foot of the page.")

    sims = None
    with head:
        with section("Settings"):
            sc = state.build_scenario(base, c)
            option_sc = with_option(sc, c.option)
            comparison = caching.comparison(sc)
            chosen = comparison.options[c.option]
            sim, baseline, econ = chosen.simulation, comparison.options["baseline"].simulation, chosen.economics
            payback = None
            if econ is not None and c.count > 0:
                payback = econ.simple_payback_years if econ.simple_payback_years is not None else math.inf
            main_figures = headline_figures(sim.results, baseline.results, payback_years=payback)
            more = secondary_figures(sim, baseline)
            st.markdown(f"**{OPTION_LABELS[c.option]}, {c.count} panel{'s' if c.count != 1 else ''}** "
                        "against the existing system")
            headline.render(main_figures, more)
            data_files.render_warning_notice(sim.site)
            sims = (sc, option_sc, comparison, sim, baseline, main_figures, more)

    if sims is None:
        for name in TABS:
            if name != "Data files":
                with tabs[name]:
                    st.info("Fix the setting named above to see this view.")
        return
    sc, option_sc, comparison, sim, baseline, main_figures, more = sims

    base_load = None
    with tabs["Energy by month"], section("Energy by month"):
        energy.render(sim, baseline)
    with tabs["Typical day"], section("Typical day"):
        base_load = caching.daytime_base_load(option_sc, c.option)
        day.render(sim, base_load)
    with tabs["Output vs base load"], section("Output vs base load"):
        if base_load is None:
            base_load = caching.daytime_base_load(option_sc, c.option)
        baseload.render(sim, c.option, base_load)
    options_table = verdict = None
    with tabs["Options"], section("Options side by side"):
        options_table, verdict = compare_view.render(comparison, c.option)
    with tabs["Options"], section("Time resolution"):
        resolution_view.render(sc, c.option)
    with tabs["Sweep"], section("Sweep"):
        sweep_view.render(sc, c, caching)
    found = None
    with tabs["Checks"], section("Design checks"):
        found = run_checks(option_sc, sim, cache=caching.orientation_cache(sc), option=c.option)
        checks.render(found)
    with tabs["Outages"], section("Grid outages"):
        outages.render(sim, baseline)
    with tabs["Data files"], section("Data in use"):
        st.divider()
        data_files.render_current(sim)
    with tabs["Save and report"], section("Save and report"):
        month = st.session_state.get("day_month")

        def make_report() -> str:
            return report_html(sim, baseline, option_label=OPTION_LABELS[c.option], headline=main_figures,
                               more=more, month=month, base_load_w=base_load,
                               options=options_table, verdict=verdict,
                               checks=found,
                               settings=settings_list(option_sc, c))
        report.render(sc, c.option, sim, make_report)


main()
