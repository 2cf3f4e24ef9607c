"""The sweep: panel count × azimuth or tilt for the chosen option, as a heatmap of added self-consumed energy or NPV.

Every cell carries its validity (core.analyses.sweep): a cell that breaks a rule is marked with the rule's code
and named in its tooltip, and the summary points only at cells that pass.
"""

from __future__ import annotations

import pandas as pd
import streamlit as st

from core.analyses.checks.words import rule_words
from core.analyses.compare import LOADS_ROW
from core.analyses.options import OPTION_LABELS
from core.analyses.sweep import rule_counts, sweep, sweep_summary
from core.analyses.validity import LEAK_RULE
from explorer import caching, charts, state

#: A cell is marked "C" when the added curtailment and clipping exceed this share of the new panels' potential
#: (a quarter: our own choice, to mark where the new panels mostly displace other PV). A cell that breaks a rule
#: is marked with the rule's code (:func:`rule_codes`) and is set aside.
LOST_SHARE = 0.25
AZIMUTHS = tuple(range(90, 271, 15))
TILTS = tuple(range(0, 91, 10))


def rule_codes(table: pd.DataFrame) -> dict[str, str]:
    """A short code per rule broken somewhere in the table: "X" for uncontrolled export, "1", "2", … for the
    failing design checks, most often broken first."""
    codes, n = {}, 0
    for rule in rule_counts(table):
        if rule == LEAK_RULE:
            codes[rule] = "X"
        else:
            n += 1
            codes[rule] = str(n)
    return codes


def flags(table: pd.DataFrame, codes: dict[str, str] | None = None) -> pd.Series:
    """The markers of each sweep row: C (curtailed or clipped) followed by the codes of the rules it breaks."""
    codes = rule_codes(table) if codes is None else codes
    lost = (table["curtailed_share"] + table["clipped_share"]) > LOST_SHARE
    marks = [("C" if c else "") + "".join(codes[r] for r in filter(None, str(f).split(", ")))
             for c, f in zip(lost, table["failed_checks"], strict=True)]
    return pd.Series(marks, index=table.index, dtype=object)


def colour_by(currency: str) -> dict[str, str]:
    """What the cells' colour can show: (column of the heat frame, legend title)."""
    return {
        "self_consumed_added_kwh": "Added self-consumed energy (kWh/yr)",
        "to_loads_added_kwh": f"{LOADS_ROW} (kWh/yr)",
        "npv": f"NPV ({currency})" if currency else "NPV",
        "lost_pct": "New panels' output curtailed or clipped (%)",
    }


def heat_frame(table: pd.DataFrame, axis: str) -> pd.DataFrame:
    out = table[["count", axis, "self_consumed_added_kwh", "to_loads_added_kwh", "curtailed_share",
                 "exported_uncontrolled_kwh", "npv", "valid", "failed_checks"]].copy()
    out["lost_pct"] = (table["curtailed_share"] + table["clipped_share"]).clip(lower=0.0) * 100.0
    out[axis] = out[axis].round(0).astype(int)
    out["flag"] = flags(table)
    return out


def legend(table: pd.DataFrame) -> str:
    """The markers in words: C, and each rule code with its rule id."""
    parts = [f"C: added curtailment and clipping above {LOST_SHARE:.0%} of the new panels' potential."]
    for rule, code in rule_codes(table).items():
        what = rule_words(rule) if rule == LEAK_RULE else f"fails the design check: {rule_words(rule)}"
        parts.append(f"{code}: {what} — set aside.")
    parts.append("The framed cell is the sidebar's setting.")
    return " ".join(parts)


def render(m) -> None:
    sc, option, lay = m.scenario, m.option, m.comparison.layout
    if sc.expansion is None or option not in state.option_choices(sc):
        st.info("The scenario's [expansion] allows no option to sweep.")
        return
    count_max = state.panel_count_max(sc)
    if not 1 <= st.session_state.get("sweep_top", 0) <= count_max:
        st.session_state["sweep_top"] = min(count_max, max(2 * lay.count, 6))
    left, mid, right = st.columns([2, 2, 1.3], vertical_alignment="bottom")
    axis = left.radio("Across", ["azimuth_deg", "tilt_deg"], horizontal=True, key="sweep_axis",
                      format_func={"azimuth_deg": "azimuth (90° east … 270° west)",
                                   "tilt_deg": "tilt (0° … 90°)"}.get)
    top = mid.slider("Panel counts up to", 1, count_max, key="sweep_top")
    counts = list(range(0, top + 1))
    values = AZIMUTHS if axis == "azimuth_deg" else TILTS
    fixed = (f"tilt {lay.tilt_deg:.0f}°" if axis == "azimuth_deg" else f"azimuth {lay.azimuth_deg:.0f}°")
    key = caching.site_key(sc) + repr((option, axis, counts, lay.tilt_deg, lay.azimuth_deg, sc.battery, sc.grid,
                                       sc.tariff, sc.expansion))
    run = right.button("Run the sweep", type="primary", key="sweep_run")
    st.caption(f"{OPTION_LABELS[option]} (the sidebar's option), {fixed} fixed, {len(counts)} counts × "
               f"{len(values)} {'azimuths' if axis == 'azimuth_deg' else 'tilts'} = {len(counts) * len(values)} "
               "simulated years.")
    stored = st.session_state.get("sweep_result")
    if run:
        bar = st.progress(0.0, text="Preparing the sweep…")

        def progress(fraction: float, message: str) -> None:
            bar.progress(min(max(fraction, 0.0), 1.0), text=f"Sweep: {message}")

        kwargs = {"counts": counts, "options": [option], "site": caching.site_data(sc),
                  "cache": caching.orientation_cache(sc), "progress": progress}
        kwargs["azimuths" if axis == "azimuth_deg" else "tilts"] = list(values)
        table = sweep(sc, **kwargs)
        bar.empty()
        stored = {"key": key, "table": table, "axis": axis}
        st.session_state["sweep_result"] = stored
    if not stored:
        st.info("Press *Run the sweep* to simulate every combination (a few seconds).")
        return
    if stored["key"] != key:
        st.warning("The settings changed since this sweep was run: press *Run the sweep* to update it.")
    table, axis = stored["table"], stored["axis"]
    title = "Azimuth (°)" if axis == "azimuth_deg" else "Tilt (°)"
    frame = heat_frame(table, axis)
    current = {"count": lay.count, axis: int(round(lay.azimuth_deg if axis == "azimuth_deg" else lay.tilt_deg))}
    colours = colour_by(sc.tariff.currency)
    colour = st.radio("Colour by", list(colours), format_func=colours.get, horizontal=True, key="sweep_colour")
    charts.draw(charts.sweep_heatmap(frame, x=axis, x_title=title, value=colour, value_title=colours[colour],
                                     current=current))
    st.markdown(sweep_summary(table, axis=axis, currency=sc.tariff.currency))
    st.caption(legend(table))
