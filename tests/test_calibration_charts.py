"""The calibration view's chart builders: valid Vega-Lite, titles and units, and tables that say what they show."""

from __future__ import annotations

import datetime as dt

import pandas as pd
import pytest
from calibration_synthetic import make_record
from test_calibration import site_with

from core.analyses.calibration import calibrate
from core.present import calibration_charts as cc
from core.scenario import load_scenario

TZ = dt.timezone(dt.timedelta(hours=-5))


@pytest.fixture(scope="module")
def cal(tmp_path_factory):
    truth = make_record("2023-05-01", 14, losses_pct=12.0, standing_draw_w=40.0, seed=4, clear_share=0.6)
    return calibrate(load_scenario(site_with(tmp_path_factory.mktemp("charts"), truth.frame)))


def test_daily_scatter(cal):
    points = cc.daily_points(cal.daily)
    assert set(points["model"]) == {"model before the fit", "model after the fit"}
    assert len(points) == 2 * cal.daily["measured_kwh"].notna().sum()
    spec = cc.daily_scatter(cal.daily, "clear sky").to_dict()  # validated against the Vega-Lite schema
    assert "day by day" in str(spec["title"])
    assert "kWh per day" in str(spec)


def test_timeseries_shades_every_excluded_interval(cal):
    spans = cc.excluded_spans(cal.intervals, TZ, cal.record.step_s)
    covered = pd.Timedelta(0)
    for start, end in zip(spans["start"], spans["end"], strict=True):
        covered += end - start
    excluded = (cal.intervals["excluded"] != "").sum()
    assert covered == pd.Timedelta(seconds=int(excluded) * cal.record.step_s)
    assert set(spans["reason"]) <= set(cc.REASON_WORDS.values())
    spec = cc.timeseries_chart(cal.intervals, TZ, cal.record.step_s).to_dict()
    assert "W, hourly mean" in str(spec)
    hourly = cc.hourly_series(cal.intervals, TZ)
    assert set(hourly["series"]) == {"measured", "model after the fit"}
