"""Reading measured-load CSV files: DST handling, units, registers, labels, and the JSON summary.

Every test file is written here from an invented profile whose energy is known by construction; the
daylight-saving transitions are checked against Python's zoneinfo (the IANA tz database) as the reference.
"""

from __future__ import annotations

import json
from datetime import UTC, datetime, timedelta
from zoneinfo import ZoneInfo

import numpy as np
import pandas as pd
import pytest

from core.errors import InputError
from core.model.loads import inspect_load_summary, read_load_csv
from core.model.loads.units import decide_unit, header_unit


def true_power_w(t_s: np.ndarray) -> np.ndarray:
    """Invented household: floor, daily hump, and an appliance that runs every seventh quarter hour."""
    day = np.sin(np.pi * ((t_s % 86400) / 86400.0)) ** 2
    return 200.0 + 500.0 * day + ((t_s // 900) % 7 == 3) * 1200.0


def utc_range(start: datetime, end: datetime, step_s: int) -> list[datetime]:
    n = int((end - start).total_seconds() // step_s)
    return [start + timedelta(seconds=step_s * k) for k in range(n)]


def seconds(times: list[datetime]) -> np.ndarray:
    return np.array([t.timestamp() for t in times])


def write_naive_local(path, times: list[datetime], zone: ZoneInfo, values: np.ndarray, header: str) -> None:
    """Write as a logger on local clock time does: naive local timestamps in the order they happened."""
    rows = [header] + [f"{t.astimezone(zone):%Y-%m-%d %H:%M},{v:.3f}" for t, v in zip(times, values, strict=True)]
    path.write_text("\n".join(rows) + "\n")


def local_day_hours(zone: ZoneInfo, day: datetime) -> float:
    """Length of a local calendar day in hours, from zoneinfo (the reference for the transitions)."""
    start = day.replace(tzinfo=zone)
    end = (day + timedelta(days=1)).replace(tzinfo=zone)
    return (end.astimezone(UTC) - start.astimezone(UTC)).total_seconds() / 3600.0


@pytest.mark.parametrize("zone_name, spring, autumn", [
    ("Europe/Berlin", datetime(2024, 3, 31), datetime(2024, 10, 27)),       # EU rule: last Sundays
    ("America/New_York", datetime(2024, 3, 10), datetime(2024, 11, 3)),     # US rule: 2nd Sun Mar, 1st Sun Nov
])
def test_naive_local_file_across_both_transitions(tmp_path, zone_name, spring, autumn):
    zone = ZoneInfo(zone_name)
    # zoneinfo says the spring day is 23 h and the autumn day 25 h long.
    assert local_day_hours(zone, spring) == 23.0
    assert local_day_hours(zone, autumn) == 25.0
    start = (spring - timedelta(days=3)).replace(tzinfo=zone).astimezone(UTC)
    end = (autumn + timedelta(days=3)).replace(tzinfo=zone).astimezone(UTC)
    times = utc_range(start, end, 900)
    watts = true_power_w(seconds(times))
    path = tmp_path / "local.csv"
    write_naive_local(path, times, zone, watts, "time,power_w")

    measured = read_load_csv(path, timezone=zone_name)
    quality = measured.quality
    assert quality.rows_rejected == 0, quality.warnings
    assert quality.coverage_pct == pytest.approx(100.0)
    expected_kwh = watts.sum() * 0.25 / 1000.0
    assert quality.energy_kwh == pytest.approx(expected_kwh, rel=1e-9)
    # Each value lands on its true UTC instant, including both passes of the repeated autumn hour.
    expected = pd.Series(watts, index=pd.DatetimeIndex(times).tz_convert("UTC"))
    np.testing.assert_allclose(measured.power_w.reindex(expected.index).to_numpy(), expected.to_numpy(),
                               atol=1e-3)

    # Constant 1 kW: energy per local calendar day equals the day's length from zoneinfo.
    write_naive_local(path, times, zone, np.full(len(times), 1.0), "time,load_kw")
    flat = read_load_csv(path, timezone=zone_name)
    local = flat.power_w.tz_convert(zone_name)
    per_day_kwh = (local * 0.25 / 1000.0).groupby(local.index.date).sum()
    for day in (spring, autumn, spring + timedelta(days=1), autumn - timedelta(days=1)):
        assert per_day_kwh[day.date()] == pytest.approx(local_day_hours(zone, day), rel=1e-12)


def test_offsets_and_naive_local_give_the_same_series(tmp_path):
    zone = ZoneInfo("Europe/Berlin")
    times = utc_range(datetime(2024, 10, 26, tzinfo=UTC), datetime(2024, 10, 29, tzinfo=UTC), 900)
    watts = true_power_w(seconds(times))
    naive = tmp_path / "naive.csv"
    write_naive_local(naive, times, zone, watts, "time,power_w")
    aware = tmp_path / "aware.csv"
    aware.write_text("time,power_w\n" + "".join(f"{t.astimezone(zone).isoformat()},{v:.3f}\n"
                                                for t, v in zip(times, watts, strict=True)))
    utc = tmp_path / "utc.csv"
    utc.write_text("time,power_w\n" + "".join(f"{t:%Y-%m-%dT%H:%M:%SZ},{v:.3f}\n"
                                              for t, v in zip(times, watts, strict=True)))
    a = read_load_csv(naive, timezone="Europe/Berlin").power_w
    b = read_load_csv(aware).power_w
    c = read_load_csv(utc, timezone="America/New_York").power_w  # a zone does not move exact timestamps
    pd.testing.assert_series_equal(a, b)
    pd.testing.assert_series_equal(a, c)


def test_same_consumption_three_ways_same_energy(tmp_path):
    # kW mean power, kWh per interval, and a kWh register that resets to zero part-way.
    times = utc_range(datetime(2024, 5, 1, tzinfo=UTC), datetime(2024, 5, 11, tzinfo=UTC), 900)
    watts = true_power_w(seconds(times))
    true_kwh = watts.sum() * 0.25 / 1000.0

    kw = tmp_path / "kw.csv"
    kw.write_text("time,load [kW]\n" + "".join(f"{t:%Y-%m-%d %H:%M}Z,{w / 1000:.3f}\n"
                                               for t, w in zip(times, watts, strict=True)))
    kwh = tmp_path / "kwh.csv"
    # Semicolons and decimal commas here (the timestamps hold no point, so only the values change).
    kwh.write_text("time;energy kWh\n" + "".join(f"{t:%Y-%m-%d %H:%M}Z;{w / 4000:.3f}\n".replace(".", ",")
                                                 for t, w in zip(times, watts, strict=True)))
    # The register is read at every interval edge; it resets to zero right after the reading at index 500.
    edges = [*times, times[-1] + timedelta(minutes=15)]
    cumulative = 4321.0 + np.concatenate([[0.0], np.cumsum(watts / 4000.0)])
    register = cumulative.copy()
    register[501:] -= cumulative[500]
    reg = tmp_path / "register.csv"
    reg.write_text("time,meter reading (kWh)\n" + "".join(f"{t:%Y-%m-%d %H:%M}Z,{r:.3f}\n"
                                                          for t, r in zip(edges, register, strict=True)))

    results = {}
    for path, unit in ((kw, "kW"), (kwh, "kWh"), (reg, "kWh_register")):
        measured = read_load_csv(path)
        assert measured.quality.unit == unit, measured.quality.unit_reason
        results[unit] = measured.quality.energy_kwh
    for unit, energy in results.items():
        assert energy == pytest.approx(true_kwh, rel=1e-3), unit
    assert results["kW"] == pytest.approx(results["kWh"], rel=1e-3)
    assert results["kW"] == pytest.approx(results["kWh_register"], rel=1e-3)
    assert any("reset to zero" in w for w in read_load_csv(reg).quality.warnings)


def test_interval_end_labels_shift_back_by_one_interval(tmp_path):
    times = utc_range(datetime(2024, 6, 1, tzinfo=UTC), datetime(2024, 6, 3, tzinfo=UTC), 900)
    watts = true_power_w(seconds(times))
    start = tmp_path / "start.csv"
    start.write_text("time,power_w\n" + "".join(f"{t:%Y-%m-%dT%H:%M}Z,{w:.2f}\n"
                                                for t, w in zip(times, watts, strict=True)))
    end = tmp_path / "end.csv"
    end.write_text("time,power_w\n" + "".join(f"{t + timedelta(minutes=15):%Y-%m-%dT%H:%M}Z,{w:.2f}\n"
                                              for t, w in zip(times, watts, strict=True)))
    pd.testing.assert_series_equal(read_load_csv(start).power_w, read_load_csv(end, label="end").power_w)


@pytest.mark.parametrize("header, unit", [
    ("Load [kW]", "kW"), ("power_w", "W"), ("energy kWh", "kWh"), ("Consumption (Wh)", "Wh"),
    ("P (kilowatts)", "kW"), ("Energy, kilowatt-hours", "kWh"), ("status", None), ("window", None),
])
def test_header_units(header, unit):
    assert header_unit(header) == unit


def test_unit_from_values_when_the_header_has_none():
    step = 900.0
    rng = np.random.default_rng(7)  # random-number seed
    kw = rng.uniform(0.2, 1.5, 500)
    # Hourly, mean power and energy per interval read the same: the magnitude picks kW or W.
    assert decide_unit("value", kw, 3600.0).unit == "kW"
    assert decide_unit("value", kw * 1000.0, 3600.0).unit == "W"
    assert decide_unit("power", kw * 1000.0, step).unit == "W"      # a power word settles it at any step
    assert decide_unit("usage", kw / 4.0, step).unit == "kWh"        # energy word: per-interval energy
    register = 5000.0 + np.cumsum(kw / 4.0)
    decision = decide_unit("reading", register, step)
    assert decision.unit == "kWh_register"
    assert "only go up" in decision.reason
    assert decision.warnings                                          # the user is asked to confirm


def test_bad_arguments_name_the_file(tmp_path):
    path = tmp_path / "ok.csv"
    path.write_text("time,power_w\n2024-01-01T00:00Z,1\n2024-01-01T00:15Z,2\n2024-01-01T00:30Z,3\n")
    with pytest.raises(InputError, match="unknown time zone") as err:
        read_load_csv(path, timezone="Mars/Olympus")
    assert "ok.csv" in str(err.value)
    with pytest.raises(InputError, match="unknown unit") as err:
        read_load_csv(path, unit="horsepower")
    assert "ok.csv" in str(err.value)
    with pytest.raises(InputError, match="file not found"):
        read_load_csv(tmp_path / "absent.csv")
    with pytest.raises(InputError, match="holds the timestamps"):
        read_load_csv(path, column="time")


def test_register_spans_a_short_gap_keeping_its_energy(tmp_path):
    times = utc_range(datetime(2024, 2, 1, tzinfo=UTC), datetime(2024, 2, 3, tzinfo=UTC), 900)
    watts = true_power_w(seconds(times))
    edges = [*times, times[-1] + timedelta(minutes=15)]
    cumulative = 100.0 + np.concatenate([[0.0], np.cumsum(watts / 4000.0)])
    keep = [k for k in range(len(edges)) if not 40 <= k < 44]   # one hour of readings lost
    path = tmp_path / "reg.csv"
    path.write_text("time,total_kwh\n" + "".join(f"{edges[k]:%Y-%m-%dT%H:%M}Z,{cumulative[k]:.4f}\n"
                                                 for k in keep))
    quality = read_load_csv(path, unit="kWh_register").quality
    assert quality.energy_kwh == pytest.approx(watts.sum() / 4000.0, rel=1e-6)
    assert quality.gaps_filled == 1 and quality.filled_intervals == 5
    assert any("spread evenly" in w and "row 41" in w for w in quality.warnings)


def test_summary_is_json_ready_with_monthly_base_load(tmp_path):
    times = utc_range(datetime(2024, 1, 1, tzinfo=UTC), datetime(2024, 3, 1, tzinfo=UTC), 900)
    watts = true_power_w(seconds(times))
    path = tmp_path / "two_months.csv"
    path.write_text("time,power_w\n" + "".join(f"{t:%Y-%m-%d %H:%M},{w:.1f}\n"
                                               for t, w in zip(times, watts, strict=True)))
    summary = inspect_load_summary(path, timezone="Europe/Berlin")
    json.dumps(summary)  # must not raise
    for key in ("span_days", "coverage_pct", "interval_s", "unit", "energy_kwh", "gaps_filled",
                "rows_rejected", "base_load_w", "warnings", "unit_reason", "rejected_reasons"):
        assert key in summary
    assert summary["interval_s"] == 900
    assert summary["span_days"] == pytest.approx(60.0, abs=0.05)
    base = summary["base_load_w"]
    assert len(base) == 12
    assert base[0] is not None and base[1] is not None
    assert all(b is None for b in base[3:11])
    # The invented floor is 200 W; the hump adds a little even at night in local time, never less.
    assert 200.0 <= base[0] < 260.0


def test_progress_is_reported_in_order(tmp_path):
    times = utc_range(datetime(2024, 6, 1, tzinfo=UTC), datetime(2024, 6, 2, tzinfo=UTC), 900)
    path = tmp_path / "day.csv"
    path.write_text("time,power_w\n" + "".join(f"{t:%Y-%m-%dT%H:%M}Z,300\n" for t in times))
    seen: list[float] = []
    read_load_csv(path, progress=lambda fraction, stage: seen.append(fraction))
    assert seen[0] == 0.0 and seen[-1] == 1.0
    assert seen == sorted(seen)
