"""Altair chart builders: pure functions from a small tidy table (see :mod:`core.present.figures`) to a chart.

The page draws them (``explorer.charts``) and the HTML report renders the same charts to SVG
(:mod:`core.present.report_html`), so a figure has one definition. Every chart has a title that says what it
answers, units on its axes and a legend in words. Colours come from :mod:`core.present.figures` (Okabe–Ito,
colour-blind safe).
"""

from __future__ import annotations

import altair as alt
import numpy as np
import pandas as pd

from core.present import figures as palette
from core.present.figures import MONTH_NAMES

WIDTH = "container"
HEIGHT = 430


def _legend(title: str, columns: int | None = None) -> alt.Legend:
    kwargs = {"orient": "bottom", "direction": "horizontal", "labelLimit": 260}
    if columns:
        kwargs["columns"] = columns
    return alt.Legend(title=title, **kwargs)


def _scale(colours: dict[str, str], present) -> alt.Scale:
    domain = [k for k in colours if k in set(present)]
    return alt.Scale(domain=domain, range=[colours[k] for k in domain])


def option_scale(frame: pd.DataFrame, key: str = "option", label: str = "label") -> alt.Scale:
    """Colours of the options named in ``frame[label]``, looked up by their option key in ``frame[key]``
    (:data:`core.present.figures.OPTION_COLOURS`), so that a label's wording never changes its colour."""
    pairs = dict(zip(frame[label], frame[key], strict=False))
    return alt.Scale(domain=list(pairs), range=[palette.OPTION_COLOURS.get(str(k), palette.GREY)
                                                for k in pairs.values()])


def pv_destinations_chart(frame: pd.DataFrame) -> alt.Chart:
    """Stacked monthly bars of where the PV energy goes (kWh): frame from ``pv_destinations_by_month``, or from
    ``pv_destinations_by_system``, whose systems stand side by side in each month (the first one paler)."""
    systems = list(dict.fromkeys(frame["system"])) if "system" in frame else []
    tooltip = [alt.Tooltip("month_name:N", title="Month"), alt.Tooltip("destination:N", title="Destination"),
               alt.Tooltip("kwh:Q", title="Energy (kWh)", format=",.0f")]
    extra = {}
    subtitle = "energy per month (kWh)"
    if len(systems) > 1:
        tooltip.insert(0, alt.Tooltip("system:N", title="System"))
        extra = {"xOffset": alt.XOffset("system:N", sort=systems),
                 "opacity": alt.Opacity("system:N", sort=systems, legend=None,
                                        scale=alt.Scale(domain=systems,
                                                        range=[0.45, *[1.0] * (len(systems) - 1)]))}
        subtitle = (f"energy per month (kWh); in each month the pale bar is the {systems[0].lower()}, then "
                    + ", ".join(s[:1].lower() + s[1:] for s in systems[1:]))
    return alt.Chart(frame, title=alt.Title("Where the PV energy goes, month by month",
                                            subtitle=subtitle)).mark_bar().encode(
        x=alt.X("month_name:N", sort=list(MONTH_NAMES), title="Month", axis=alt.Axis(labelAngle=0)),
        y=alt.Y("sum(kwh):Q", title="Energy (kWh)", stack="zero"),
        color=alt.Color("destination:N", scale=_scale(palette.DESTINATION_COLOURS, frame["destination"]),
                        legend=_legend("Destination")),
        order=alt.Order("order:Q", sort="ascending"),
        tooltip=tooltip, **extra,
    ).properties(width=WIDTH, height=HEIGHT)


def _close_day(frame: pd.DataFrame) -> pd.DataFrame:
    """Repeat each series' last interval at 24 h so that a step line covers the whole day."""
    if frame.empty:
        return frame
    last = frame.loc[frame.groupby("series")["hour"].idxmax()].assign(hour=24.0)
    return pd.concat([frame, last], ignore_index=True)


