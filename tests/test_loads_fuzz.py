"""Robustness: whatever text or bytes a load file holds, the reader either imports it or raises InputError.

Property-based (hypothesis): files are assembled from fragments that exporters really produce (timestamps in
several formats, numbers with points or commas, separators, quotes, comment and title lines) mixed with
arbitrary text and bytes.
"""

from __future__ import annotations

import tempfile
from pathlib import Path

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from core.errors import InputError
from core.model.loads import read_load_csv

TIMES = st.sampled_from(["2024-03-31 01:45", "2024-03-31 02:15", "2024-10-27 02:30", "31.12.2023 23:59",
                         "03/10/2024 02:00 AM", "2024-06-01T12:00:00+02:00", "2024-06-01T10:00:00Z",
                         "1717236000", "2024-06-01 24:00", "yesterday", "", "2024-02-30 10:00",
                         "1969-12-31 23:00", "2024-06-01"])
NUMBERS = st.sampled_from(["0,5", "1.25", "-3", "1e40", "nan", "", "abc", "1 234,5", "\"2,5\"", "350 W",
                           "0", "inf", "12345678901234567890", "0.001"])
SEPARATORS = st.sampled_from([",", ";", "\t", "|", " "])


@st.composite
def csv_like(draw) -> bytes:
    sep = draw(SEPARATORS)
    lines = []
    if draw(st.booleans()):
        lines.append(draw(st.sampled_from(["time,power_w", "Datum;Leistung [kW]", "ts\tenergy_kwh",
                                           "# comment", "Export", "a|b|c", "\"time\",\"meter\""])))
    base = draw(st.integers(0, 2000))
    regular = draw(st.booleans())
    for k in range(draw(st.integers(0, 40))):
        kind = draw(st.integers(0, 9))
        if kind < 6 and regular:
            minute = base + 15 * k
            lines.append(f"2024-06-01 {minute // 60 % 24:02d}:{minute % 60:02d}{sep}{draw(NUMBERS)}")
        elif kind < 8:
            lines.append(f"{draw(TIMES)}{sep}{draw(NUMBERS)}")
        else:
            lines.append(draw(st.text(max_size=30)))
    text = "\n".join(lines)
    encoding = draw(st.sampled_from(["utf-8", "utf-16", "latin-1", "utf-8-sig"]))
    data = text.encode(encoding, errors="replace")
    if draw(st.integers(0, 9)) == 0:
        data = draw(st.binary(max_size=200))
    return data


@settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(data=csv_like(), timezone=st.sampled_from([None, "Europe/Berlin", "America/New_York"]),
       unit=st.sampled_from([None, "kW", "kWh_register"]))
def test_reader_only_ever_raises_input_error(data, timezone, unit):
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "fuzz.csv"
        path.write_bytes(data)
        try:
            measured = read_load_csv(path, timezone=timezone, unit=unit)
        except InputError as exc:
            assert "fuzz.csv" in str(exc)
        else:
            power = measured.power_w.to_numpy()
            assert power.size >= 1
            assert not np.isinf(power).any()
            assert measured.quality.interval_s >= 1
        assert sorted(p.name for p in Path(folder).iterdir()) == ["fuzz.csv"]
