"""NaN and infinity are stopped at the edge, with a message naming the place: in every numeric setting of a
scenario (TOML has nan and inf literals), in load and weather series, in outage dates and on the command line.
Nothing non-finite reaches the engine.
"""

from __future__ import annotations

import copy
import datetime as dt
import math

import numpy as np
import pandas as pd
import pytest
import tomli_w

from core.errors import InputError
from core.model.loads import read_load_csv
from core.model.outages import read_outages_csv
from core.model.weather import read_weather_file
from core.scenario import parse_scenario

from . import fuzzcases as fz
from .common import PVLIB_TMY3, SAMPLES

NON_FINITE = (math.nan, math.inf, -math.inf)


@pytest.mark.parametrize("site", ["maple_hollow", "red_dune"])
def test_every_numeric_setting_refuses_nan_and_infinity(site):
    """Each of the sample's numbers, in turn, as nan, inf and -inf: InputError naming exactly that key path."""
    table = fz.read_table(SAMPLES / site / "scenario.toml")
    places = [(keys, path) for keys, path in fz.leaf_paths(table) if _is_number(_get(table, keys))]
    assert len(places) >= 70
    for keys, path in places:
        for value in NON_FINITE:
            changed = copy.deepcopy(table)
            _set(changed, keys, value)
            with pytest.raises(InputError) as err:
                parse_scenario(tomli_w.dumps(changed), file="scenario.toml", base_dir=SAMPLES / site)
            message = str(err.value)
            assert f"scenario.toml: {path}:" in message, (path, message)


def _is_number(value) -> bool:
    return isinstance(value, int | float) and not isinstance(value, bool)


def _get(table, keys):
    for key in keys:
        table = table[key]
    return table


def _set(table, keys, value) -> None:
    _get(table, keys[:-1])[keys[-1]] = value


# --------------------------------------------------------------------------------------------- load series
@pytest.mark.parametrize("token", ["nan", "NaN", "inf", "-inf", "Infinity", "1e999", "-1e999"])
def test_non_finite_load_values_are_rejected_rows_named_in_a_warning(tmp_path, token):
    index = pd.date_range("2024-05-01", periods=200, freq="15min")
    values = [f"{400 + 10 * (k % 7):.1f}" for k in range(200)]
    values[57] = values[140] = token
    path = tmp_path / "meter.csv"
    path.write_text("time,power_w\n" + "\n".join(f"{t:%Y-%m-%d %H:%M},{v}" for t, v in zip(index, values,
                                                                                        strict=True)) + "\n")
    measured = read_load_csv(path, timezone="Europe/Berlin")
    assert measured.quality.rows_rejected == 2
    assert any("row 59" in w for w in measured.quality.warnings), measured.quality.warnings  # line 59 of the file
    assert np.isfinite(measured.power_w.to_numpy()).all()  # the single gaps are filled, nothing infinite left


def test_a_load_column_of_only_non_finite_values_is_refused(tmp_path):
    index = pd.date_range("2024-05-01", periods=50, freq="h")
    path = tmp_path / "meter.csv"
    path.write_text("time,power_w\n" + "\n".join(f"{t:%Y-%m-%d %H:%M},{'inf' if k % 2 else 'nan'}"
                                                 for k, t in enumerate(index)) + "\n")
    with pytest.raises(InputError) as err:
        read_load_csv(path, timezone="Europe/Berlin")
    assert "meter.csv" in str(err.value) and "power_w" in str(err.value)


# --------------------------------------------------------------------------------------------- weather series
def _year_lines() -> list[str]:
    index = pd.date_range("2023-01-01", periods=8760, freq="h")
    return ["timestamp,ghi,dni,dhi,temp_air,wind_speed,pressure"] + [
        f"{t:%Y-%m-%d %H:%M},{g},{g},0,12.5,2.0,98000"
        for t, g in zip(index, np.where((index.hour >= 8) & (index.hour < 16), 400, 0), strict=True)]


@pytest.mark.parametrize("column", ["ghi", "dni", "dhi", "temp_air", "wind_speed", "pressure"])
@pytest.mark.parametrize("token", ["nan", "inf", "-inf", "1e999"])
def test_non_finite_weather_values_name_the_line_and_column(tmp_path, column, token):
    lines = _year_lines()
    position = lines[0].split(",").index(column)
    cells = lines[4000].split(",")
    cells[position] = token
    lines[4000] = ",".join(cells)
    path = tmp_path / "weather.csv"
    path.write_text("\n".join(lines) + "\n")
    with pytest.raises(InputError) as err:
        read_weather_file(path, fmt="csv", tz=dt.UTC)
    message = str(err.value)
    assert "weather.csv" in message and "line 4001" in message and f"'{column}'" in message, message


@pytest.mark.parametrize("token", ["nan", "inf"])
def test_non_finite_value_in_pvlibs_tmy3_file_is_named(tmp_path, token):
    """The Greensboro TMY3 file pvlib ships, with one GHI cell (line 1000) made non-finite."""
    lines = PVLIB_TMY3.read_text(encoding="utf-8").splitlines()
    header = lines[1].split(",")
    cells = lines[999].split(",")
    cells[header.index("GHI (W/m^2)")] = token
    lines[999] = ",".join(cells)
    path = tmp_path / "greensboro.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    with pytest.raises(InputError) as err:
        read_weather_file(path, fmt="tmy3")
    message = str(err.value)
    assert "greensboro.csv" in message and "line 1000" in message and "GHI" in message, message


# --------------------------------------------------------------------------------------------- outage dates
@pytest.mark.parametrize("token", ["nan", "inf", "NaT", "1e999"])
def test_non_finite_outage_dates_name_the_row(tmp_path, token):
    path = tmp_path / "outages.csv"
    path.write_text(f"start,end\n2023-07-04 13:00,2023-07-04 16:30\n2023-08-01 10:00,{token}\n")
    with pytest.raises(InputError) as err:
        read_outages_csv(path, dt.UTC)
    assert "outages.csv" in str(err.value) and "row 3" in str(err.value)
