"""Weather files onto the nominal year: pvlib's shipped TMY files, an EPW made from one, the generic CSV format,
resampling and bad input."""

import csv
import datetime as dt
import pathlib

import numpy as np
import pandas as pd
import pvlib
import pytest

from core.errors import InputError
from core.model.weather import interpolate_weather, read_weather_file, timezone_for
from core.timebase import NOMINAL_YEAR, nominal_index, standard_offset

PVLIB_DATA = pathlib.Path(pvlib.__file__).parent / "data"
GREENSBORO = PVLIB_DATA / "723170TYA.CSV"  # NREL TMY3, Greensboro NC, shipped with pvlib
MIAMI_TMY2 = PVLIB_DATA / "12839.tm2"  # NREL TMY2, Miami FL, shipped with pvlib
UTC_MINUS_5 = dt.timezone(dt.timedelta(hours=-5))


def _tmy3_rows(path: pathlib.Path) -> list[dict]:
    """The raw data rows of a TMY3 file, read with the csv module (independent of pvlib and of our reader)."""
    with open(path, newline="") as handle:
        handle.readline()  # station line
        return list(csv.DictReader(handle))


def _write_epw_from_tmy3(src: pathlib.Path, dst: pathlib.Path) -> None:
    """Write an EnergyPlus weather file (EnergyPlus Auxiliary Programs, 'Weather Converter', EPW data fields)
    carrying the TMY3 file's values. Both formats number the hours 1..24, each hour ENDING at its number."""
    with open(src, newline="") as handle:
        station = next(csv.reader([handle.readline()]))
    header = [
        f"LOCATION,{station[1].strip()},{station[2]},USA,TMY3,{station[0]},{station[4]},{station[5]},{station[3]},"
        f"{station[6]}",
        "DESIGN CONDITIONS,0", "TYPICAL/EXTREME PERIODS,0", "GROUND TEMPERATURES,0",
        "HOLIDAYS/DAYLIGHT SAVINGS,No,0,0,0", "COMMENTS 1,test data converted from a TMY3 file", "COMMENTS 2,",
        "DATA PERIODS,1,1,Data,Sunday, 1/ 1,12/31",
    ]
    lines = list(header)
    for row in _tmy3_rows(src):
        month, day, year = row["Date (MM/DD/YYYY)"].split("/")
        hour = int(row["Time (HH:MM)"].split(":")[0])
        fields = [year, str(int(month)), str(int(day)), str(hour), "60", "?9?9?9?9E0?9?9?9?9?9?9?9?9?9?9?9?9?9*9*9?9",
                  row["Dry-bulb (C)"], row["Dew-point (C)"], row["RHum (%)"],
                  str(float(row["Pressure (mbar)"]) * 100), row["ETR (W/m^2)"], row["ETRN (W/m^2)"], "9999",
                  row["GHI (W/m^2)"], row["DNI (W/m^2)"], row["DHI (W/m^2)"], "999999", "999999", "999999", "9999",
                  row["Wdir (degrees)"], row["Wspd (m/s)"], "99", "99", "9999", "99999", "9", "999999999", "999",
                  "0.999", "999", "99", "999", "999", "99"]
        lines.append(",".join(fields))
    dst.write_text("\n".join(lines) + "\n")


def _write_csv(path: pathlib.Path, frame: pd.DataFrame, comments: tuple[str, ...] = ()) -> None:
    text = "".join(f"# {c}\n" for c in comments) + frame.to_csv(index=False)
    path.write_text(text)


@pytest.fixture(scope="module")
def greensboro():
    return read_weather_file(GREENSBORO)


