"""Every view of the explorer at a one-minute step: charts aggregate before drawing (Altair refuses more than
5,000 rows inline), so no view breaks for a one-minute simulation."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
from streamlit.testing.v1 import AppTest

from explorer.views.day import MAX_CHART_ROWS, aggregate_day
from tests.robustness.common import ROOT, copy_site

APP = str(ROOT / "explorer" / "app.py")


def _minute_site(tmp_path) -> Path:
    site = copy_site("red_dune", tmp_path)  # its load is measured every minute
    path = site / "scenario.toml"
    text = path.read_text(encoding="utf-8")
    if "[simulation]" in text:
        text = text.replace("[simulation]", "[simulation]\nstep_s = 60", 1)
    else:
        text += "\n[simulation]\nstep_s = 60\n"
    path.write_text(text, encoding="utf-8")
    return path


def test_every_view_draws_at_one_minute(tmp_path, monkeypatch):
    monkeypatch.setenv("SECONDROOF_SCENARIO", str(_minute_site(tmp_path)))
    at = AppTest.from_file(APP, default_timeout=600)
    at.run()
    assert not at.exception, [e.value for e in at.exception]
    assert not at.error, [e.value for e in at.error]


def test_a_minute_day_is_aggregated_below_the_row_limit():
    # 1,440 one-minute means for six series: 8,640 rows, above the 5,000 Altair takes inline.
    hours = np.arange(1440) / 60.0
    series = ["All loads", "Backed-up loads", "AC-coupled PV output", "DC-coupled PV output", "Daytime base load",
              "Battery SOC"]
    frame = pd.DataFrame([(h, s, float(np.sin(h)), "%" if s == "Battery SOC" else "W")
                          for s in series for h in hours], columns=["hour", "series", "value", "unit"])
    small = aggregate_day(frame)
    assert len(small) <= MAX_CHART_ROWS
    # Means of equal-length bins keep the day's mean of every series.
    for name in series:
        np.testing.assert_allclose(small[small.series == name]["value"].mean(),
                                   frame[frame.series == name]["value"].mean(), rtol=1e-9)
    assert aggregate_day(small).equals(small)  # already small: unchanged
