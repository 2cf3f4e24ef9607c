"""secondroof explorer: what would a few more panels add to a zero-export hybrid PV system?

Run with ``make run`` (serves http://127.0.0.1:8501 on the sample site named by SECONDROOF_SCENARIO).
The page: the site and the what-if controls in the sidebar; headline figures against the existing system; one tab
per view; the safety cautions at the foot. The figures are one cached :class:`explorer.page_model.PageModel` per
setting; a tab draws only while it is shown. Every section runs inside :func:`explorer.guard.section`, so bad
input shows one message and the rest of the page keeps working.
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

import streamlit as st

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:  # `streamlit run explorer/app.py` puts explorer/ first on the path, not the root
    sys.path.insert(0, str(ROOT))

from core.present.safety import SAFETY_CAUTIONS  # noqa: E402
from explorer import caching, state, uploads  # noqa: E402
from explorer.guard import harden, section  # noqa: E402
from explorer.views import (  # noqa: E402
    baseload,
    checks,
    compare,
    controls,
    data_files,
    day,
    design,
    energy,
    headline,
    outages,
    report,
    start,
    sweep,
)
from explorer.views import calibration as calibration_view  # noqa: E402
from explorer.views import losses as losses_view  # noqa: E402

SAMPLES = ROOT / "sample_sites"

#: The tabs, in order: (label, view). A view is a function of the page model alone; it runs only while its tab is
#: shown. A new view is one more line here.
VIEWS = (
    ("Energy by month", energy.render_tab),
    ("Typical day", day.render),
    ("Output vs base load", baseload.render),
    ("Options", compare.render),
    ("Sweep", sweep.render),
    ("Best layouts", design.render),
    ("Checks", checks.render),
    ("Outages", outages.render),
    ("Losses and shade", losses_view.render_tab),
    ("Data files", data_files.render),
    ("Calibration", None),  # drawn from the scenario as loaded (below), not from the what-if
    ("Save and report", report.render),
)
DATA_FILES = "Data files"

#: Widgets inside tabs: a hidden tab's widgets are not drawn, and Streamlit would forget their values; writing
#: them back each run keeps the month, the sweep's choices and the load file's options while another tab shows.
KEEP = ("day_month", "sweep_axis", "sweep_top", "sweep_colour", "load_channel", "load_column", "load_unit",
        *data_files.BILL_KEYS)


def upload_folder() -> Path:
    return uploads.session_folder(st.session_state)


def keep_widget_values() -> None:
    for key in KEEP:
        if key in st.session_state:
            st.session_state[key] = st.session_state[key]


def safety() -> None:
    with st.container(border=True):
        st.markdown("**Safety and limits of these results**\n\n" + "\n".join(f"- {c}" for c in SAFETY_CAUTIONS))


def main() -> None:
    harden()
    st.set_page_config(page_title="secondroof · what would more panels add?", layout="wide",
                       initial_sidebar_state="expanded")
    # Less empty space above the title and at the sides than Streamlit's default, and the tab labels a little
    # closer, so that all twelve tabs fit on one line at 1280 px instead of hiding the last ones behind an arrow.
    st.html("<style>[data-testid='stMainBlockContainer']{padding-top:2.5rem;padding-left:2rem;padding-right:2rem}"
            "div:has(> [data-testid='stTab']){gap:0.5rem}"
            "[data-testid='stTab'] p{font-size:0.82rem}</style>")
    keep_widget_values()
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

    if st.session_state.get("_identity") != source.identity:
        data_files.forget(source.scenario)
    title = st.container()
    head = st.container()
    labels = [label for label, _ in VIEWS]
    tabs = dict(zip(labels, st.tabs(labels, key="view", on_change="rerun"), strict=True))
    safety()

    # Uploaded data files replace the scenario's own before anything is simulated; they stay in use while
    # other tabs are shown.
    if tabs[DATA_FILES].open:
        with tabs[DATA_FILES], section("Data files"):
            data_files.render_uploads(source.scenario, folder)
            calibration_view.render_upload(source.scenario, folder)
    base = calibration_view.apply_fitted(state.apply_overrides(source.scenario, data_files.overrides()))
    if st.session_state.get("_identity") != source.identity:
        controls.reset(base, source.option_hint)
        st.session_state["_identity"] = source.identity
    with st.sidebar:
        c = controls.render(base)

    with title:
        st.subheader(f"{base.name} · what would the new panels add?", divider="blue")
        st.caption("One simulated year against the existing system. Estimates, not a design approval — see the "
                   "safety notes at the foot of the page.")

    model = None
    with head, section("Settings"):
        identity = (f"{source.identity}|{id(source.scenario)}|{data_files.overrides()!r}|"
                    f"{st.session_state.get(calibration_view.APPLIED_KEY)!r}")
        model = caching.page_model(caching.built_scenario(identity, base, c), c.option)
        headline.render(model)
        data_files.render_warning_notice(model.sim.site)

    for label, render in VIEWS:
        tab = tabs[label]
        if not tab.open:
            continue
        if render is None:  # the calibration fits the scenario as loaded, before the what-if's changes
            with tab, section(label):
                calibration_view.render(source.scenario)
            continue
        with tab:
            if model is None:
                st.info("Fix the setting named above to see this view.")
                continue
            with section(label):
                render(model)


if __name__ == "__main__":  # what `streamlit run` and AppTest run; importing the module draws nothing
    main()