def test_tmy3_greensboro_reads_onto_the_nominal_year(greensboro):
    data = greensboro.data
    assert greensboro.step_s == 3600 and len(data) == 8760
    # Interval starts on the nominal year, regular, in the station's standard time UTC-5 (TMY3 header: TZ -5).
    pd.testing.assert_index_equal(data.index, nominal_index(3600, UTC_MINUS_5), check_names=False)
    assert data.index[0] == pd.Timestamp(NOMINAL_YEAR, 1, 1, tz=UTC_MINUS_5)
    assert list(data.columns) == ["ghi", "dni", "dhi", "temp_air", "wind_speed", "pressure"]
    rows = _tmy3_rows(GREENSBORO)
    # Annual GHI is the file's own sum (Wh/m2: hourly values), and plausible for the US south-east
    # (about 1500-1700 kWh/m2 a year, NREL solar resource maps; common practice).
    file_sum = sum(float(r["GHI (W/m^2)"]) for r in rows)
    assert data["ghi"].sum() == pytest.approx(file_sum, rel=1e-12)
    assert 1400 < file_sum / 1000 < 1800
    # The row stamped 06/21 13:00 holds the hour ENDING at 13:00 (TMY3 user's manual, Wilcox & Marion 2008):
    # it becomes the interval starting 12:00.
    row = next(r for r in rows if r["Date (MM/DD/YYYY)"].startswith("06/21/") and r["Time (HH:MM)"] == "13:00")
    at = pd.Timestamp(NOMINAL_YEAR, 6, 21, 12, tz=UTC_MINUS_5)
    assert data.at[at, "ghi"] == float(row["GHI (W/m^2)"])
    assert data.at[at, "temp_air"] == float(row["Dry-bulb (C)"])
    assert data.at[at, "pressure"] == float(row["Pressure (mbar)"]) * 100  # mbar -> Pa
    assert greensboro.latitude == pytest.approx(36.1) and greensboro.longitude == pytest.approx(-79.95)
    assert greensboro.altitude_m == pytest.approx(273.0)
    assert "723170TYA.CSV" in greensboro.source


def _best_sun_shift_h(weather) -> int:
    """Shift (h) of the GHI series that best matches pvlib's clear sky at the interval midpoints."""
    data = weather.data
    location = pvlib.location.Location(weather.latitude, weather.longitude, altitude=weather.altitude_m)
    clear = location.get_clearsky(data.index + pd.Timedelta(minutes=30), model="ineichen")["ghi"].to_numpy()
    ghi = data["ghi"].to_numpy()
    scores = {shift: np.corrcoef(np.roll(ghi, shift), clear)[0, 1] for shift in (-1, 0, 1)}
    return max(scores, key=scores.get)


def test_interval_starts_follow_the_sun(greensboro, tmp_path):
    # The sun is the outside reference for the time labels: after our alignment each file's GHI matches pvlib's
    # clear-sky curve at the interval midpoints best with no shift; a mislabelled hour would favour +/-1 h.
    epw = tmp_path / "greensboro.epw"
    _write_epw_from_tmy3(GREENSBORO, epw)
    for weather in (greensboro, read_weather_file(MIAMI_TMY2), read_weather_file(epw)):
        assert _best_sun_shift_h(weather) == 0, weather.source


def test_tmy2_miami_converts_units():
    weather = read_weather_file(MIAMI_TMY2)
    raw, meta = pvlib.iotools.read_tmy2(MIAMI_TMY2)
    data = weather.data
    assert len(data) == 8760 and data.index.tz.utcoffset(None) == dt.timedelta(hours=-5)
    assert data["ghi"].sum() == pytest.approx(raw["GHI"].sum(), rel=1e-12)
    # TMY2 stores temperature and wind in tenths (NREL TMY2 user's manual, Marion & Urban 1995; pvlib docs):
    # Miami's annual mean air temperature is about 24-25 C and its pressure near sea level.
    assert data["temp_air"].mean() == pytest.approx(raw["DryBulb"].mean() / 10, rel=1e-12)
    assert 23 < data["temp_air"].mean() < 26
    assert 2 < data["wind_speed"].mean() < 7
    assert 100_000 < data["pressure"].mean() < 103_000


