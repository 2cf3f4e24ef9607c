"""The sweep heatmap can show NPV: a diverging colour map centred on zero, and the rule an invalid cell breaks.

Colours: Okabe & Ito, "Color Universal Design" (2008) for the palette, Vega's "blueorange" diverging scheme for
signed values (from memory: both colour-blind safe).
"""

from __future__ import annotations

import pandas as pd

from core.present import figures
from explorer import charts


def _spec(chart) -> dict:
    return chart.to_dict()


def test_sweep_heatmap_can_show_npv_centred_on_zero_and_names_the_broken_rule():
    # NPV changes sign where the panels stop paying: a diverging map centred on 0 (blue below, orange above)
    # keeps "does not pay" apart from "pays" (common practice for signed quantities).
    frame = pd.DataFrame({"count": [0, 1, 2, 3], "azimuth_deg": [180] * 4, "npv": [0.0, 350.0, 120.0, -480.0],
                          "flag": ["", "", "X", "C1"],
                          "failed_checks": ["", "", "ac_coupling.uncontrolled_export", "strings.vmp_hot"]})
    spec = _spec(charts.sweep_heatmap(frame, x="azimuth_deg", x_title="Azimuth (°)", value="npv",
                                      value_title="NPV (USD)"))
    colour = spec["layer"][0]["encoding"]["color"]
    assert colour["field"] == "npv" and colour["title"] == "NPV (USD)"
    assert colour["scale"]["domainMid"] == 0 and colour["scale"]["domain"] == [-480.0, 480.0]
    assert colour["scale"]["scheme"] == figures.DIVERGING_SCHEME
    tips = {t["field"]: t["title"] for t in spec["layer"][0]["encoding"]["tooltip"]}
    assert tips["failed_checks"] == "Set aside: breaks"
    texts = spec["datasets"][spec["layer"][2]["data"]["name"]]
    assert sorted(r["flag"] for r in texts) == ["C1", "X"]
    # an energy value keeps the sequential map
    energy = _spec(charts.sweep_heatmap(frame.assign(self_consumed_added_kwh=[0, 1, 2, 3]), x="azimuth_deg",
                                        x_title="Azimuth (°)"))
    assert energy["layer"][0]["encoding"]["color"]["scale"]["scheme"] == figures.SEQUENTIAL_SCHEME
