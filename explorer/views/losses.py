"""Where each array's energy goes, from the potential in its plane to what it delivers (core.face_arrays)."""

from __future__ import annotations

import altair as alt
import pandas as pd

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


def loss_chart(frame: pd.DataFrame, array_name: str) -> alt.Chart:
    """Horizontal bars from the potential down to what is delivered, each loss as a span (kWh a year)."""
    return alt.Chart(frame, title=alt.Title(f"Where the energy of “{array_name}” goes",
                                            subtitle="a year, kWh: each bar is what that stage takes")).mark_bar().encode(
        y=alt.Y("step:N", sort=alt.EncodingSortField("order"), title=None, axis=alt.Axis(labelLimit=320)),
        x=alt.X("start_kwh:Q", title="Energy (kWh a year)"),
        x2="end_kwh:Q",
        color=alt.Color("kind:N", scale=alt.Scale(domain=list(KIND_COLOURS), range=list(KIND_COLOURS.values())),
                        legend=alt.Legend(title="Bar", orient="bottom", direction="horizontal",
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
    chosen = st.selectbox("Array", names, index=len(names) - 1, key="losses_array")
    array = arrays[names.index(chosen)]
    draw(loss_chart(loss_steps(array), chosen))
    table = pd.DataFrame([(LOSS_WORDS[k], 0.0 if abs(v) < 0.5 else v) for k, v in array["losses_kwh"].items()],
                         columns=["Loss", "kWh a year"])
    st.dataframe(table, hide_index=True, column_config={"kWh a year": st.column_config.NumberColumn(format="%.0f")})


def render_tab(m) -> None:
    """The tab: where each array's energy goes, then the shade on a face (a view of the page model ``m``)."""
    from explorer.guard import section
    from explorer.views import face

    with section("Losses"):
        render(m.sim)
    with section("Shade on a face"):
        face.render(m.scenario, m.sim.site)