def test_epw_reads_like_the_tmy3_it_was_made_from(greensboro, tmp_path):
    epw = tmp_path / "greensboro.epw"
    _write_epw_from_tmy3(GREENSBORO, epw)
    weather = read_weather_file(epw)
    assert weather.source.startswith("EPW file")
    pd.testing.assert_frame_equal(weather.data, greensboro.data, check_freq=False, check_names=False)
    assert weather.latitude == pytest.approx(36.1)


def test_site_time_zone_rotates_the_year(greensboro):
    # Read in UTC-6 (America/Chicago standard time): the same instants, one hour earlier on the clock, and the
    # year wraps around (the first hour of the UTC-5 year becomes the last of the UTC-6 one).
    central = read_weather_file(GREENSBORO, tz="America/Chicago")
    assert central.data.index[0].utcoffset() == dt.timedelta(hours=-6)
    np.testing.assert_array_equal(central.data["ghi"].to_numpy(), np.roll(greensboro.data["ghi"].to_numpy(), -1))
    # A daylight-saving zone gives its standard offset, never the summer one.
    eastern = read_weather_file(GREENSBORO, tz="America/New_York")
    pd.testing.assert_frame_equal(eastern.data, greensboro.data)


def test_csv_with_ghi_only_gets_an_erbs_split_that_closes(greensboro, tmp_path):
    frame = pd.DataFrame({"timestamp": greensboro.data.index.strftime("%Y-%m-%d %H:%M"),
                          "GHI": greensboro.data["ghi"].to_numpy()})
    path = tmp_path / "ghi_only.csv"
    _write_csv(path, frame, comments=("latitude = 36.1", "longitude = -79.95", "altitude_m = 273"))
    weather = read_weather_file(path, tz="America/New_York")
    assert "Erbs" in weather.source and "temp_air 20 C" in weather.source
    data = weather.data
    # Erbs, Klein & Duffie (1982) via pvlib: DHI + DNI cos(zenith) = GHI at the zenith of the interval midpoint.
    zenith = pvlib.solarposition.get_solarposition(data.index + pd.Timedelta(minutes=30), 36.1, -79.95, 273,
                                                   pressure=data["pressure"].to_numpy(),
                                                   temperature=data["temp_air"].to_numpy())["zenith"].to_numpy()
    closure = data["dhi"].to_numpy() + data["dni"].to_numpy() * np.cos(np.radians(zenith))
    np.testing.assert_allclose(closure, data["ghi"].to_numpy(), atol=1e-6)
    # The derived diffuse share of the year is in the usual range for a humid temperate climate (the TMY3's own
    # measured-model split is about 0.45 here).
    assert 0.35 < data["dhi"].sum() / data["ghi"].sum() < 0.6
    # Defaults documented in the module: 20 C and 1 m/s (IEC 61215 NOCT conditions).
    assert (data["temp_air"] == 20.0).all() and (data["wind_speed"] == 1.0).all()
    assert data["pressure"].iloc[0] == pytest.approx(pvlib.atmosphere.alt2pres(273))


def test_csv_sub_hourly_leap_year_with_utc_offsets(tmp_path):
    # A 30-minute year 2024 (leap) written in UTC with explicit offsets, read in UTC-5: 29 February is dropped and
    # every value lands on its local standard time.
    stamps = pd.date_range("2024-01-01 05:00", "2025-01-01 04:30", freq="30min", tz="UTC")
    hours = np.arange(len(stamps), dtype=float)
    frame = pd.DataFrame({"timestamp": stamps.strftime("%Y-%m-%dT%H:%M%z"), "ghi": hours % 500,
                          "dni": 0.0, "dhi": hours % 500, "temp_air": 10.0, "wind_speed": 2.0, "pressure": 101000.0})
    path = tmp_path / "half_hourly.csv"
    _write_csv(path, frame)
    weather = read_weather_file(path, tz=UTC_MINUS_5)
    assert weather.step_s == 1800 and len(weather.data) == 2 * 8760
    local = stamps.tz_convert(UTC_MINUS_5)
    keep = ~((local.month == 2) & (local.day == 29))
    expected = frame["ghi"].to_numpy()[keep]
    np.testing.assert_array_equal(weather.data["ghi"].to_numpy(), expected)
    assert weather.data.index[0] == pd.Timestamp(NOMINAL_YEAR, 1, 1, tz=UTC_MINUS_5)


