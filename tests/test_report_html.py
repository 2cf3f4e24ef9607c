"""The standalone HTML report: complete, offline, well-formed, escaped, and drawn to scale."""

from __future__ import annotations

import dataclasses
import re
import xml.etree.ElementTree as ET
from html.parser import HTMLParser
from pathlib import Path

import pandas as pd
import pytest

from core.analyses.options import with_option
from core.present import charts, figures, report_html
from core.scenario import load_scenario
from core.simulate import OrientationCache, prepare_site, simulate

ROOT = Path(__file__).resolve().parent.parent
MAPLE = ROOT / "sample_sites" / "maple_hollow" / "scenario.toml"
SVG = re.compile(r"<svg .*?</svg>", re.S)


@pytest.fixture(scope="module")
def sims():
    sc = load_scenario(MAPLE)
    sc = dataclasses.replace(sc, name='Maple <Hollow> & "Co"')  # markup in a name must come out as text
    site, cache = prepare_site(sc), OrientationCache()
    return simulate(with_option(sc, "ac_backed_up"), site, cache), simulate(sc, site, cache)


class _Collector(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.tags: list[str] = []
        self.attrs: list[tuple[str, str | None]] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        self.attrs += attrs

    def handle_data(self, data):
        self.text.append(data)


def _report(sims, **kwargs) -> str:
    sim, base = sims
    head = figures.headline_figures(sim.results, base.results, payback_years=7.26)
    return report_html.report_html(sim, base, option_label="AC-coupled, backed-up side", headline=head,
                                   base_load_w=[300.0] * 12, month=6, **kwargs)


def test_report_is_offline_and_carries_every_caution(sims):
    text = _report(sims)
    p = _Collector()
    p.feed(text)
    assert "script" not in p.tags and "link" not in p.tags and "img" not in p.tags
    # nothing to fetch: the only URL is the SVG namespace name, which browsers never load
    urls = set(re.findall(r"https?://[^\s\"'<>]+", text))
    assert urls <= {"http://www.w3.org/2000/svg"}
    assert not [v for k, v in p.attrs if k in ("src", "href")]
    body = " ".join(p.text)
    for caution in report_html.SAFETY_CAUTIONS:  # docs/design.md §6
        assert caution in body


def test_report_holds_the_figures_and_escapes_names(sims):
    sim, base = sims
    text = _report(sims)
    assert "Maple &lt;Hollow&gt; &amp; &quot;Co&quot;" in text and "<Hollow>" not in text
    e, b = sim.results.energy_kwh, base.results.energy_kwh
    # the headline table holds both years' figures as the page formats them
    assert figures.fmt_kwh(e["curtailed"]) in text and figures.fmt_kwh(b["curtailed"]) in text
    assert figures.fmt_kwh(e["grid_import"] - b["grid_import"], signed=True) in text
    assert "7.3 years" in text  # payback, one decimal
    for heading in ("Headline figures", "Where the PV energy goes", "A typical day", "Energy balance of the year",
                    "Grid outages", "against the daytime base load"):
        assert heading in text


def test_every_svg_is_well_formed_with_a_title(sims):
    svgs = SVG.findall(_report(sims))
    assert len(svgs) == 3  # monthly bars, typical day, base-load map
    for svg in svgs:
        root = ET.fromstring(svg)
        assert root.find("{http://www.w3.org/2000/svg}title").text


def test_options_table_verdict_and_checks_appear(sims):
    from core.analyses.checks.common import Check

    checks = [Check("strings.voc_cold", "fail", 162.0, 150.0, "V", "Too many modules in series for the cold.",
                    "NFPA 70 (NEC) 690.7(A)(1)", caution="DC strings can arc."),
              Check("micro.power", "pass", 410.0, 450.0, "W", "Within the microinverter's input.", "common practice")]
    options = pd.DataFrame({"Against the existing system": ["More to the loads from PV (kWh/yr)"],
                            "DC-coupled": ["+428 kWh"]})
    text = _report(sims, checks=checks, options=options, verdict="On energy, DC-coupled wins.")
    assert '<td class="status-fail">FAIL</td>' in text and '<td class="status-pass">PASS</td>' in text
    assert "DC strings can arc." in text
    assert "+428 kWh" in text and "On energy, DC-coupled wins." in text


def test_report_charts_are_the_pages_charts_drawn_to_scale():
    # One definition per figure: the report renders the page's Altair builder (core.present.charts) to SVG.
    frame = figures.pv_destinations_by_month(
        [{"month": m, "pv_direct": 100.0 if m == 1 else 50.0, "pv_to_battery": 0.0, "curtailed": 0.0,
          "clipped": 0.0, "exported": 0.0} for m in range(1, 13)])
    svg = report_html.chart_svg(charts.pv_destinations_chart(frame), title="Where the PV energy goes")
    root = ET.fromstring(svg)
    assert root.find("{http://www.w3.org/2000/svg}title").text == "Where the PV energy goes"
    assert root.get("width") == "100%" and root.get("height") is None and root.get("viewBox")
    direct = figures.DESTINATION_COLOURS["Used directly by the loads"]
    heights = [float(h) for h in re.findall(rf'aria-roledescription="bar" d="M[-\d.]+,[-\d.]+h[\d.]+v([\d.]+)h[-\d.]+Z" fill="{direct}"', svg)]
    assert len(heights) == 12
    assert heights[0] == pytest.approx(2 * heights[1], rel=1e-2)  # 100 kWh is twice 50 kWh
    assert "Energy (kWh)" in svg and "Used directly by the loads" in svg