def typical_day_chart(frame: pd.DataFrame, month_name: str) -> alt.LayerChart:
    """Mean powers over the day (W, left axis) and the battery SOC (%, right axis): frame from ``typical_day``."""
    frame = _close_day(frame)
    power = frame[frame["unit"] == "W"]
    soc = frame[frame["unit"] == "%"]
    colours = _scale(palette.SERIES_COLOURS, frame["series"])
    x = alt.X("hour:Q", title="Time of day (h, local standard time)", scale=alt.Scale(domain=[0, 24]),
              axis=alt.Axis(values=list(range(0, 25, 3))))
    dashed = ["Daytime base load", "Battery SOC", "What the panels could make"]
    lines = alt.Chart(power).mark_line(interpolate="step-after", strokeWidth=2).encode(
        x=x, y=alt.Y("value:Q", title="Power (W)"),
        color=alt.Color("series:N", scale=colours, legend=_legend("Series", columns=3)),
        strokeDash=alt.condition(alt.FieldOneOfPredicate(field="series", oneOf=dashed),
                                 alt.value([6, 4]), alt.value([1, 0])),
        tooltip=[alt.Tooltip("series:N", title="Series"), alt.Tooltip("hour:Q", title="Hour", format=".2f"),
                 alt.Tooltip("value:Q", title="Power (W)", format=",.0f")])
    layers = [lines]
    if not soc.empty:
        layers.append(alt.Chart(soc).mark_line(strokeDash=[6, 4], strokeWidth=2).encode(
            x=x, y=alt.Y("value:Q", title="Battery SOC (%)", scale=alt.Scale(domain=[0, 100])),
            color=alt.Color("series:N", scale=colours, legend=_legend("Series", columns=3)),
            tooltip=[alt.Tooltip("series:N", title="Series"), alt.Tooltip("value:Q", title="SOC (%)", format=".1f")]))
    chart = alt.layer(*layers, title=alt.Title(f"A typical day in {month_name}",
                                               subtitle="mean over the month's days: powers (W), battery SOC (%)"))
    if len(layers) > 1:
        chart = chart.resolve_scale(y="independent")
    return chart.properties(width=WIDTH, height=HEIGHT)


def surplus_map_chart(frame: pd.DataFrame) -> alt.Chart:
    """Month × hour map of mean AC-coupled output minus the daytime base load (W): frame from
    ``surplus_by_month_hour``. Hours without AC-coupled output are left blank; orange cells are hours where the
    output exceeds the base load."""
    frame = frame[frame["ac_w"] > 1.0]
    limit = float(max(frame["surplus_w"].abs().max(), 1.0)) if len(frame) else 1.0
    return alt.Chart(frame, title=alt.Title(
        "Does the AC-coupled output stay under the daytime base load?",
        subtitle="mean AC-coupled output minus the month's daytime base load (W); orange = above it, "
                 "blank = no output")).mark_rect().encode(
        x=alt.X("hour:O", title="Hour of day (h, local standard time)", scale=alt.Scale(domain=list(range(24))),
                axis=alt.Axis(labelAngle=0)),
        y=alt.Y("month_name:N", sort=list(MONTH_NAMES), scale=alt.Scale(domain=list(MONTH_NAMES)), title="Month",
                axis=alt.Axis(labelOverlap=False)),
        color=alt.Color("surplus_w:Q", title="Output − base load (W)",
                        scale=alt.Scale(scheme=palette.DIVERGING_SCHEME, domain=[-limit, limit], domainMid=0),
                        legend=alt.Legend(orient="right", gradientLength=240)),
        tooltip=[alt.Tooltip("month_name:N", title="Month"), alt.Tooltip("hour:O", title="Hour"),
                 alt.Tooltip("ac_w:Q", title="AC-coupled output (W)", format=",.0f"),
                 alt.Tooltip("reference_w:Q", title="Base load (W)", format=",.0f"),
                 alt.Tooltip("surplus_w:Q", title="Output − base load (W)", format=",.0f")],
    ).properties(width=WIDTH, height=470)


def surplus_duration_chart(frame: pd.DataFrame) -> alt.LayerChart:
    """Daylight-hours duration curve of AC-coupled output minus the load (W): frame from ``ac_surplus_duration``.
    The hours above zero are shaded."""
    top = float(frame["hours"].max()) if len(frame) else 1.0
    x = alt.X("hours:Q", title="Daylight hours of the year (h), highest surplus first",
              scale=alt.Scale(domain=[0, top], nice=False))
    # the question is the surplus: show all of it, and enough of the deficit to see where it turns; the curve
    # stops where it leaves the axis (a line held at the axis edge would look like data) and the subtitle says so
    high = float(frame["surplus_w"].max()) if len(frame) else 0.0
    lowest = float(frame["surplus_w"].min()) if len(frame) else 0.0
    low = max(lowest, -max(2.0 * max(high, 0.0), 500.0))
    shown = frame[frame["surplus_w"] >= low]
    y = alt.Y("surplus_w:Q", title="AC-coupled output − load (W)", scale=alt.Scale(domain=[low, max(high, 1.0)]))
    above = shown.assign(surplus_w=shown["surplus_w"].clip(lower=0.0))
    shade = alt.Chart(above).mark_area(color=palette.ORANGE, opacity=0.35).encode(x=x, y=y)
    curve = alt.Chart(shown).mark_line(color=palette.ORANGE, strokeWidth=2).encode(
        x=x, y=y, tooltip=[alt.Tooltip("hours:Q", title="Hours", format=",.0f"),
                           alt.Tooltip("surplus_w:Q", title="Output − load (W)", format=",.0f")])
    zero = alt.Chart(pd.DataFrame({"y": [0.0]})).mark_rule(color=palette.BLACK).encode(y="y:Q")
    subtitle = ["shaded: surplus that must go into the battery, be curtailed or leave the site (W)"]
    if lowest < low:
        cut = float(frame["hours"][frame["surplus_w"] < low].min())
        subtitle.append(f"the curve goes on below {low:,.0f} W from hour {cut:,.0f} on (not drawn: the loads "
                        f"take more than the output, down to {lowest:,.0f} W)")
    return alt.layer(shade, curve, zero, title=alt.Title(
        "How many daylight hours does the AC-coupled output exceed the load?", subtitle=subtitle)
    ).properties(width=WIDTH, height=HEIGHT)


