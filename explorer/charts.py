"""The page's charts: the builders of :mod:`core.present.charts` under the names the views use, and
:func:`draw`, which puts one on the page.

The builders live in ``core`` so that the HTML report renders the very same charts; only drawing needs
Streamlit.
"""

from __future__ import annotations

from core.present import charts as _builders
from core.present.charts import (  # noqa: F401  (the page's names for the builders)
    HEIGHT,
    WIDTH,
    options_chart,
    outage_chart,
    pv_destinations_chart,
    surplus_duration_chart,
    surplus_map_chart,
    sweep_heatmap,
    typical_day_chart,
)


def __getattr__(name: str):
    """Any builder added to :mod:`core.present.charts` later is reachable here too."""
    try:
        return getattr(_builders, name)
    except AttributeError:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}") from None


def draw(chart) -> None:
    """Put a chart on the page. The specification is built without Altair's schema validation, which costs more
    than the rest of a chart's work on every rerun; tests/test_charts.py validates every builder instead."""
    import altair as alt
    import streamlit as st

    with alt.data_transformers.disable_max_rows():  # a typical day at a one-minute step has more than 5000 rows
        spec = chart.to_dict(validate=False)
    st.vega_lite_chart(spec, width="stretch")
