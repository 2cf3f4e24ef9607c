"""The standalone HTML report of one what-if: figures, charts as inline SVG, design checks and safety cautions.

One file, no scripts and nothing fetched at view time: the charts are SVG drawn here from the same tidy tables
(:mod:`core.present.figures`) that the explorer draws with Altair, so the report opens offline in any browser and prints.
"""

from __future__ import annotations

import datetime as dt
import html
import math
from collections.abc import Sequence

import numpy as np
import pandas as pd

from core.model.metrics import ENERGY_KEYS
from core.present import figures as fig
from core.present.safety import SAFETY_CAUTIONS

#: Readable names of the year's energy figures (the balance of DESIGN.md §5, in report order).
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

_W, _H = 760, 300
_M = {"left": 64, "right": 64, "top": 44, "bottom": 70}


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def nice_ticks(lo: float, hi: float, n: int = 5) -> list[float]:
    """Round tick values covering [lo, hi] (steps of 1, 2 or 5 × a power of ten)."""
    if not (math.isfinite(lo) and math.isfinite(hi)) or hi <= lo:
        hi = lo + 1.0
    raw = (hi - lo) / max(n, 1)
    mag = 10 ** math.floor(math.log10(raw))
    step = next(m * mag for m in (1, 2, 5, 10) if m * mag >= raw)
    start = math.floor(lo / step) * step
    ticks = []
    t = start
    while t <= hi + step * 1e-9:
        ticks.append(round(t, 10))
        t += step
    if ticks[-1] < hi:
        ticks.append(ticks[-1] + step)
    return ticks


def _frame_svg(body: list[str], title: str, subtitle: str, legend: Sequence[tuple[str, str, bool]] = (),
               height: int = _H) -> str:
    """The SVG around a plot: title, subtitle and a legend in words (label, colour, dashed)."""
    # lay the legend out first: it may need more than one row
    placed, x, row = [], _M["left"], 0
    for label, colour, dashed in legend:
        width = 30 + 6.2 * len(label)
        if x + width > _W - 8 and x > _M["left"]:
            x, row = _M["left"], row + 1
        placed.append((x, row, label, colour, dashed))
        x += width
    total = height + 16 * row
    out = [f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {_W} {total}" width="100%" role="img" '
           f'aria-label="{_e(title)}" font-family="sans-serif" font-size="11">',
           f"<title>{_e(title)}</title>",
           f'<text x="{_M["left"]}" y="16" font-size="14" font-weight="bold">{_e(title)}</text>',
           f'<text x="{_M["left"]}" y="32" fill="#444">{_e(subtitle)}</text>', *body]
    for x, row, label, colour, dashed in placed:
        y = height - 14 + 16 * row
        dash = ' stroke-dasharray="6 4"' if dashed else ""
        out.append(f'<line x1="{x}" y1="{y - 4}" x2="{x + 18}" y2="{y - 4}" stroke="{colour}" stroke-width="6"{dash}/>')
        out.append(f'<text x="{x + 22}" y="{y}">{_e(label)}</text>')
    out.append("</svg>")
    return "\n".join(out)


def _y_axis(ticks: list[float], y_of, title: str, *, right: bool = False, fmt: str = "{:,.0f}") -> list[str]:
    x = _W - _M["right"] if right else _M["left"]
    anchor, dx = ("start", 6) if right else ("end", -6)
    out = []
    for t in ticks:
        y = y_of(t)
        if not right:
            out.append(f'<line x1="{_M["left"]}" x2="{_W - _M["right"]}" y1="{y:.1f}" y2="{y:.1f}" stroke="#ddd"/>')
        out.append(f'<text x="{x + dx}" y="{y + 4:.1f}" text-anchor="{anchor}">{_e(fmt.format(t))}</text>')
    mid = (_M["top"] + _H - _M["bottom"]) / 2
    tx = _W - 14 if right else 14
    out.append(f'<text transform="translate({tx},{mid:.0f}) rotate(-90)" text-anchor="middle">{_e(title)}</text>')
    return out