def test_interpolate_weather_preserves_hourly_energy(greensboro):
    fine = interpolate_weather(greensboro, 300, latitude=36.1, longitude=-79.95, altitude_m=273.0)
    assert fine.step_s == 300 and len(fine.data) == 12 * 8760
    hourly = fine.data.to_numpy().reshape(8760, 12, -1).mean(axis=1)
    ghi_h = greensboro.data["ghi"].to_numpy()
    # Every hour's GHI energy within 1 % (the brief's requirement) and the year's to 0.1 %.
    lit = ghi_h > 0
    np.testing.assert_allclose(hourly[lit, 0], ghi_h[lit], rtol=0.01)
    assert fine.data["ghi"].sum() / 12 == pytest.approx(ghi_h.sum(), rel=1e-3)
    assert fine.data["dhi"].sum() / 12 == pytest.approx(greensboro.data["dhi"].sum(), rel=0.01)
    assert (fine.data[["ghi", "dni", "dhi"]].to_numpy() >= 0).all()
    # Within an hour the profile follows the sun (pvlib's Ineichen clear sky as the outside reference): in June
    # 08:00-09:00 hours the 5-min clear-sky index is smooth and GHI rises through the hour instead of staying flat.
    location = pvlib.location.Location(36.1, -79.95, altitude=273)
    clear = location.get_clearsky(fine.data.index + pd.Timedelta(seconds=150), model="ineichen")["ghi"].to_numpy()
    morning = (fine.data.index.hour == 8) & (fine.data.index.month == 6)
    ratio = fine.data["ghi"].to_numpy()[morning] / clear[morning]
    assert np.median(np.abs(np.diff(ratio.reshape(-1, 12), axis=1))) < 0.05  # smooth clear-sky index within hours
    first, last = fine.data["ghi"].to_numpy()[morning].reshape(-1, 12)[:, [0, -1]].T
    assert np.mean(last > first) > 0.8  # mornings brighten through the hour
    # Temperatures are interpolated, not stepped.
    assert np.abs(np.diff(fine.data["temp_air"].to_numpy())).max() < 2.0
    # Averaging back to hours returns the original irradiance.
    back = interpolate_weather(fine, 3600, latitude=36.1, longitude=-79.95, altitude_m=273.0)
    np.testing.assert_allclose(back.data["ghi"].to_numpy(), ghi_h, rtol=0.01, atol=1e-6)


def test_timezone_for_finds_zones_offline():
    assert timezone_for(36.1, -79.95) == "America/New_York"
    # Open Pacific: the POSIX-style Etc zone has the inverted sign (Etc/GMT+10 is UTC-10).
    assert timezone_for(0.0, -150.0) == "Etc/GMT+10"
    with pytest.raises(ValueError, match="site.latitude"):  # physics raises ValueError; the schema checks ranges
        timezone_for(123.0, 0.0)


def test_timezone_fallback_follows_the_posix_sign(monkeypatch):
    # When the lookup finds nothing, the zone comes from the longitude. The IANA tz database (as shipped to Python's
    # zoneinfo) defines Etc/GMT+N as N hours BEHIND UTC, so 150 W must give Etc/GMT+10 = UTC-10.
    import timezonefinder

    class NoZone:
        def timezone_at(self, **_):
            return None

    monkeypatch.setattr(timezonefinder, "TimezoneFinder", NoZone)
    for longitude, hours in ((-150.0, -10), (100.0, 7), (3.0, 0)):
        name = timezone_for(10.0, longitude)
        assert standard_offset(name) == dt.timezone(dt.timedelta(hours=hours)), name


