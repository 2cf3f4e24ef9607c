"""Where each array's energy goes, from the potential in its plane to what it delivers (core.face_arrays)."""

from __future__ import annotations

import altair as alt
import pandas as pd

from core.analyses.options import EXPANSION_ARRAY
from core.face_arrays import array_breakdown, step_note
from core.present import figures as palette

#: Loss names in the chain's order, and their words on the page.
LOSS_WORDS = {"horizon": "Horizon", "obstacles": "Obstacles", "row_shading": "Rows in front",
              "other": "Glass reflection, soiling, wiring (array losses)", "temperature": "Cell temperature",
              "mismatch": "Module mismatch", "clipping": "Clipped by the converter",
              "conversion": "Conversion", "curtailment": "Curtailed (no use for it)"}
KIND_COLOURS = {"potential": palette.BLUE, "loss": palette.VERMILLION, "gain": palette.BLUISH_GREEN,
                "delivered": palette.ORANGE}


def loss_steps(array: dict) -> pd.DataFrame:
    """One row per bar: the potential, each loss as a span below the running level, then the delivered energy.

    Columns: ``step`` (words), ``order``, ``start_kwh``, ``end_kwh``, ``kwh`` (the bar's length, signed: a loss is
    negative), ``kind`` (potential, loss, gain, delivered)."""
    rows = [("In the plane of the array (potential)", 0.0, array["poa_kwh"], array["poa_kwh"], "potential")]
    level = array["poa_kwh"]
    for key, words in LOSS_WORDS.items():
        loss = array["losses_kwh"].get(key, 0.0)
        if abs(loss) < 0.5:
            continue
        rows.append((words, level - loss, level, -loss, "loss" if loss > 0 else "gain"))
        level -= loss
    rows.append(("Delivered", 0.0, array["ac_kwh"], array["ac_kwh"], "delivered"))
    frame = pd.DataFrame(rows, columns=["step", "start_kwh", "end_kwh", "kwh", "kind"])
    frame["order"] = range(len(frame))
    frame[["start_kwh", "end_kwh"]] = frame[["start_kwh", "end_kwh"]].apply(sorted, axis=1, result_type="expand")
    return frame


#: The page's words for an array the options add (its name in the model is the expansion's).
ARRAY_WORDS = {EXPANSION_ARRAY: "the new panels"}


def array_words(name: str) -> str:
    """An array's name as the page says it: the new panels in words, an existing array by its own name."""
    return ARRAY_WORDS.get(name, name)


def loss_chart(frame: pd.DataFrame, array_name: str) -> alt.Chart:
    """Horizontal bars from the potential down to what is delivered, each loss as a span (kWh a year)."""
    kinds = [k for k in KIND_COLOURS if k in set(frame["kind"])] or list(KIND_COLOURS)
    shown = array_words(array_name)
    title = (f"Where the energy of {shown} goes" if shown != array_name else f"Where the energy of “{shown}” goes")
    return alt.Chart(frame, title=alt.Title(title, subtitle="a year, kWh: from what reaches the modules' plane, "
                                                            "each bar is what that stage takes")).mark_bar().encode(
        y=alt.Y("step:N", sort=alt.EncodingSortField("order"), title=None, axis=alt.Axis(labelLimit=320)),
        x=alt.X("start_kwh:Q", title="Energy (kWh a year)"),
        x2="end_kwh:Q",
        color=alt.Color("kind:N", scale=alt.Scale(domain=kinds, range=[KIND_COLOURS[k] for k in kinds]),
                        legend=alt.Legend(title="Stage", orient="bottom", direction="horizontal",
                                          labelExpr="{'potential': 'potential', 'loss': 'loss', 'gain': "
                                                    "'gain (cold cells)', 'delivered': 'delivered'}[datum.label]")),
        tooltip=[alt.Tooltip("step:N", title="Stage"), alt.Tooltip("kwh:Q", title="kWh a year", format=",.0f")],
    ).properties(width="container", height=alt.Step(30))


def render(sim) -> None:
    import streamlit as st

    from explorer.charts import draw

    st.caption(step_note(sim.site.step_s, sim.site.weather.source))
    on_faces = sorted({a.face for a in sim.scenario.arrays if a.face})
    if on_faces:
        st.caption("Arrays on a roof face take its tilt, azimuth and shade: " + ", ".join(on_faces) + ".")
    arrays = array_breakdown(sim)
    names = [a["name"] for a in arrays]
    if not names:
        st.info("There are no arrays in this option.")
        return
    chosen = st.selectbox("Array", names, index=len(names) - 1, key="losses_array", format_func=array_words)
    array = arrays[names.index(chosen)]
    draw(loss_chart(loss_steps(array), chosen))
    table = loss_table(array)
    st.dataframe(table, hide_index=True, column_config={
        "kWh a year": st.column_config.NumberColumn(format="%.0f"),
        "Share of the potential (%)": st.column_config.NumberColumn(format="%.1f")})


def loss_table(array: dict) -> pd.DataFrame:
    """Every loss in the chart's order (a gain is negative), in kWh a year and as a share of the potential."""
    poa = array["poa_kwh"]
    rows = []
    for key, words in LOSS_WORDS.items():
        v = array["losses_kwh"].get(key, 0.0)
        v = 0.0 if abs(v) < 0.5 else v
        rows.append((words, v, 100.0 * v / poa if poa > 0 else 0.0))
    return pd.DataFrame(rows, columns=["Loss", "kWh a year", "Share of the potential (%)"])


def render_tab(m) -> None:
    """The tab: where each array's energy goes, then the shade on a face (a view of the page model ``m``)."""
    from explorer.guard import section
    from explorer.views import face

    with section("Losses"):
        render(m.sim)
    with section("Shade on a face"):
        face.render(m.scenario, m.sim.site, m.option_scenario)