def svg_stacked_bars(frame: pd.DataFrame, colours: dict[str, str], *, title: str, subtitle: str,
                     y_title: str) -> str:
    """Monthly stacked bars from a ``pv_destinations_by_month`` frame."""
    table = frame.pivot_table(index="month", columns="destination", values="kwh", aggfunc="sum", sort=False)
    series = [s for s in colours if s in table.columns]
    totals = table[series].sum(axis=1) if series else pd.Series(dtype=float)
    ticks = nice_ticks(0.0, float(totals.max()) if len(totals) else 1.0)
    top, bottom = _M["top"], _H - _M["bottom"]

    def y_of(v: float) -> float:
        return bottom - (v / ticks[-1]) * (bottom - top)

    body = _y_axis(ticks, y_of, y_title)
    band = (_W - _M["left"] - _M["right"]) / 12
    for i, month in enumerate(range(1, 13)):
        x = _M["left"] + i * band + band * 0.15
        acc = 0.0
        for s in series:
            v = float(table.at[month, s]) if month in table.index else 0.0
            if v > 0:
                body.append(f'<rect x="{x:.1f}" y="{y_of(acc + v):.1f}" width="{band * 0.7:.1f}" '
                            f'height="{y_of(acc) - y_of(acc + v):.1f}" fill="{colours[s]}">'
                            f"<title>{_e(fig.MONTH_NAMES[month - 1])}: {_e(s)} {v:,.0f} kWh</title></rect>")
            acc += v
        body.append(f'<text x="{x + band * 0.35:.1f}" y="{bottom + 14}" text-anchor="middle">'
                    f"{fig.MONTH_NAMES[month - 1]}</text>")
    return _frame_svg(body, title, subtitle, [(s, colours[s], False) for s in series])


def svg_lines(frame: pd.DataFrame, colours: dict[str, str], *, title: str, subtitle: str, y_title: str,
              y2_title: str = "Battery SOC (%)", dashed: Sequence[str] = ("Daytime base load", "Battery SOC")) -> str:
    """Lines over the hours of a day from a ``typical_day`` frame; the "%" series on a right-hand axis."""
    power = frame[frame["unit"] == "W"]
    pct = frame[frame["unit"] == "%"]
    top, bottom = _M["top"], _H - _M["bottom"]
    ticks = nice_ticks(0.0, float(power["value"].max()) if len(power) else 1.0)

    def x_of(h: float) -> float:
        return _M["left"] + h / 24.0 * (_W - _M["left"] - _M["right"])

    def y_of(v: float) -> float:
        return bottom - v / ticks[-1] * (bottom - top)

    def y2_of(v: float) -> float:
        return bottom - v / 100.0 * (bottom - top)

    body = _y_axis(ticks, y_of, y_title)
    if len(pct):
        body += _y_axis([0, 25, 50, 75, 100], y2_of, y2_title, right=True)
    for h in range(0, 25, 3):
        body.append(f'<text x="{x_of(h):.1f}" y="{bottom + 14}" text-anchor="middle">{h:02d}:00</text>')
    body.append(f'<text x="{(_M["left"] + _W - _M["right"]) / 2}" y="{bottom + 30}" text-anchor="middle">'
                "Time of day (h, local standard time)</text>")
    legend = []
    for name in [s for s in colours if s in set(frame["series"])]:
        part = frame[frame["series"] == name].sort_values("hour")
        scale = y2_of if (part["unit"] == "%").all() else y_of
        points = " ".join(f"{x_of(h):.1f},{scale(v):.1f}" for h, v in zip(part["hour"], part["value"], strict=True))
        dash = ' stroke-dasharray="6 4"' if name in dashed else ""
        body.append(f'<polyline points="{points}" fill="none" stroke="{colours[name]}" stroke-width="2"{dash}>'
                    f"<title>{_e(name)}</title></polyline>")
        legend.append((name, colours[name], name in dashed))
    return _frame_svg(body, title, subtitle, legend)


def _diverging(v: float, limit: float) -> str:
    """Blue (under) through near-white to orange (over), as the explorer's map."""
    lo, mid, hi = np.array([0, 114, 178]), np.array([247, 247, 247]), np.array([230, 159, 0])
    t = max(-1.0, min(1.0, v / limit)) if limit > 0 else 0.0
    rgb = mid + (hi - mid) * t if t >= 0 else mid + (lo - mid) * -t
    return "#" + "".join(f"{int(round(c)):02x}" for c in rgb)


