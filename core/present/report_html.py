"""The standalone HTML report of one what-if: figures, charts as inline SVG, design checks and safety cautions.

One file, no scripts and nothing fetched at view time: the charts are the page's own Altair charts
(:mod:`core.present.charts`, over the tidy tables of :mod:`core.present.figures`) rendered to inline SVG with
vl-convert, so the report opens offline in any browser and prints.
"""

from __future__ import annotations

import datetime as dt
import html
import re
from collections.abc import Sequence

import pandas as pd
import vl_convert

from core.model.metrics import ENERGY_KEYS
from core.present import charts
from core.present import figures as fig
from core.present.safety import SAFETY_CAUTIONS

#: Readable names of the year's energy figures (the balance of docs/design.md §4, in report order).
ENERGY_LABELS = {
    "load": "Load", "load_served": "Load served", "unserved": "Unserved (outages)",
    "pv_potential": "PV potential (module DC)", "pv_potential_dc": "  DC-coupled arrays",
    "pv_potential_ac": "  AC-coupled arrays", "harvested": "PV harvested", "curtailed": "Curtailed",
    "curtailed_dc": "  DC-coupled", "curtailed_ac": "  AC-coupled", "clipped": "Clipped", "exported": "Exported",
    "exported_uncontrolled": "  uncontrolled", "grid_import": "Grid import", "grid_import_standing": "  while the standing draw was held",
    "battery_charge": "Battery charge", "battery_discharge": "Battery discharge", "losses": "Losses",
    "conversion_losses": "  conversion", "battery_losses": "  battery", "stored_change": "Stored energy change",
    "balance_error": "Balance error", "pv_direct": "PV used directly", "pv_to_battery": "PV into the battery",
    "ac_direct": "AC-coupled PV used directly",
    "unserved_backed_up": "  backed-up load unserved (a failure)", "shed_grid_only": "  grid-only load shed by design",
    "curtailed_limiter": "  AC: by the export limiter", "curtailed_frequency_watt": "  AC: by frequency-watt",
    "curtailed_relay": "  AC: relay open", "reconnect_wait": "  AC: waiting to reconnect",
}

#: Width of a chart in the report (px); the page's charts fill their container instead.
CHART_WIDTH = 720


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def chart_svg(chart, *, title: str) -> str:
    """One chart of :mod:`core.present.charts` as inline SVG: rendered offline by vl-convert (Vega's own renderer,
    no browser, nothing fetched), scaled to the page's width, with a title for screen readers."""
    svg = vl_convert.vegalite_to_svg(chart.properties(width=CHART_WIDTH).to_dict(validate=False))
    head, _, rest = svg.partition(">")
    # a fixed pixel size would overflow a narrow window or a printed page: keep the viewBox, let CSS size it
    head = re.sub(r'\s(width|height)="[^"]*"', "", head)
    if "xlink:" not in rest:  # an unused namespace name: fewer URLs in an offline file
        head = head.replace(' xmlns:xlink="http://www.w3.org/1999/xlink"', "")
    return f'{head} width="100%" role="img" aria-label="{_e(title)}"><title>{_e(title)}</title>{rest}'


# ------------------------------------------------------------------------------------------------- tables
def _table(header: Sequence[str], rows: Sequence[Sequence], classes: Sequence[str] | None = None,
           table_class: str = "") -> str:
    out = [f'<table class="{table_class}">' if table_class else "<table>", "<thead><tr>" + "".join(f"<th>{_e(h)}</th>" for h in header) + "</tr></thead>", "<tbody>"]
    for i, row in enumerate(rows):
        cls = f' class="{classes[i]}"' if classes and classes[i] else ""
        out.append(f"<tr{cls}>" + "".join(f"<td>{_e(c)}</td>" for c in row) + "</tr>")
    out.append("</tbody></table>")
    return "\n".join(out)


def _headline_rows(items: Sequence[fig.Headline]) -> tuple[list[list[str]], list[str]]:
    rows, classes = [], []
    for h in items:
        rows.append([h.label, fig.fmt_value(h.baseline, h.unit), fig.fmt_value(h.value, h.unit),
                     "—" if h.delta is None else fig.fmt_value(h.delta, h.unit, signed=True)])
        classes.append("alarm" if h.alarm_when_nonzero and (h.value or 0.0) >= 0.5 else "")
    return rows, classes


