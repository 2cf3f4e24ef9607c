"""Chart builder of the design search: a pure function from :func:`core.analyses.design.report.design_frame`'s
table to an Altair chart (tested without Streamlit)."""

from __future__ import annotations

import altair as alt
import pandas as pd

from core.present.charts import HEIGHT, WIDTH, _legend
from core.present.palette import BLUE, BLUISH_GREEN, ORANGE

#: Our own colours for the kinds of design (Okabe–Ito, colour-blind safe, as the other charts).
KIND_COLOURS = {"dc": BLUE, "ac": ORANGE, "dc+ac": BLUISH_GREEN}
KIND_LABELS = {"dc": "DC-coupled only", "ac": "AC-coupled only", "dc+ac": "DC and AC parts"}


def design_scatter(frame: pd.DataFrame, currency: str) -> alt.LayerChart:
    """Cost against added self-consumed energy of the valid designs, the best front joined by a line and ringed."""
    valid = frame[frame["valid"]].assign(kind_label=lambda f: f["kind"].map(KIND_LABELS))
    front = valid[valid["on_front"]].sort_values("cost")
    domain = [KIND_LABELS[k] for k in KIND_COLOURS if k in set(valid["kind"])]
    colour = alt.Color("kind_label:N", title="Kind of design", legend=_legend("Kind of design"),
                       scale=alt.Scale(domain=domain, range=[KIND_COLOURS[k] for k, v in KIND_LABELS.items()
                                                             if v in domain]))
    x = alt.X("cost:Q", title=f"Cost ({currency})")
    y = alt.Y("self_consumed_added_kwh:Q", title="Added self-consumed PV (kWh/yr)")
    tooltip = [alt.Tooltip("id:N", title="Design"), alt.Tooltip("design:N", title="What"),
               alt.Tooltip("cost:Q", title=f"Cost ({currency})", format=",.0f"),
               alt.Tooltip("npv:Q", title=f"NPV ({currency})", format=",.0f"),
               alt.Tooltip("self_consumed_added_kwh:Q", title="Added self-consumed (kWh/yr)", format=",.0f")]
    title = alt.Title("Which designs give the most energy for their cost?",
                      subtitle="valid designs; ringed and joined: the best front (nothing cheaper adds more)")
    points = alt.Chart(valid).mark_circle(size=70, opacity=0.8).encode(x=x, y=y, color=colour, tooltip=tooltip)
    line = alt.Chart(front).mark_line(color="#444444", strokeDash=[4, 3]).encode(x=x, y=y)
    rings = alt.Chart(front).mark_point(size=220, shape="circle", filled=False, color="#222222",
                                        strokeWidth=1.5).encode(x=x, y=y, tooltip=tooltip)
    return alt.layer(line, points, rings, title=title).properties(width=WIDTH, height=HEIGHT)