def svg_heatmap(frame: pd.DataFrame, *, title: str, subtitle: str) -> str:
    """Month × hour map of ``surplus_w`` from a ``surplus_by_month_hour`` frame."""
    height = _H + 40
    top, bottom = _M["top"], height - _M["bottom"]
    lit = frame[frame["ac_w"] > 1.0]
    limit = float(max(lit["surplus_w"].abs().max(), 1.0)) if len(lit) else 1.0
    cw = (_W - _M["left"] - _M["right"]) / 24
    ch = (bottom - top) / 12
    body = []
    body.append(f'<rect x="{_M["left"]}" y="{top}" width="{24 * cw:.1f}" height="{12 * ch:.1f}" fill="#eeeeee"/>')
    for row in frame.itertuples(index=False):
        if row.ac_w <= 1.0:  # no AC-coupled output: left blank, as in the explorer
            continue
        x = _M["left"] + row.hour * cw
        y = top + (row.month - 1) * ch
        body.append(f'<rect x="{x:.1f}" y="{y:.1f}" width="{cw + 0.3:.1f}" height="{ch + 0.3:.1f}" '
                    f'fill="{_diverging(row.surplus_w, limit)}"><title>{row.month_name} {row.hour:02d}:00: '
                    f"output {row.ac_w:,.0f} W, base load {row.reference_w:,.0f} W</title></rect>")
    for m in range(12):
        body.append(f'<text x="{_M["left"] - 6}" y="{top + (m + 0.65) * ch:.1f}" text-anchor="end">'
                    f"{fig.MONTH_NAMES[m]}</text>")
    for h in range(0, 24, 3):
        body.append(f'<text x="{_M["left"] + (h + 0.5) * cw:.1f}" y="{bottom + 14}" text-anchor="middle">{h:02d}</text>')
    body.append(f'<text x="{(_M["left"] + _W - _M["right"]) / 2}" y="{bottom + 30}" text-anchor="middle">'
                "Hour of day (h, local standard time)</text>")
    legend = [(f"{-limit:,.0f} W: under the base load", _diverging(-limit, limit), False),
              ("0 W", _diverging(0.0, limit), False),
              (f"+{limit:,.0f} W: above it", _diverging(limit, limit), False),
              ("no AC-coupled output", "#eeeeee", False)]
    return _frame_svg(body, title, subtitle, legend, height=height)


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
                today: dt.date | None = None) -> str:
    """The report as one HTML document.

    ``sim`` and ``baseline`` are :class:`core.simulate.SimulationResult` of the option and of the existing system;
    ``options`` a table of the options side by side (first column the figure, then one column per option);
    ``checks`` design checks (objects with ``status``, ``id``, ``sentence``, ``source`` and ``caution``).
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

    dest = fig.pv_destinations_by_month(sim.results.months)
    parts += ["<h2>Where the PV energy goes</h2>", "<figure>" + svg_stacked_bars(
        dest, fig.DESTINATION_COLOURS, title="Where the PV energy goes, month by month",
        subtitle="energy per month (kWh)", y_title="Energy (kWh)") + "</figure>"]
    table = dest.pivot_table(index="destination", columns="month", values="kwh", sort=False)
    parts.append(_table(["kWh", *fig.MONTH_NAMES, "Year"],
                        [[d, *[f"{v:,.0f}" for v in r], f"{sum(r):,.0f}"] for d, r in zip(table.index, table.to_numpy(),
                                                                                         strict=True)]))

    day = fig.typical_day(steps, month, usable_wh=usable_wh, base_load_w=base_m)
    parts += ["<h2>A typical day</h2>", "<figure>" + svg_lines(
        day, fig.SERIES_COLOURS, title=f"A typical day in {fig.MONTH_FULL_NAMES[month - 1]}",
        subtitle="mean over the month's days: powers (W), battery SOC (%)", y_title="Power (W)") + "</figure>"]

    if float((steps["ac_backed_out_w"] + steps["ac_grid_out_w"]).max()) > 0:
        surplus = fig.surplus_by_month_hour(steps, base_load_w)
        parts += ["<h2>AC-coupled output against the daytime base load</h2>", "<figure>" + svg_heatmap(
            surplus, title="Does the AC-coupled output stay under the daytime base load?",
            subtitle="mean AC-coupled output minus the month's daytime base load (W); grey: no output")
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
