"""A small drawing of a face's modules, coloured by the hours a year a shadow touches each (core.face_arrays)."""

from __future__ import annotations

import dataclasses

import altair as alt
import pandas as pd

from core.face_arrays import module_shade_hours


def face_modules(layout, hours) -> pd.DataFrame:
    """One row per module position: its rectangle on the face (m, u to the right, up the slope) and shade hours."""
    rows = []
    mu, ms = layout.module_u_m, layout.module_s_m
    for k, h in enumerate(hours):
        r, c = divmod(k, layout.columns)
        u0 = (c - layout.columns / 2.0) * mu
        s0 = r * (ms if layout.row_pitch_m is None else layout.row_pitch_m)
        rows.append({"module": k + 1, "row": r + 1, "column": c + 1, "u0_m": u0, "u1_m": u0 + mu * 0.96,
                     "s0_m": s0, "s1_m": s0 + ms * 0.96, "hours": float(h)})
    return pd.DataFrame(rows)


def face_chart(frame: pd.DataFrame, face_name: str) -> alt.Chart:
    """The modules as seen from the front, coloured by hours a year with part of their cells in shade."""
    top = float(frame["hours"].max()) if len(frame) else 0.0
    # whole hours from none to the most, each label once (a scale's own ticks repeat "1" below two hours)
    ticks = [0.0, round(top / 2.0), round(top)] if top >= 4.0 else [0.0, round(max(top, 1.0))]
    return alt.Chart(frame, title=alt.Title(f"Which modules on “{face_name}” see shade, and how often",
                                            subtitle="seen from the front; hours a year with a shadow on the cells")
                     ).mark_rect(stroke="#333333").encode(
        x=alt.X("u0_m:Q", title="Along the face (m)"), x2="u1_m:Q",
        y=alt.Y("s0_m:Q", title="Up the slope / back (m)"), y2="s1_m:Q",
        # From no shade to at least one hour: a face without shade is drawn pale, not in the scale's darkest colour
        color=alt.Color("hours:Q", scale=alt.Scale(scheme="orangered", domain=[0.0, max(top, 1.0)]),
                        legend=alt.Legend(title="Shade (h a year)", format=",.0f", values=ticks)),
        tooltip=[alt.Tooltip("module:Q", title="Module"), alt.Tooltip("row:Q", title="Row"),
                 alt.Tooltip("column:Q", title="Column"), alt.Tooltip("hours:Q", title="Shade (h a year)",
                                                                      format=",.0f")],
    ).properties(width="container", height=260)


def render(sc, site, option_sc=None) -> None:
    import streamlit as st

    from core.analyses.options import EXPANSION_ARRAY
    from core.scenario.schema import Obstacle
    from explorer.charts import draw

    faces = [f for f in sc.faces]
    if not faces:
        st.info("The scenario names no roof faces ([[faces]]): add one to see its shade.")
        return
    names = [f.name for f in faces]
    # the new panels' face first, when they lie on one
    on = next((a.face for a in option_sc.arrays if a.name == EXPANSION_ARRAY and a.face), None) if option_sc else None
    name = st.selectbox("Face", names, index=names.index(on) if on in names else 0, key="face_pick")
    face = faces[[f.name for f in faces].index(name)]
    module = sc.modules[(sc.expansion.module if sc.expansion else next(iter(sc.modules)))]
    st.caption("Try an obstacle or a horizon point here; the drawing shows its shade. To keep it, add it to the "
               "scenario file ([[faces.obstacles]], horizon).")
    cols = st.columns(4)
    add = cols[0].checkbox("Add a trial obstacle", key="face_try")
    if add:
        ob = Obstacle(name="trial", azimuth_deg=cols[1].number_input("Direction (°)", 0.0, 360.0, 180.0, 5.0),
                      distance_m=cols[2].number_input("Distance (m)", 0.0, 100.0, 3.0, 0.5),
                      height_m=cols[3].number_input("Height (m)", 0.0, 50.0, 2.0, 0.5))
        face = dataclasses.replace(face, obstacles=(*face.obstacles, ob))
    point = st.slider("Trial horizon point: elevation (°) due to the face's front", 0, 60, 0, key="face_horizon")
    if point:
        face = dataclasses.replace(face, horizon=(*face.horizon, (face.azimuth_deg, float(point))))
    layout, hours = module_shade_hours(site, face, module)
    draw(face_chart(face_modules(layout, hours), face.name))
    if not hours.any():
        st.caption(f"Nothing shades “{face.name}”: the scenario gives it no obstacle, no horizon and no rows in "
                   "front. Try one above.")
    elif face.rows is None or face.columns is None:
        st.caption(f"“{face.name}” has no layout in the scenario (rows, columns): drawn as one row of "
                   f"{layout.n_modules}.")