def options_chart(frame: pd.DataFrame) -> alt.Chart:
    """Grouped bars of each option's change against the existing system (kWh/yr).

    ``frame`` columns: ``option`` (key, for the colour), ``label`` (the option in words), ``figure`` (label) and
    ``kwh``.
    """
    options = list(dict.fromkeys(frame["label"]))
    return alt.Chart(frame, title=alt.Title("The options side by side",
                                            subtitle="change against the existing system (kWh per year)")).mark_bar(
    ).encode(
        x=alt.X("figure:N", title=None, sort=list(dict.fromkeys(frame["figure"])),
                axis=alt.Axis(labelAngle=0, labelLimit=160)),
        xOffset=alt.XOffset("label:N", sort=options),
        y=alt.Y("kwh:Q", title="Change (kWh/yr)"),
        color=alt.Color("label:N", scale=option_scale(frame), legend=_legend("Option")),
        tooltip=[alt.Tooltip("label:N", title="Option"), alt.Tooltip("figure:N", title="Figure"),
                 alt.Tooltip("kwh:Q", title="Change (kWh/yr)", format=",.0f")],
    ).properties(width=WIDTH, height=HEIGHT)


def sweep_heatmap(frame: pd.DataFrame, *, x: str, x_title: str, value: str = "self_consumed_added_kwh",
                  value_title: str = "Added self-consumed energy (kWh/yr)", flag: str | None = "flag",
                  current: dict | None = None, failed: str | None = "failed_checks",
                  centre_zero: bool | None = None) -> alt.LayerChart:
    """Panel count × orientation heatmap of ``value``; cells with a non-empty ``flag`` get its letters.

    ``frame`` columns: ``count``, ``x``, ``value`` and optionally ``flag`` (short text such as "C" or "X") and
    ``failed`` (the rule ids an invalid cell breaks, shown in its tooltip). ``current`` ({"count": n, x: v})
    frames one cell, the setting in use. ``centre_zero`` colours on a diverging map centred on 0, for a value
    whose sign matters (an NPV: below zero the panels do not pay); by default it is on for ``value == "npv"``.
    """
    centre = (value == "npv") if centre_zero is None else centre_zero
    base = alt.Chart(frame).encode(
        x=alt.X(f"{x}:O", title=x_title, axis=alt.Axis(labelAngle=0)),
        y=alt.Y("count:O", title="Panels added", sort="descending"))
    tooltip = [alt.Tooltip("count:O", title="Panels added"), alt.Tooltip(f"{x}:O", title=x_title),
               alt.Tooltip(f"{value}:Q", title=value_title, format=",.0f")]
    if flag and flag in frame:
        tooltip.append(alt.Tooltip(f"{flag}:N", title="Marked"))
    if failed and failed in frame:
        tooltip.append(alt.Tooltip(f"{failed}:N", title="Set aside: breaks"))
    if centre:
        limit = float(max(frame[value].abs().max(), 1.0)) if len(frame) else 1.0
        scale = alt.Scale(scheme=palette.DIVERGING_SCHEME, domain=[-limit, limit], domainMid=0)
    else:
        scale = alt.Scale(scheme=palette.SEQUENTIAL_SCHEME)
    cells = base.mark_rect().encode(
        color=alt.Color(f"{value}:Q", title=value_title, scale=scale,
                        legend=alt.Legend(orient="right", gradientLength=220, titleLimit=260)),
        tooltip=tooltip)
    layers = [cells]
    if flag and flag in frame:
        marked = frame[frame[flag].fillna("").astype(str) != ""]
        if len(marked):
            where = dict(x=alt.X(f"{x}:O"), y=alt.Y("count:O", sort="descending"))
            # a white disc under a black letter stays readable on both ends of the colour map
            layers.append(alt.Chart(marked).mark_circle(size=320, color="white", opacity=0.9).encode(
                **where, tooltip=tooltip))
            layers.append(alt.Chart(marked).mark_text(fontSize=10, fontWeight="bold", color=palette.BLACK).encode(
                **where, text=alt.Text(f"{flag}:N"), tooltip=tooltip))
    if current is not None and current.get(x) in set(frame[x]) and current.get("count") in set(frame["count"]):
        layers.append(alt.Chart(pd.DataFrame([current])).mark_rect(fill=None, stroke=palette.BLACK,
                                                                  strokeWidth=2.5).encode(
            x=alt.X(f"{x}:O"), y=alt.Y("count:O", sort="descending")))
    return alt.layer(*layers, title=alt.Title(
        f"{value_title.split(' (')[0]} by panel count and {x_title.split(' (')[0].lower()}",
        subtitle="against the existing system; marked cells: see the legend below the chart")
    ).properties(width=WIDTH, height=HEIGHT)


