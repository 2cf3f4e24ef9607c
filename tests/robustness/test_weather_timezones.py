"""A complete TMY3 year is never refused for the site's time zone: whatever the offset between the file's zone
and the site's, every hour of the year is placed (pvlib's Greensboro and Sand Point TMY3 files, NREL)."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pytest

from core.model.weather import read_weather_file
from tests.robustness.common import PVLIB_DATA


@pytest.mark.parametrize("name, file_hours", [("723170TYA.CSV", -5), ("703165TY.csv", -9)])
@pytest.mark.parametrize("delta_h", [-3, -2, -1, 0, 1, 2, 3])
def test_every_site_offset_keeps_the_whole_year(name, file_hours, delta_h):
    own = read_weather_file(PVLIB_DATA / name)
    tz = dt.timezone(dt.timedelta(hours=file_hours + delta_h))
    moved = read_weather_file(PVLIB_DATA / name, tz=tz)
    assert len(moved.data) == 8760 and moved.data.notna().all().all()
    # Nothing lost or invented: the same hours, moved by the offset difference around the year.
    np.testing.assert_allclose(np.sort(moved.data["ghi"].to_numpy()), np.sort(own.data["ghi"].to_numpy()))
    np.testing.assert_allclose(moved.data["ghi"].to_numpy(), np.roll(own.data["ghi"].to_numpy(), delta_h))