# ---- bad input: every message names the file and the place in it


def test_missing_file(tmp_path):
    with pytest.raises(InputError, match="nowhere.csv.*not found"):
        read_weather_file(tmp_path / "nowhere.csv")


def _good_csv(tmp_path, name="w.csv") -> tuple[pathlib.Path, pd.DataFrame]:
    index = nominal_index(3600, UTC_MINUS_5)
    frame = pd.DataFrame({"timestamp": index.strftime("%Y-%m-%d %H:%M"), "ghi": 100.0, "dni": 50.0, "dhi": 60.0,
                          "temp_air": 12.0, "wind_speed": 3.0})
    path = tmp_path / name
    _write_csv(path, frame)
    return path, frame


def test_missing_column_names_file_and_column(tmp_path):
    path, frame = _good_csv(tmp_path)
    _write_csv(path, frame.rename(columns={"ghi": "gh1"}))
    with pytest.raises(InputError) as err:
        read_weather_file(path, tz=UTC_MINUS_5)
    text = str(err.value)
    assert "w.csv" in text and "'ghi'" in text and "gh1" in text


@pytest.mark.parametrize("value, pattern", [
    ("", r"line 102 .*column 'ghi'.*empty or NaN"),
    ("nan", r"line 102 .*column 'ghi'.*empty or NaN"),
    ("inf", r"line 102 .*column 'ghi'.*not finite"),
    ("bright", r"line 102 .*column 'ghi'.*not a number"),
    ("-5", r"line 102 .*column 'ghi'.*negative GHI"),
])
def test_bad_value_names_line_and_column(tmp_path, value, pattern):
    path, frame = _good_csv(tmp_path)
    frame = frame.astype({"ghi": object})
    frame.loc[100, "ghi"] = value  # data row 100 = file line 102 (line 1 is the header)
    _write_csv(path, frame)
    with pytest.raises(InputError, match=pattern) as err:
        read_weather_file(path, tz=UTC_MINUS_5)
    assert "w.csv" in str(err.value)


def test_time_problems_in_csv(tmp_path):
    path, frame = _good_csv(tmp_path)
    with pytest.raises(InputError, match="no UTC offset"):
        read_weather_file(path)  # naive timestamps and no time zone
    dup = frame.copy()
    dup.loc[5, "timestamp"] = dup.loc[4, "timestamp"]
    _write_csv(path, dup)
    with pytest.raises(InputError, match=r"w.csv.*line 7"):
        read_weather_file(path, tz=UTC_MINUS_5)
    _write_csv(path, frame.drop(index=200))
    with pytest.raises(InputError, match=r"w.csv.*missing.*01-09 08:00"):
        read_weather_file(path, tz=UTC_MINUS_5)
    bad = frame.copy()
    bad.loc[3, "timestamp"] = "yesterday"
    _write_csv(path, bad)
    with pytest.raises(InputError, match=r"line 5, column 'timestamp'.*yesterday"):
        read_weather_file(path, tz=UTC_MINUS_5)


def test_truncated_and_damaged_tmy3(tmp_path):
    lines = GREENSBORO.read_text().splitlines()
    short = tmp_path / "short.csv"
    short.write_text("\n".join(lines[:500]) + "\n")
    with pytest.raises(InputError, match=r"short.csv.*498 data rows, expected 8760"):
        read_weather_file(short)
    damaged = tmp_path / "damaged.csv"
    fields = lines[1000].split(",")
    fields[4] = ""  # GHI of data line 1001
    damaged.write_text("\n".join(lines[:1000] + [",".join(fields)] + lines[1001:]) + "\n")
    with pytest.raises(InputError, match=r"damaged.csv.*line 1001 .*GHI \(W/m\^2\).*empty or NaN"):
        read_weather_file(damaged)


def test_unknown_format(tmp_path):
    path = tmp_path / "weather.xyz"
    path.write_text("something\n")
    with pytest.raises(InputError, match="weather.xyz"):
        read_weather_file(path)