def outage_chart(events: pd.DataFrame) -> alt.LayerChart:
    """One bar per outage: its length (h) and the part of it with unserved backed-up loads (h)."""
    frame = events.assign(label=[pd.Timestamp(s).strftime("%d %b %H:%M") for s in events["start"]])
    long = pd.concat([
        frame.assign(part="Outage length", h=frame["hours"]),
        frame.assign(part="Hours with unserved backed-up loads", h=frame["unserved_hours"]),
    ])
    colours = {"Outage length": palette.SKY_BLUE, "Hours with unserved backed-up loads": palette.VERMILLION}
    return alt.Chart(long, title=alt.Title("Riding through the year's grid outages",
                                           subtitle="per outage: length and hours with unserved backed-up loads (h)")
                     ).mark_bar().encode(
        x=alt.X("label:N", title="Outage start (local standard time)", sort=None, axis=alt.Axis(labelAngle=-30)),
        xOffset=alt.XOffset("part:N"),
        y=alt.Y("h:Q", title="Hours (h)"),
        color=alt.Color("part:N", scale=alt.Scale(domain=list(colours), range=list(colours.values())),
                        legend=_legend("")),
        tooltip=[alt.Tooltip("label:N", title="Start"), alt.Tooltip("hours:Q", title="Length (h)", format=".1f"),
                 alt.Tooltip("unserved_kwh:Q", title="Unserved (kWh)", format=".1f"),
                 alt.Tooltip("lowest_soc_pct:Q", title="Lowest SOC (%)", format=".1f")],
    ).properties(width=WIDTH, height=HEIGHT)


def outage_draws_chart(unserved_kwh, p50: float, p90: float) -> alt.Chart:
    """How many of the simulated outage years left how much backed-up load unserved; bars coloured by where they
    lie against the typical year (P50) and the one-in-ten year (P90)."""
    values = np.asarray(unserved_kwh, dtype=float)
    top = max(float(values.max()), 1e-3)
    counts, edges = np.histogram(values, bins=min(20, max(1, len(np.unique(values)))), range=(0.0, top))
    labels = [f"{lo:.1f}–{hi:.1f}" for lo, hi in zip(edges[:-1], edges[1:], strict=True)]
    kinds = ["up to the typical year (P50)", "between P50 and P90", "worse than one year in ten (P90)"]
    kind = [kinds[0] if lo < p50 or lo == 0 else kinds[1] if lo < p90 else kinds[2] for lo in edges[:-1]]
    frame = pd.DataFrame({"range": labels, "years": counts, "kind": kind})
    colours = dict(zip(kinds, [palette.BLUISH_GREEN, palette.ORANGE, palette.VERMILLION], strict=True))
    return alt.Chart(frame, title=alt.Title(
        "How much backed-up load could go unserved in a year?",
        subtitle=f"{values.size} independent years of random outages; grid-only loads, shed by design, not counted")
    ).mark_bar().encode(
        x=alt.X("range:N", sort=None, title="Backed-up load unserved in the year (kWh)",
                axis=alt.Axis(labelAngle=-30)),
        y=alt.Y("years:Q", title="Simulated outage years"),
        color=alt.Color("kind:N", scale=alt.Scale(domain=kinds, range=list(colours.values())), legend=_legend("")),
        tooltip=[alt.Tooltip("range:N", title="Unserved (kWh)"), alt.Tooltip("years:Q", title="Years")],
    ).properties(width=WIDTH, height=HEIGHT)
