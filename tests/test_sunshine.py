"""Synthetic minutes (core.model.sunshine): hourly means kept, variability by cloudiness."""

import numpy as np
import pandas as pd
import pvlib
import pytest

from core.model import sunshine


def _day(ghi_hourly, seed=3):
    # Greensboro NC (NREL TMY3 site in pvlib's data) on 21 June, clear sky by Ineichen & Perez as pvlib ships it.
    loc = pvlib.location.Location(36.1, -79.95, tz="Etc/GMT+5", altitude=270)
    fine = pd.date_range("2021-06-21", periods=24 * 60, freq="1min", tz=loc.tz)
    cs = loc.get_clearsky(fine + pd.Timedelta(seconds=30))
    sun = loc.get_solarposition(fine + pd.Timedelta(seconds=30))
    cs_ghi = cs["ghi"].to_numpy()
    ghi_h = np.asarray(ghi_hourly, float) if ghi_hourly is not None else cs_ghi.reshape(24, 60).mean(axis=1)
    dhi_h = 0.3 * ghi_h
    out = sunshine.synthetic_irradiance(ghi_h, dhi_h, cs_ghi, sun["zenith"].to_numpy(), fine, per_interval=60,
                                        step_s=60, seed=seed)
    return out, cs_ghi, ghi_h


def test_every_hour_keeps_its_mean():
    cs_day = _day(None)[1].reshape(24, 60).mean(axis=1)
    for share in (1.0, 0.6, 0.15):
        out, _, ghi_h = _day(cs_day * share)
        np.testing.assert_allclose(out["ghi"].reshape(24, 60).mean(axis=1), ghi_h, rtol=0, atol=1e-9)
        assert np.all(out["dhi"] <= out["ghi"] + 1e-9) and np.all(out["dni"] >= 0)


def test_seeded_and_reproducible():
    cs_day = _day(None)[1].reshape(24, 60).mean(axis=1)
    a, b = _day(cs_day * 0.6, seed=7)[0], _day(cs_day * 0.6, seed=7)[0]
    assert np.array_equal(a["ghi"], b["ghi"])
    assert not np.array_equal(a["ghi"], _day(cs_day * 0.6, seed=8)[0]["ghi"])


def test_variability_grows_with_broken_cloud():
    # Stein, Hansen & Reno (2012): the variability index is near 1 on clear days and well above 5 under broken
    # cloud (from memory); an overcast day is dull but steady, far below a broken-cloud day.
    cs_day = _day(None)[1].reshape(24, 60).mean(axis=1)
    vi = {}
    for name, share in (("clear", 1.0), ("overcast", 0.15), ("broken", 0.6)):
        out, cs, _ = _day(cs_day * share)
        vi[name] = sunshine.variability_index(out["ghi"], cs)
    assert vi["clear"] == pytest.approx(1.0, abs=0.5)
    assert vi["broken"] > 5.0
    assert vi["overcast"] < vi["broken"] / 3
