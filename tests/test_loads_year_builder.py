"""Building the nominal year from a measured load record (method: core/model/loads/year_builder.py docstring).

The records are invented here with known monthly totals, so the bill checks are by construction; calendar
facts (weekdays, leap days, month lengths) come from Python's datetime and pandas as the reference.
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pytest

from core.errors import InputError
from core.model.loads import build_year, read_load_csv
from core.timebase import NOMINAL_YEAR, nominal_index

SITE_TZ = dt.timezone(dt.timedelta(hours=1))  # a site on UTC+01:00 standard time


def seasonal_power_w(index: pd.DatetimeIndex) -> np.ndarray:
    """Invented household with winter heating, a daily shape and a weekend lift."""
    local = index.tz_convert(SITE_TZ)
    doy = local.day_of_year.to_numpy()
    hour = local.hour.to_numpy() + local.minute.to_numpy() / 60.0
    season = 1.0 + 0.6 * np.cos(2 * np.pi * (doy - 15) / 365.0)
    shape = 250.0 + 350.0 * np.exp(-((hour - 19.0) / 2.5) ** 2) + 200.0 * np.exp(-((hour - 7.5) / 1.2) ** 2)
    weekend = np.where(local.day_of_week.to_numpy() >= 5, 1.25, 1.0)
    return season * shape * weekend


def record(start: str, end: str, step: str = "15min") -> pd.Series:
    index = pd.date_range(pd.Timestamp(start, tz=SITE_TZ), pd.Timestamp(end, tz=SITE_TZ), freq=step,
                          inclusive="left").tz_convert("UTC")
    return pd.Series(seasonal_power_w(index), index=index)


def monthly_kwh(series: pd.Series) -> np.ndarray:
    local = series.tz_convert(SITE_TZ)
    step_h = (series.index[1] - series.index[0]).total_seconds() / 3600.0
    return (local * step_h / 1000.0).groupby(local.index.month).sum().reindex(range(1, 13)).to_numpy()


def test_full_year_passes_through_unchanged():
    measured = record("2019-01-01", "2020-01-01")  # 2019 is not a leap year
    year, report = build_year(measured, step_s=900, tz=SITE_TZ)
    assert year.index.equals(nominal_index(900, SITE_TZ))
    np.testing.assert_array_equal(year.to_numpy(), measured.to_numpy())
    assert report.measured_days == 365 and report.filled_days == 0 and report.partial_days == 0

    hourly, _ = build_year(measured, step_s=3600, tz=SITE_TZ)
    # Coarser step: interval means (four quarter hours per hour, computed independently here).
    np.testing.assert_allclose(hourly.to_numpy(), measured.to_numpy().reshape(-1, 4).mean(axis=1))
    assert hourly.sum() == pytest.approx(measured.sum() / 4.0, rel=1e-12)


def test_leap_year_drops_29_february():
    measured = record("2024-01-01", "2025-01-01")
    year, report = build_year(measured, step_s=3600, tz=SITE_TZ)
    assert report.filled_days == 0
    local = measured.tz_convert(SITE_TZ)
    hourly = local.resample("1h").mean()
    # 1 March of 2024 lands on 1 March of the nominal year; 29 February is gone.
    march_first = hourly["2024-03-01"].to_numpy()
    np.testing.assert_allclose(year[f"{NOMINAL_YEAR}-03-01"].to_numpy(), march_first)
    assert len(year) == 8760


def test_finer_step_repeats_mean_power():
    measured = record("2023-02-01", "2023-03-15", step="1h")
    year, _ = build_year(measured, step_s=900, tz=SITE_TZ)
    february = year[f"{NOMINAL_YEAR}-02-01": f"{NOMINAL_YEAR}-02-28"].to_numpy().reshape(-1, 4)
    assert (february == february[:, :1]).all()
    np.testing.assert_allclose(february[:, 0], measured.tz_convert(SITE_TZ)["2023-02"].to_numpy())


def test_partial_record_matches_all_twelve_bills_and_keeps_measured_days():
    truth = record("2023-01-01", "2024-01-01")
    bills = monthly_kwh(truth)
    measured = truth["2023-04-01 00:00+01:00":"2023-06-30 23:45+01:00"]
    year, report = build_year(measured, step_s=900, tz=SITE_TZ, monthly_kwh=list(bills))
    built = monthly_kwh(pd.Series(year.to_numpy(), index=year.index.tz_convert("UTC")))
    np.testing.assert_allclose(built, bills, rtol=0.01)
    # Measured days are unchanged.
    kept = year[f"{NOMINAL_YEAR}-04-01": f"{NOMINAL_YEAR}-06-30"].to_numpy()
    np.testing.assert_array_equal(kept, measured.to_numpy())
    assert report.measured_days == 91 and report.filled_days == 365 - 91
    assert report.months_scaled == (1, 2, 3, 7, 8, 9, 10, 11, 12)
    assert report.annual_kwh == pytest.approx(bills.sum(), rel=0.01)


def test_filled_days_come_from_the_nearest_month_by_day_type():
    # Only January and July measured, at levels that tell them apart, weekends twice the weekdays.
    parts = []
    for month, level in ((1, 1000.0), (7, 200.0)):
        index = pd.date_range(pd.Timestamp(2023, month, 1, tz=SITE_TZ), periods=31 * 24, freq="1h")
        weekend = index.day_of_week >= 5
        parts.append(pd.Series(np.where(weekend, 2 * level, level), index=index.tz_convert("UTC")))
    year, report = build_year(pd.concat(parts), step_s=3600, tz=SITE_TZ)
    nominal = year.index
    weekend = nominal.day_of_week >= 5
    def level(month: int, weekend_day: bool) -> np.ndarray:
        return np.unique(year[(nominal.month == month) & (weekend == weekend_day)].to_numpy())
    assert level(2, False) == [1000.0] and level(2, True) == [2000.0]        # Feb: January is nearest
    assert level(12, False) == [1000.0]                                     # Dec: January, wrapping
    assert level(6, True) == [400.0]                                        # Jun: July
    assert level(4, False) == [600.0] and level(10, False) == [600.0]       # equally near: averaged
    assert "Jan+Jul" in report.profile_sources[3]


def test_measured_days_above_the_bill_warn():
    measured = record("2023-03-01", "2023-03-25")
    bills = [None] * 12
    bills[2] = 10.0  # far below what was measured in March
    _, report = build_year(measured, step_s=3600, tz=SITE_TZ, monthly_kwh=bills)
    assert any("exceed the bill" in w for w in report.warnings)
    assert 3 not in report.months_scaled


def test_fewer_than_21_days_is_refused():
    with pytest.raises(InputError, match="at least 21 days"):
        build_year(record("2023-03-01", "2023-03-20"), step_s=3600, tz=SITE_TZ)


def test_one_week_with_twelve_bills_builds_the_year_to_the_bills():
    # With a bill for every month, a week (weekdays and a weekend) gives the shape of the days and the bills the
    # energy: every month but the measured one is filled and scaled to its bill (method step 5).
    full = record("2023-01-01", "2024-01-01")
    bills = monthly_kwh(full)
    week = record("2023-03-06", "2023-03-13")
    year, report = build_year(week, step_s=3600, tz=SITE_TZ, monthly_kwh=list(bills))
    got = (year * 1.0 / 1000.0).groupby(year.index.month).sum().to_numpy()
    others = [m for m in range(12) if m != 2]
    np.testing.assert_allclose(got[others], bills[others], rtol=1e-9)
    assert report.measured_days == 7
    with pytest.raises(InputError, match="at least 21 days"):  # without bills a week is still too short
        build_year(week, step_s=3600, tz=SITE_TZ)
    with pytest.raises(InputError, match="one week"):  # and with bills, fewer than seven days are not enough
        build_year(record("2023-03-06", "2023-03-10"), step_s=3600, tz=SITE_TZ, monthly_kwh=list(bills))


def test_bad_bills_are_refused():
    measured = record("2023-03-01", "2023-04-01")
    with pytest.raises(InputError, match="12"):
        build_year(measured, step_s=3600, tz=SITE_TZ, monthly_kwh=[100.0] * 11)
    with pytest.raises(InputError, match=r"monthly_kwh\[4\]"):
        build_year(measured, step_s=3600, tz=SITE_TZ, monthly_kwh=[100.0] * 4 + [-1.0] + [100.0] * 7)


def test_too_short_a_file_is_refused_with_the_days_needed(tmp_path):
    path = tmp_path / "short.csv"
    index = pd.date_range("2023-05-01", periods=10 * 24, freq="1h", tz="UTC")
    path.write_text("time,power_w\n" + "".join(f"{t:%Y-%m-%dT%H:%M}Z,400\n" for t in index))
    measured = read_load_csv(path)
    with pytest.raises(InputError) as err:
        build_year(measured.power_w, step_s=3600, tz=SITE_TZ)
    assert "21 days" in str(err.value)


def test_read_and_build_a_year_end_to_end(tmp_path):
    truth = record("2023-01-01", "2024-01-01", step="1h")
    path = tmp_path / "year.csv"
    local = truth.tz_convert("Europe/Berlin")
    path.write_text("Zeit;Leistung [kW]\n" + "".join(
        f"{t:%d.%m.%Y %H:%M};" + f"{w / 1000:.5f}\n".replace(".", ",") for t, w in local.items()))
    measured = read_load_csv(path, timezone="Europe/Berlin")
    year, report = build_year(measured.power_w, step_s=3600, tz=SITE_TZ)
    quality = measured.quality
    assert quality.unit == "kW" and quality.rows_rejected == 0
    assert report.filled_days == 0
    np.testing.assert_allclose(year.to_numpy(), truth.to_numpy(), atol=0.01)
