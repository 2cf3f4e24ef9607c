"""Calibration: the existing system's monitoring export against the model, the fitted values, and a button that
puts them into the what-if.

The export is the scenario's ``[measured]`` file, or one uploaded on the data-files tab (:func:`render_upload`).
The work itself is :func:`core.analyses.calibration.calibrate`; the charts are pure builders in
:mod:`core.present.calibration_charts`.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

import pandas as pd
import streamlit as st

from core.analyses.calibration import GUIDELINE_14, calibrate
from core.present import calibration_charts
from core.scenario import Measured, Scenario
from core.simulate import site_timezone
from core.timebase import standard_offset
from explorer import charts, state
from explorer.guard import section

UPLOAD_KEY = "calibration_upload"
APPLIED_KEY = "calibration_applied"
UNITS = ["kWh", "Wh", "W", "kW", "kWh_register"]


def render_upload(sc: Scenario, folder: Path) -> None:
    """The monitoring-export upload on the data-files tab; the calibration tab reads it."""
    st.divider()
    st.markdown("#### Monitoring export (for the calibration tab)")
    upload = st.file_uploader("The existing system's logged data (CSV)", type=["csv", "txt", "tsv"],
                              key="monitoring_file", help="PV yield, and if logged grid import, load and state of "
                              "charge, at 1 to 60 minute intervals.")
    if upload is None:
        st.session_state.pop(UPLOAD_KEY, None)
        st.caption("Without an upload the calibration uses the scenario's [measured] export, if it names one.")
        return
    c = st.columns(5)
    pv = c[0].text_input("PV column", key="m_pv").strip() or None
    grid = c[1].text_input("Grid import column", key="m_grid").strip() or None
    load = c[2].text_input("Load column", key="m_load").strip() or None
    soc = c[3].text_input("SOC column (%)", key="m_soc").strip() or None
    unit = c[4].selectbox("Unit", UNITS, key="m_unit")
    if pv is None and grid is None and load is None:
        st.info("Name at least the PV column as it appears in the file's header.")
        return
    with section("Monitoring export"):
        data = upload.getvalue()
        path = state.save_upload(state.content_folder(folder / "data", data), upload.name, data)
        st.session_state[UPLOAD_KEY] = Measured(path=str(path), unit=unit, pv=pv, grid_import=grid, load=load, soc=soc)
        st.success(f"Stored {upload.name}; the calibration tab compares it with the model.")


def measured_of(sc: Scenario) -> Scenario:
    """The scenario with the uploaded export in place of its own [measured], when there is one."""
    upload = st.session_state.get(UPLOAD_KEY)
    return sc if upload is None else dataclasses.replace(sc, measured=upload)


def apply_fitted(sc: Scenario) -> Scenario:
    """The scenario with the array losses the user chose to apply (the standing draw goes through its control)."""
    applied = st.session_state.get(APPLIED_KEY)
    if not applied or applied.get("name") != sc.name:
        return sc
    losses = applied["losses"]
    arrays = tuple(dataclasses.replace(a, losses_pct=losses[a.name]) if a.name in losses else a for a in sc.arrays)
    return dataclasses.replace(sc, arrays=arrays)


def _key(sc: Scenario) -> str:
    files = {k: (p.stat().st_size, p.stat().st_mtime_ns) if p.exists() else None for k, p in sc.data_files().items()}
    return repr((sc.measured, files, sc.arrays, sc.battery, sc.controllers, sc.modules, sc.site, sc.weather))


@st.cache_resource(max_entries=4, show_spinner=False)
def _calibration(key: str, _sc: Scenario):
    return calibrate(_sc)


def _apply(values: dict) -> None:
    st.session_state[APPLIED_KEY] = values
    if values.get("standing_draw_w") is not None:
        st.session_state["c_standing"] = float(values["standing_draw_w"])


def _fit_rows(fit: dict) -> pd.DataFrame:
    rows = []
    for res in ("monthly", "hourly"):
        limit_nmbe, limit_cv = GUIDELINE_14[res]
        for when in ("before", "after"):
            s = fit[when][res]
            ok = s["nmbe_pct"] is not None and abs(s["nmbe_pct"]) <= limit_nmbe and s["cv_rmse_pct"] <= limit_cv
            rows.append({"Resolution": res, "Model": f"{when} the fit",
                         "NMBE (%)": "—" if s["nmbe_pct"] is None else f"{s['nmbe_pct']:+.1f}",
                         "CV(RMSE) (%)": "—" if s["cv_rmse_pct"] is None else f"{s['cv_rmse_pct']:.1f}",
                         "Periods": s["periods"],
                         "Within the criteria": f"{'yes' if ok else 'no'} (±{limit_nmbe:g} % / {limit_cv:g} %)",
                         "Weather of the model": fit["basis"][res]})
    return pd.DataFrame(rows)


def render(sc: Scenario) -> None:
    """The calibration tab."""
    sc = measured_of(sc)
    if sc.measured is None or not sc.measured.path:
        st.info("Upload the existing system's monitoring export on the *Data files* tab (or name it in the "
                "scenario's [measured] section) to compare the model with what the system really did.")
        return
    if not sc.resolve(sc.measured.path, "measured.path").exists():  # e.g. a saved scenario uploaded without it
        st.info(f"The scenario names the monitoring export {Path(sc.measured.path).name!r}, which is not here: "
                "upload it with the scenario, or on the *Data files* tab, to calibrate.")
        return
    with st.spinner("Screening the record and fitting the model…"):
        cal = _calibration(_key(sc), sc)
    out = cal.to_dict()
    f = out["fitted"]
    st.markdown(f"**{Path(out['record']['file']).name}**: {out['record']['days']:.0f} days at "
                f"{out['record']['interval_s'] // 60} min intervals.")
    rows = [{"Value": f"losses of array '{name}'", "In the scenario": f"{a['scenario_losses_pct']:.1f} %",
             "From the record": f"{a['losses_pct']:.1f} ± {a['uncertainty_pct']:.1f} %",
             "Resting on": f"{a['days']} {'clear ' if sc.measured.weather_path is None else ''}days"}
            for name, a in f["arrays"].items()]
    if f["standing_draw_w"] is not None:
        rows.append({"Value": "standing draw", "In the scenario": f"{sc.grid.standing_draw_w:.0f} W",
                     "From the record": f"{f['standing_draw_w']:.0f} ± {f['standing_draw_uncertainty_w']:.0f} W",
                     "Resting on": f"{f['standing_draw_hours']:.0f} h"})
    if f["base_load_w"] is not None:
        rows.append({"Value": "base load", "In the scenario": "from the load file",
                     "From the record": f"{f['base_load_w']:.0f} ± {f['base_load_uncertainty_w']:.0f} W",
                     "Resting on": f"{f['base_load_hours']:.0f} h"})
    left, right = st.columns([3, 2], gap="large")
    with left:
        st.markdown("#### What the record says")
        st.dataframe(pd.DataFrame(rows), hide_index=True, width="stretch")
        values = {"name": cal.scenario.name, "losses": {n: round(x.value, 1) for n, x in cal.losses.items()},
                  "standing_draw_w": None if cal.standing_draw is None else round(cal.standing_draw.value)}
        st.button("Use the fitted values in the what-if", on_click=_apply, args=(values,), type="primary",
                  help="Sets the existing arrays' losses and the standing draw control to the fitted values.")
        if st.session_state.get(APPLIED_KEY, {}).get("name") == cal.scenario.name:
            st.caption("The what-if uses the fitted values.")
    with right:
        st.markdown("#### Left out before fitting")
        excluded = pd.DataFrame([{"Reason": calibration_charts.REASON_WORDS[k], "Intervals": v}
                                 for k, v in out["excluded"].items()])
        st.dataframe(excluded, hide_index=True, width="stretch")
        st.caption("Curtailment found by: " + ", ".join(out["record"]["curtailment_found_by"]))
    st.markdown("#### How well the model fits (ASHRAE Guideline 14)")
    st.dataframe(_fit_rows(out["fit"]), hide_index=True, width="stretch")
    verdict = "meets" if out["fit"]["meets_guideline_14"] else "does not meet"
    st.caption(f"After the fit the model {verdict} the guideline's criteria (judged on: "
               f"{', '.join(out['fit']['judged_on'])}).")
    for note in out["notes"]:
        st.caption(f"Note: {note}.")
    tz = standard_offset(site_timezone(sc))
    basis = out["fit"]["basis"]["hourly"]
    charts.draw(calibration_charts.daily_scatter(cal.daily, basis))
    days = sorted({d.date() for d in cal.intervals.index.tz_convert(tz)})
    if len(days) > 2:
        first, last = st.select_slider("Days shown below", options=days, value=(days[max(0, len(days) - 14)], days[-1]),
                                       format_func=lambda d: d.strftime("%d %b %Y"), key="calibration_days")
        local = cal.intervals.index.tz_convert(tz)
        window = cal.intervals[(local.date >= first) & (local.date <= last)]
        charts.draw(calibration_charts.timeseries_chart(window, tz, cal.record.step_s, basis))
