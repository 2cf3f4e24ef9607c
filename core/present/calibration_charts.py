"""Chart builders of the calibration view: pure functions from a calibration's tables to Altair charts.

``daily`` and ``intervals`` are :class:`core.analyses.calibration.Calibration`'s tables. Every chart has a title
that says what it answers, units on its axes and a legend in words.
"""

from __future__ import annotations

import altair as alt
import numpy as np
import pandas as pd

from core.present import palette

#: Colours of the two model states and of the measurement (Okabe–Ito, shared with the other charts).
FIT_COLOURS = {"measured": palette.BLACK, "model before the fit": palette.ORANGE,
               "model after the fit": palette.BLUE}
#: Shades of the excluded periods, by reason.
EXCLUDED_COLOURS = {"curtailed": palette.YELLOW, "gaps": palette.GREY, "stale": palette.REDDISH_PURPLE,
                    "outliers": palette.VERMILLION}
REASON_WORDS = {"curtailed": "curtailed (battery full)", "gaps": "nothing logged", "stale": "stuck values",
                "outliers": "outliers"}


def daily_points(daily: pd.DataFrame) -> pd.DataFrame:
    """Long table of measured against modelled energy per day (kWh), one row per day and model state."""
    frame = daily.reset_index()
    date = frame.columns[0]
    rows = [pd.DataFrame({"day": frame[date].dt.strftime("%Y-%m-%d"), "measured_kwh": frame["measured_kwh"],
                          "modelled_kwh": frame[col], "model": label})
            for col, label in (("modelled_before_kwh", "model before the fit"),
                               ("modelled_after_kwh", "model after the fit"))]
    return pd.concat(rows, ignore_index=True).dropna()


def daily_scatter(daily: pd.DataFrame, basis: str = "") -> alt.LayerChart:
    """Measured against modelled PV energy per day, before and after the fit, with the line of equality."""
    points = daily_points(daily)
    top = float(np.nanmax(points[["measured_kwh", "modelled_kwh"]].to_numpy())) if len(points) else 1.0
    line = alt.Chart(pd.DataFrame({"x": [0.0, top], "y": [0.0, top]})).mark_line(
        color=palette.GREY, strokeDash=[4, 4]).encode(x="x:Q", y="y:Q")
    colours = {k: v for k, v in FIT_COLOURS.items() if k != "measured"}
    dots = alt.Chart(points).mark_circle(size=45, opacity=0.75).encode(
        x=alt.X("measured_kwh:Q", title="Measured PV energy (kWh per day)"),
        y=alt.Y("modelled_kwh:Q", title="Modelled PV energy (kWh per day)"),
        color=alt.Color("model:N", scale=alt.Scale(domain=list(colours), range=list(colours.values())),
                        legend=alt.Legend(title="Model", orient="bottom")),
        tooltip=[alt.Tooltip("day:N", title="Day"), alt.Tooltip("model:N", title="Model"),
                 alt.Tooltip("measured_kwh:Q", title="Measured (kWh)", format=",.1f"),
                 alt.Tooltip("modelled_kwh:Q", title="Modelled (kWh)", format=",.1f")])
    return alt.layer(line, dots).properties(
        title=alt.Title("Does the model follow the record, day by day?",
                        subtitle=f"screened daytime intervals{'; model on ' + basis if basis else ''}; on the dashed "
                                 "line model and record agree"),
        # room above the title: without it the page cuts the top of the title's first line
        padding={"top": 14, "left": 5, "right": 5, "bottom": 5}, width="container", height=380)


def hourly_series(intervals: pd.DataFrame, tz) -> pd.DataFrame:
    """Hourly mean power (W) of the record and the model after the fit, in local standard time, long form."""
    local = intervals.tz_convert(tz)
    hourly = local[["measured_w", "modelled_after_w"]].resample("1h").mean()
    hourly.index = hourly.index.tz_localize(None)
    out = hourly.rename(columns={"measured_w": "measured", "modelled_after_w": "model after the fit"})
    out = out.reset_index(names="time").melt("time", var_name="series", value_name="power_w")
    return out.dropna()


def excluded_spans(intervals: pd.DataFrame, tz, step_s: int) -> pd.DataFrame:
    """Runs of excluded intervals as (start, end, reason) in local standard time."""
    reason = intervals["excluded"].fillna("")
    change = reason.ne(reason.shift()).cumsum()
    rows = []
    for _, run in reason.groupby(change):
        if run.iloc[0]:
            start = run.index[0].tz_convert(tz).tz_localize(None)
            end = run.index[-1].tz_convert(tz).tz_localize(None) + pd.Timedelta(seconds=step_s)
            rows.append((start, end, REASON_WORDS.get(run.iloc[0], run.iloc[0])))
    return pd.DataFrame(rows, columns=["start", "end", "reason"])


def timeseries_chart(intervals: pd.DataFrame, tz, step_s: int, basis: str = "") -> alt.LayerChart:
    """Measured and fitted-model PV output (hourly means, W) with the excluded periods shaded by reason."""
    series = hourly_series(intervals, tz)
    spans = excluded_spans(intervals, tz, step_s)
    words = {REASON_WORDS[k]: v for k, v in EXCLUDED_COLOURS.items()}
    shade = alt.Chart(spans).mark_rect(opacity=0.35).encode(
        x=alt.X("start:T", title="Local standard time"), x2="end:T",
        color=alt.Color("reason:N", scale=alt.Scale(domain=list(words), range=list(words.values())),
                        legend=alt.Legend(title="Excluded", orient="bottom")),
        tooltip=[alt.Tooltip("reason:N", title="Excluded"), alt.Tooltip("start:T", title="From", format="%d %b %H:%M"),
                 alt.Tooltip("end:T", title="To", format="%d %b %H:%M")])
    colours = {k: v for k, v in FIT_COLOURS.items() if k != "model before the fit"}
    lines = alt.Chart(series).mark_line(strokeWidth=1.2).encode(
        x=alt.X("time:T", title="Local standard time"),
        y=alt.Y("power_w:Q", title="PV output (W, hourly mean)"),
        color=alt.Color("series:N", scale=alt.Scale(domain=list(colours), range=list(colours.values())),
                        legend=alt.Legend(title="Series", orient="bottom")),
        tooltip=[alt.Tooltip("time:T", title="Hour", format="%d %b %H:%M"), alt.Tooltip("series:N", title="Series"),
                 alt.Tooltip("power_w:Q", title="W", format=",.0f")])
    return alt.layer(shade, lines).resolve_scale(color="independent").properties(
        title=alt.Title("Where does the record leave the model, and what was left out?",
                        subtitle="PV output of the existing arrays" + (f" (model on {basis})" if basis else "")
                                 + "; shaded: intervals excluded before the fit"),
        width="container", height=380)
