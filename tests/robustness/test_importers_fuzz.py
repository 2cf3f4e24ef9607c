"""Fuzzing the importers (load, weather, outages): random CSV shapes and encodings — UTF-8 with and without a
byte-order mark, UTF-16 with and without one, Latin-1 — and random bytes. Only InputError escapes, naming the
file and the row, line or column; nothing is written next to the file.

Also: one table written in every encoding reads the same, and the open datasets pvlib ships (TMY3, TMY2) stay
readable as shipped and fail cleanly when cut short or corrupted.
"""

from __future__ import annotations

import datetime as dt
import random

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from core.errors import InputError
from core.model.loads import read_load_csv
from core.model.outages import read_outages_csv
from core.model.weather import read_weather_file

from . import fuzzcases as fz
from .common import PVLIB_TMY2, PVLIB_TMY3, names_place

FAST = settings(max_examples=30, deadline=None,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
EST = dt.timezone(dt.timedelta(hours=-5))
#: Files with thousands of rows take thousands of draws; hypothesis draws one seed and a Random makes the rest.
SEEDS = st.integers(0, 2**32 - 1)


def _only_input_error(read, folder, name: str, data: bytes):
    path = folder / name
    path.write_bytes(data)
    try:
        result = read(path)
    except InputError as exc:
        assert names_place(exc, name), str(exc)
        result = None
    assert sorted(p.name for p in folder.iterdir()) == [name], "something was written next to the input"
    return result


# ------------------------------------------------------------------------------------------------ load
@FAST
@given(seed=SEEDS, zone=st.sampled_from([None, "Europe/Berlin", "Australia/Sydney"]))
def test_load_files_of_random_shape_and_encoding(tmp_path_factory, seed, zone):
    rng = random.Random(seed)
    measured = _only_input_error(lambda p: read_load_csv(p, timezone=zone), tmp_path_factory.mktemp("load"),
                                 "meter.csv", fz.load_csv_bytes(rng))
    if measured is not None:
        power = measured.power_w.to_numpy()
        assert not np.isinf(power).any() and (power[np.isfinite(power)] >= 0).all()


LOAD_TABLE = "Zeit;Leistung Zähler (W)\n" + "\n".join(
    f"2024-05-{1 + h // 24:02d} {h % 24:02d}:00;{300 + 25 * (h % 24)},5" for h in range(96)) + "\n"


@pytest.mark.parametrize("encoding", ["utf-8", "utf-8-sig", "utf-16", "utf-16-le", "utf-16-be", "latin-1"])
def test_one_load_table_reads_the_same_in_every_encoding(tmp_path, encoding):
    path = tmp_path / "meter.csv"
    path.write_bytes(LOAD_TABLE.encode(encoding))
    measured = read_load_csv(path, timezone="Europe/Berlin")
    # 96 hourly readings of (300 + 25 h + 0.5) W: the energy is known by construction.
    expected_kwh = sum(300 + 25 * (h % 24) + 0.5 for h in range(96)) / 1000.0
    assert measured.quality.energy_kwh == pytest.approx(expected_kwh, rel=1e-9)
    assert measured.quality.rows_rejected == 0


# ------------------------------------------------------------------------------------------------ weather
@FAST
@given(seed=SEEDS)
def test_weather_csv_of_random_shape_and_encoding(tmp_path_factory, seed):
    rng = random.Random(seed)
    weather = _only_input_error(
        lambda p: read_weather_file(p, fmt="csv", tz=EST, latitude=36.0, longitude=-80.0),
        tmp_path_factory.mktemp("weather"), "weather.csv", fz.weather_csv_bytes(rng))
    if weather is not None:
        data = weather.data
        assert len(data) * weather.step_s == 8760 * 3600
        assert np.isfinite(data.to_numpy()).all()


def _year_csv(extra_comment: str = "") -> str:
    index = pd.date_range("2023-01-01", periods=8760, freq="h")
    ghi = np.clip(700 * np.sin((index.hour - 6) / 12 * np.pi), 0, None)
    rows = (f"{t:%Y-%m-%d %H:%M},{g:.1f},{5 + 10 * np.sin(t.day_of_year / 58):.1f}" for t, g in zip(index, ghi,
                                                                                               strict=True))
    return extra_comment + "timestamp,ghi,temp_air\n" + "\n".join(rows) + "\n"


@pytest.mark.parametrize("encoding", ["utf-8", "utf-8-sig", "utf-16", "utf-16-le", "latin-1"])
def test_one_weather_year_reads_the_same_in_every_encoding(tmp_path, encoding):
    # Comment lines above the header (with a degree sign, which Latin-1 and UTF-16 write differently) and a
    # byte-order mark in front of them must not hide the header.
    text = _year_csv("# Station: Höhe 270 m, 12 °C mean\n# latitude = 36.1\n# longitude = -79.9\n")
    path = tmp_path / "weather.csv"
    path.write_bytes(text.encode(encoding))
    reference = tmp_path / "reference.csv"
    reference.write_bytes(text.encode("utf-8"))
    got = read_weather_file(path, fmt="csv", tz=EST)
    want = read_weather_file(reference, fmt="csv", tz=EST)
    pd.testing.assert_frame_equal(got.data, want.data)
    assert got.latitude == pytest.approx(36.1)


@pytest.mark.parametrize("source", [PVLIB_TMY3, PVLIB_TMY2], ids=["tmy3", "tmy2"])
def test_pvlib_datasets_cut_short_or_corrupted_fail_cleanly(tmp_path, source):
    """NREL TMY3 (Greensboro NC) and TMY2 (Miami FL) as pvlib ships them read as a full year; cut at random
    points or with bytes overwritten they raise InputError naming the file."""
    fmt = "tmy3" if source == PVLIB_TMY3 else "tmy2"
    whole = read_weather_file(source, fmt=fmt)
    assert len(whole.data) == 8760  # a TMY is one hour per row for a year (Wilcox & Marion 2008)
    raw = source.read_bytes()
    rng = random.Random(3)
    for k in range(4):
        data = bytearray(raw[: rng.randrange(len(raw))] if k < 2 else raw)
        if k >= 2:
            for _ in range(rng.choice([1, 20, 400])):
                data[rng.randrange(len(data))] = rng.randrange(256)
        folder = tmp_path / f"case_{k}"
        folder.mkdir()
        name = f"broken_{k}.{'csv' if fmt == 'tmy3' else 'tm2'}"
        _only_input_error(lambda p: read_weather_file(p, fmt=fmt), folder, name, bytes(data))  # noqa: B023


# ------------------------------------------------------------------------------------------------ outages
@FAST
@given(rng=st.randoms(use_true_random=False))
def test_outage_files_of_random_shape_and_encoding(tmp_path_factory, rng):
    intervals = _only_input_error(lambda p: read_outages_csv(p, EST), tmp_path_factory.mktemp("outages"),
                                  "outages.csv", fz.outages_csv_bytes(rng))
    for start, end in intervals or []:
        assert start < end and start.year == end.year == 2023  # placed on the nominal year


def test_outage_file_with_a_byte_order_mark_is_read(tmp_path):
    path = tmp_path / "outages.csv"
    path.write_bytes("start,end\n2023-07-04 13:00,2023-07-04 16:30\n".encode("utf-8-sig"))
    [(start, end)] = read_outages_csv(path, EST)
    assert (end - start) == pd.Timedelta(hours=3.5)