_CSS = """
body{font-family:system-ui,sans-serif;max-width:60rem;margin:2rem auto;padding:0 1rem;color:#1a1a1a;line-height:1.4}
h1{font-size:1.6rem;margin-bottom:.2rem} h2{font-size:1.2rem;margin-top:2rem;border-bottom:2px solid #0072B2}
table{border-collapse:collapse;margin:.5rem 0 1rem;font-size:.9rem} th,td{padding:.25rem .6rem;text-align:right}
th:first-child,td:first-child{text-align:left} thead th{border-bottom:1px solid #888} tbody tr:nth-child(odd){background:#f4f4f4}
tr.alarm td{background:#fbe3d6;color:#8a2c00;font-weight:bold}
table.text td,table.text th{text-align:left;vertical-align:top} table.text td:nth-child(4){font-size:.8rem;color:#555}
.status-pass{color:#006b4f;font-weight:bold} .status-warn{color:#8a5a00;font-weight:bold}
.status-fail{color:#a33b00;font-weight:bold}
.cautions{border-left:6px solid #D55E00;background:#fff4ec;padding:.5rem 1rem}
.meta{color:#555} figure{margin:1rem 0} svg{max-width:100%;height:auto}
"""


def report_html(sim, baseline, *, option_label: str, headline: Sequence[fig.Headline],
                more: Sequence[fig.Headline] = (), month: int | None = None,
                base_load_w: Sequence[float] | None = None, options: pd.DataFrame | None = None,
                verdict: str | None = None, checks: Sequence | None = None, settings: Sequence[tuple[str, str]] = (),
                today: dt.date | None = None, designs=None) -> str:
    """The report as one HTML document: no scripts, nothing fetched, charts as inline SVG.

    Parameters
    ----------
    sim, baseline : SimulationResult
        The option's year and the existing system's.
    option_label : str
        The option in words.
    headline, more : sequence of Headline
        The headline figures and the secondary ones (:func:`core.present.figures.headline_figures`).
    month : int, optional
        The month of the typical day, 1…12; the month of most PV output when not given.
    base_load_w : sequence of 12 float, optional
        Monthly daytime base loads, W.
    options : pandas.DataFrame, optional
        The options side by side as text (first column the figure, then one column per option).
    verdict : str, optional
        The verdict in words, shown with the options.
    checks : sequence, optional
        Design checks (objects with ``status``, ``id``, ``sentence``, ``source`` and ``caution``).
    settings : sequence of (str, str)
        The what-if settings in words.
    today : datetime.date, optional
        The report's date; today when not given.
    designs : dict, optional
        A design search's summary (:func:`core.analyses.design.report.search_summary`).

    Returns
    -------
    str
        The HTML document.
    """
    sc = sim.scenario
    today = today or dt.date.today()
    steps = sim.steps
    ac_month = (steps["ac_backed_out_w"] + steps["ac_grid_out_w"] + steps["dc_out_w"]).groupby(steps.index.month).sum()
    month = month or int(ac_month.idxmax())
    usable_wh = sc.battery.usable_kwh * 1000.0 if sc.battery else 0.0
    base_m = None if base_load_w is None else base_load_w[month - 1]

    parts = [f"<!DOCTYPE html><html lang=\"en\"><head><meta charset=\"utf-8\"><title>{_e(sc.name)} — what-if report"
             f"</title><style>{_CSS}</style></head><body>",
             f"<h1>{_e(sc.name)}: {_e(option_label)}</h1>",
             f'<p class="meta">secondroof what-if report, {today.isoformat()}. One simulated year at '
             f"{sim.site.step_s / 60:,.0f}-minute steps; weather: {_e(sim.site.weather.source)}.</p>",
             '<div class="cautions"><strong>Safety and limits.</strong><ul>'
             + "".join(f"<li>{_e(c)}</li>" for c in SAFETY_CAUTIONS) + "</ul></div>"]
    if settings:
        parts += ["<h2>Settings</h2>", _table(["Setting", "Value"], [list(s) for s in settings])]

    rows, classes = _headline_rows([*headline, *more])
    parts += ["<h2>Headline figures</h2>", _table(["Figure", "Existing system", option_label, "Change"], rows, classes)]

    if options is not None and len(options):
        parts += ["<h2>The options side by side</h2>"]
        if verdict:
            parts.append(f"<p><strong>{_e(verdict)}</strong></p>")
        parts.append(_table(list(options.columns), options.astype(str).to_numpy().tolist()))

    if designs is not None:
        parts += [f"<h2>{_e(designs['title'])}</h2>", f"<p>{_e(designs['counts'])}</p>",
                  "<ul>" + "".join(f"<li>{_e(r)}</li>" for r in designs["reasons"]) + "</ul>",
                  _table(designs["header"], designs["rows"])]

    dest = fig.pv_destinations_by_month(sim.results.months)
    parts += ["<h2>Where the PV energy goes</h2>", "<figure>" + chart_svg(
        charts.pv_destinations_chart(dest), title="Where the PV energy goes, month by month") + "</figure>"]
    table = dest.pivot_table(index="destination", columns="month", values="kwh", sort=False)
    parts.append(_table(["kWh", *fig.MONTH_NAMES, "Year"],
                        [[d, *[f"{v:,.0f}" for v in r], f"{sum(r):,.0f}"] for d, r in zip(table.index, table.to_numpy(),
                                                                                         strict=True)]))

    day = fig.typical_day(steps, month, usable_wh=usable_wh, base_load_w=base_m)
    month_name = fig.MONTH_FULL_NAMES[month - 1]
    parts += ["<h2>A typical day</h2>", "<figure>" + chart_svg(
        charts.typical_day_chart(day, month_name), title=f"A typical day in {month_name}") + "</figure>"]

    if float((steps["ac_backed_out_w"] + steps["ac_grid_out_w"]).max()) > 0:
        surplus = fig.surplus_by_month_hour(steps, None if base_load_w is None else list(base_load_w))
        parts += ["<h2>AC-coupled output against the daytime base load</h2>", "<figure>" + chart_svg(
            charts.surplus_map_chart(surplus), title="Does the AC-coupled output stay under the daytime base load?")
            + "</figure>"]

    if checks is not None:
        parts.append("<h2>Design checks</h2>")
        if len(checks):
            rows = [[c.status.upper(), getattr(c, "subject", "") or c.id, c.sentence, c.source] for c in checks]
            parts.append(_table(["Result", "Check", "Finding", "Source"], rows, table_class="text").replace(
                "<td>PASS</td>", '<td class="status-pass">PASS</td>').replace(
                "<td>WARN</td>", '<td class="status-warn">WARN</td>').replace(
                "<td>FAIL</td>", '<td class="status-fail">FAIL</td>'))
            cautions = sorted({c.caution for c in checks if getattr(c, "caution", None)})
            if cautions:
                parts.append('<div class="cautions"><ul>' + "".join(f"<li>{_e(c)}</li>" for c in cautions)
                             + "</ul></div>")
        else:
            parts.append("<p>No checks apply to this setting.</p>")

    events = fig.outage_events(steps, sim.site.dt_h, usable_wh)
    parts.append("<h2>Grid outages</h2>")
    if events.empty:
        parts.append("<p>No grid outages in this setting.</p>")
    else:
        parts.append(_table(["Start (local standard time)", "Length (h)", "Backed-up unserved (kWh)",
                             "Backed-up unserved (h)", "Lowest SOC (%)"],
                            [[r.start.strftime("%d %b %H:%M"), f"{r.hours:.1f}", f"{r.unserved_kwh:.1f}",
                              f"{r.unserved_hours:.1f}", f"{r.lowest_soc_pct:.1f}"] for r in events.itertuples()]))

    e, eb = sim.results.energy_kwh, baseline.results.energy_kwh
    parts += ["<h2>Energy balance of the year</h2>",
              _table(["kWh per year", "Existing system", option_label],
                     [[ENERGY_LABELS.get(k, k), _kwh(eb[k], k), _kwh(e[k], k)] for k in ENERGY_KEYS]),
              "<p class=\"meta\">module DC potential + grid import = loads served + export + curtailed + clipped + "
              "conversion losses + battery losses + stored change. The step-by-step results are in the CSV download."
              "</p>", "</body></html>"]
    return "\n".join(parts)


def _kwh(x: float, key: str) -> str:
    return f"{x:.2e}" if key == "balance_error" else f"{x:,.0f}"
