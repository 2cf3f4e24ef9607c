"""Write the corpus of malformed and awkward load files used by tests/test_loads_corpus.py.

Run from the repository root:  .venv/bin/python tests/data/loads/make_corpus.py

Every file is made here from one invented, deterministic household profile (``true_power_w``), so the true
energy of each clean or repairable file is known by construction and written to ``manifest.json`` beside the
files, with what the importer must say about the file: ``ok`` (imports, with the listed text in its quality
warnings) or ``error`` (InputError whose message contains the listed text). The files are committed; this
script documents how they were made and rewrites them identically.
"""

from __future__ import annotations

import gzip
import json
from datetime import UTC, datetime, timedelta
from pathlib import Path
from zoneinfo import ZoneInfo

import numpy as np

HERE = Path(__file__).resolve().parent
START = datetime(2024, 3, 1, tzinfo=UTC)
MANIFEST: list[dict] = []


def true_power_w(t_s: np.ndarray) -> np.ndarray:
    """An invented household: a 180 W floor, a daily hump and a 15-minute on/off appliance pattern."""
    day = np.sin(np.pi * ((t_s % 86400) / 86400.0)) ** 2
    appliance = ((t_s // 900) % 7 == 3) * 900.0
    return 180.0 + 420.0 * day + appliance


def utc_steps(start: datetime, step_s: int, n: int) -> list[datetime]:
    return [start + timedelta(seconds=step_s * k) for k in range(n)]


def seconds(times: list[datetime]) -> np.ndarray:
    return np.array([t.timestamp() for t in times])


def energy_kwh(times: list[datetime], step_s: int) -> float:
    return float(true_power_w(seconds(times)).sum() * step_s / 3.6e6)


def iso(t: datetime) -> str:
    return t.strftime("%Y-%m-%dT%H:%M:%SZ")


def write(name: str, text: str | bytes, *, encoding: str = "utf-8", expect: str = "ok",
          contains: tuple[str, ...] = (), energy: float | None = None, rel_tol: float = 1e-3,
          kwargs: dict | None = None, clean: bool = False, note: str = "") -> None:
    data = text if isinstance(text, bytes) else text.encode(encoding)
    (HERE / name).write_bytes(data)
    MANIFEST.append({"name": name, "expect": expect, "contains": list(contains), "energy_kwh": energy,
                     "rel_tol": rel_tol, "kwargs": kwargs or {}, "clean": clean, "note": note})


def table(times: list[datetime], values: list[str], header: str, fmt=iso, sep: str = ",") -> str:
    rows = [header] + [f"{fmt(t)}{sep}{v}" for t, v in zip(times, values, strict=True)]
    return "\n".join(rows) + "\n"


def main() -> None:
    for old in HERE.iterdir():
        if old.name not in ("make_corpus.py",) and old.is_file():
            old.unlink()
    q15 = utc_steps(START, 900, 4 * 24 * 3)        # three days of quarter hours
    watts = true_power_w(seconds(q15))
    e15 = energy_kwh(q15, 900)
    w_text = [f"{w:.1f}" for w in watts]
    kw_text = [f"{w / 1000:.4f}" for w in watts]
    kw_comma = [s.replace(".", ",") for s in kw_text]

    # --- encodings -------------------------------------------------------------------------------------
    body = table(q15, w_text, "time\tpower_w", sep="\t").replace(",", "\t")
    write("utf16le_bom_tab.csv", b"\xff\xfe" + body.encode("utf-16-le"), energy=e15, clean=True,
          note="UTF-16 little-endian with byte-order mark, tab separated")
    write("utf16be_bom.csv", b"\xfe\xff" + table(q15, w_text, "time,power_w").encode("utf-16-be"),
          energy=e15, clean=True, note="UTF-16 big-endian with byte-order mark")
    write("utf16le_no_bom.csv", table(q15, w_text, "time,power_w").encode("utf-16-le"), energy=e15,
          clean=True, note="UTF-16 without byte-order mark")
    write("utf8_bom.csv", b"\xef\xbb\xbf" + table(q15, w_text, "Zeitstempel,Leistung (W)").encode(),
          energy=e15, clean=True, note="UTF-8 with byte-order mark")
    latin = ("Relevé de consommation - maison d'été\nCompteur n° 0042\n\n"
             + table(q15, kw_comma, "Horodatage;Puissance [kW]", sep=";"))
    write("latin1_preamble.csv", latin, encoding="latin-1", energy=e15, clean=True,
          note="Latin-1 text above a semicolon table with decimal commas")

    # --- separators, decimals, layout ----------------------------------------------------------------------
    berlin = ZoneInfo("Europe/Berlin")
    local = [t.astimezone(berlin) for t in q15]
    rows = ["Datum;Uhrzeit;Leistung [kW]"] + [f"{t:%d.%m.%Y};{t:%H:%M};{v}" for t, v in zip(local, kw_comma,
                                                                                           strict=True)]
    write("semicolon_decimal_comma_date_time.csv", "\n".join(rows) + "\n", energy=e15, clean=True,
          kwargs={"timezone": "Europe/Berlin"}, note="separate date and time columns, decimal comma")
    junk = ("Household energy export\nExported on 2024-05-02 10:00\nDevice;ABC-123\n\nSite;Test\n"
            + table(q15, w_text, "timestamp;load_w", sep=";"))
    write("header_junk_lines.csv", junk, energy=e15, clean=True, note="title, device and date lines above")
    lines = table(q15, w_text, "time,power_w").splitlines()
    commented = ["# exported by a logger", "# units: W", *lines[:100], "# logger restarted", *lines[100:]]
    write("comment_lines.csv", "\n".join(commented) + "\n", energy=e15, clean=True,
          note="comment lines at the top and in the middle")
    units_row = "time;load\n;kW\n" + "\n".join(f"{iso(t)};{v}" for t, v in zip(q15, kw_comma, strict=True))
    write("units_row.csv", units_row + "\n", energy=e15, clean=True, note="a row of units under the names")
    write("pipe_separated.csv", table(q15, w_text, "time|power_w", sep="|"), energy=e15, clean=True)
    write("crlf_newlines.csv", table(q15, w_text, "time,power_w").replace("\n", "\r\n"), energy=e15,
          clean=True, note="Windows line ends")
    trailing = "time;power_w;\n" + "".join(f"{iso(t)};{v};\n" for t, v in zip(q15, w_text, strict=True))
    write("trailing_separator.csv", trailing, energy=e15, clean=True)
    quoted = "\"time\",\"load_kw\"\n" + "".join(f"\"{iso(t)}\",\"{v}\"\n"
                                               for t, v in zip(q15, kw_comma, strict=True))
    write("quoted_decimal_comma.csv", quoted, energy=e15, clean=True,
          note="comma separated with quoted decimal-comma values")
    write("no_header.csv", "\n".join(f"{iso(t)},{v}" for t, v in zip(q15, w_text, strict=True)) + "\n",
          energy=e15, contains=("no header row", "column 'column 2'"), kwargs={"unit": "W"},
          note="data from the first line on; with no header the unit must be given")
    several = "time,voltage_v,power_w,pv_power_w\n" + "".join(
        f"{iso(t)},230.1,{v},0\n" for t, v in zip(q15, w_text, strict=True))
    write("several_numeric_columns.csv", several, energy=e15, contains=("column 'power_w' used as the load",))
    unitless = table(q15, kw_text, "time,value")
    write("unknown_unit.csv", unitless, expect="error",
          contains=("column 'value'", "has no unit", "as kW: ", "as kWh per 15-minute interval: ", "load.unit"),
          note="a neutral header at 15 minutes: power or energy per interval cannot be told, so it is refused")
    epoch = "unix_time,power_w\n" + "".join(f"{int(t.timestamp())},{v}\n" for t, v in zip(q15, w_text,
                                                                                          strict=True))
    write("epoch_seconds.csv", epoch, energy=e15, clean=True)
    wh = [f"{w * 0.25:.3f}" for w in watts]
    write("wh_per_interval.csv", table(q15, wh, "time,energy_wh"), energy=e15, clean=True)

    # --- rows to repair ------------------------------------------------------------------------------------
    order = np.r_[0:50, 120:200, 50:120, 200:len(q15)]
    shuffled = "time,power_w\n" + "".join(f"{iso(q15[k])},{w_text[k]}\n" for k in order)
    write("unsorted.csv", shuffled, energy=e15, contains=("not in time order (first at row 132",))
    dup_lines = table(q15, w_text, "time,power_w").splitlines()
    dup_lines.insert(41, f"{iso(q15[39])},9999.0")
    write("duplicates.csv", "\n".join(dup_lines) + "\n", energy=e15,
          contains=("duplicate timestamp", "first at row 42"))
    neg = list(w_text)
    neg[30] = "-250.0"
    write("negative_values.csv", table(q15, neg, "time,power_w"), energy=e15, rel_tol=0.01,
          contains=("negative value (first at row 32",))
    spike = list(w_text)
    spike[100] = "250000"
    write("spikes.csv", table(q15, spike, "time,power_w"), energy=e15, rel_tol=0.01,
          contains=("spike", "first at row 102"))
    huge = list(w_text)
    huge[60] = "9.9e37"
    write("huge_values.csv", table(q15, huge, "time,power_w"), energy=e15, rel_tol=0.01,
          contains=("above 1000 kW", "first at row 62"))
    text_in = list(w_text)
    text_in[10] = "error"
    text_in[11] = "n/a"
    write("text_in_numeric.csv", table(q15, text_in, "time,power_w"), energy=e15, rel_tol=0.01,
          contains=("not a number (first at row 12: 'error')", "empty value (first at row 13"))
    bad_t = table(q15, w_text, "time,power_w").splitlines()
    bad_t[20] = "2024-13-45T25:61:00Z," + w_text[19]
    write("some_bad_timestamps.csv", "\n".join(bad_t) + "\n", energy=e15, rel_tol=0.01,
          contains=("timestamp unreadable (first at row 21",))
    extra = table(q15, w_text, "time,power_w").splitlines()
    extra[15] = extra[15] + ",17,oops"
    write("wrong_field_count.csv", "\n".join(extra) + "\n", energy=e15, rel_tol=0.01,
          contains=("more fields than the header skipped (first at row 16)",))
    old_row = table(q15, w_text, "time,power_w").splitlines()
    old_row.insert(5, "1970-01-01T00:00:00Z,300")
    write("row_from_1970.csv", "\n".join(old_row) + "\n", energy=e15,
          contains=("before 1990", "first at row 6"))
    far = table(q15, w_text, "time,power_w").splitlines()
    far.append("2023-01-01T00:00:00Z,300")
    write("far_away_row.csv", "\n".join(far) + "\n", energy=e15,
          contains=("60 days away", f"first at row {len(far)}"))
    gap = [k for k in range(len(q15)) if not 100 <= k < 140]  # ten hours missing
    write("long_gap.csv", table([q15[k] for k in gap], [w_text[k] for k in gap], "time,power_w"),
          energy=energy_kwh([q15[k] for k in gap], 900),
          contains=("longer than 2 h left missing", "from row 101 to row 102"))
    short = [k for k in range(len(q15)) if not 100 <= k < 104]  # one hour missing
    write("short_gap.csv", table([q15[k] for k in short], [w_text[k] for k in short], "time,power_w"),
          energy=e15, rel_tol=0.01, contains=("filled by linear interpolation (first after row 101)",))

    # --- timestamps ----------------------------------------------------------------------------------------
    offsets = utc_steps(datetime(2024, 3, 30, tzinfo=UTC), 900, 4 * 48)
    write("mixed_offsets.csv", table(offsets, [f"{w:.1f}" for w in true_power_w(seconds(offsets))],
                                     "time,power_w", fmt=lambda t: t.astimezone(berlin).isoformat()),
          energy=energy_kwh(offsets, 900), clean=True, note="offsets change from +01:00 to +02:00")
    naive_mix = table(q15, w_text, "time,power_w").splitlines()
    naive_mix[30] = f"{q15[29]:%Y-%m-%d %H:%M:%S}," + w_text[29]
    write("mixed_naive_and_offset.csv", "\n".join(naive_mix) + "\n", expect="error",
          contains=("has a UTC offset but row 31 has none",))
    ny = ZoneInfo("America/New_York")
    us = utc_steps(datetime(2024, 3, 9, 5, tzinfo=UTC), 3600, 72)  # local midnight 9 March on, three days
    us_rows = "Date/Time,Usage (kW)\n" + "".join(
        f"{t.astimezone(ny):%m/%d/%Y %I:%M %p},{w / 1000:.4f}\n"
        for t, w in zip(us, true_power_w(seconds(us)), strict=True))
    write("us_dates_ampm.csv", us_rows, energy=energy_kwh(us, 3600), clean=True,
          kwargs={"timezone": "America/New_York"}, note="month/day/year, 12-hour clock, spring transition")
    end_label = [t + timedelta(minutes=15) for t in q15]
    rows24 = "Zeit;Leistung [W]\n" + "".join(
        f"{(t.astimezone(berlin) - timedelta(days=1)):%d.%m.%Y} 24:00;{v}\n" if f"{t.astimezone(berlin):%H:%M}" == "00:00"
        else f"{t.astimezone(berlin):%d.%m.%Y %H:%M};{v}\n" for t, v in zip(end_label, w_text, strict=True))
    write("midnight_24.csv", rows24, energy=e15, clean=True,
          kwargs={"timezone": "Europe/Berlin", "label": "end"}, note="interval-end labels written as 24:00")
    spring = utc_steps(datetime(2024, 3, 30, 23, tzinfo=UTC), 900, 4 * 24)
    std = [(t + timedelta(hours=1)).replace(tzinfo=None) for t in spring]  # logger on UTC+1 all year
    write("nonexistent_local_time.csv", table(std, [f"{w:.1f}" for w in true_power_w(seconds(spring))],
                                              "time,power_w", fmt=lambda t: f"{t:%Y-%m-%d %H:%M}"),
          kwargs={"timezone": "Europe/Berlin"},
          contains=("does not exist", "first at row 10", "'Etc/GMT-1', i.e. UTC+01:00"), rel_tol=0.05,
          energy=energy_kwh(spring, 900))
    naive_utc = table(q15, w_text, "time,power_w", fmt=lambda t: f"{t:%Y-%m-%d %H:%M}")
    write("naive_no_timezone.csv", naive_utc, energy=e15, contains=("column 'time'", "taken as UTC"))
    jitter = [t + timedelta(seconds=int(3 * np.sin(k))) for k, t in enumerate(utc_steps(START, 60, 600))]
    write("irregular_jitter.csv", table(jitter, [f"{w:.1f}" for w in true_power_w(seconds(jitter))],
                                        "time,power_w"),
          energy=energy_kwh(utc_steps(START, 60, 600), 60), rel_tol=0.01, clean=True)
    one_s = utc_steps(START, 1, 600)
    write("one_second.csv", table(one_s, [f"{w:.1f}" for w in true_power_w(seconds(one_s))],
                                  "time,power_w", fmt=lambda t: t.strftime("%Y-%m-%d %H:%M:%S")),
          energy=energy_kwh(one_s, 1), contains=("taken as UTC",))

    # --- registers -----------------------------------------------------------------------------------------
    edges = utc_steps(START, 900, len(q15) + 1)
    cumulative = 15000.0 + np.concatenate([[0.0], np.cumsum(watts * 0.25 / 1000.0)])
    reset = cumulative.copy()
    reset[150:] -= cumulative[149]
    write("register_reset.csv", table(edges, [f"{x:.4f}" for x in reset], "time,meter_kwh"), energy=e15,
          contains=("reset to zero", "first at row 152"))
    down = cumulative.copy()
    down[80] -= 5.0                      # one reading out of sequence
    down[200:] -= 0.5                    # the register falls and stays lower
    write("register_goes_down.csv", table(edges, [f"{x:.4f}" for x in down], "time,meter_kwh"),
          energy=e15, rel_tol=0.01,
          contains=("register reading lower than its neighbours (first at row 82",
                    "the register falls 1 time(s) (first at row 202"))

    # --- refusals ------------------------------------------------------------------------------------------
    write("empty.csv", b"", expect="error", contains=("empty", "row 1"))
    write("whitespace_only.csv", "\n  \n\t\n", expect="error", contains=("empty",))
    write("only_header.csv", "time,power_w\n", expect="error", contains=("no data rows", "row 1"))
    write("binary_garbage.csv", bytes(range(256)) * 8, expect="error", contains=("binary",))
    write("compressed.csv.gz", gzip.compress(table(q15, w_text, "time,power_w").encode(), mtime=0),
          expect="error", contains=("binary",))
    write("one_row.csv", "time,power_w\n2024-03-01T00:00:00Z,350\n", expect="error",
          contains=("1 data row(s) (row 2)", "at least two readings"))
    status = "time,status\n" + "".join(f"{iso(t)},{'ok' if k % 3 else 'fail'}\n" for k, t in enumerate(q15))
    write("text_column_only.csv", status, expect="error", contains=("no column besides the timestamps",))
    words = "time,power_w\n" + "".join(f"yesterday at {k} o'clock,{v}\n" for k, v in enumerate(w_text))
    write("unparseable_timestamps.csv", words, expect="error", contains=("no row with a date and time",))
    write("missing_column_given.csv", table(q15, kw_text, "time,load_kw"), expect="error",
          kwargs={"column": "Power"}, contains=("column 'Power' not found", "'time', 'load_kw'"))
    daily = utc_steps(START, 86400, 30)
    write("daily_values.csv", table(daily, ["12.5"] * 30, "time,energy_kwh"), expect="error",
          contains=("24.0 h apart",))
    write("single_column.csv", "time\n" + "".join(f"{iso(t)}\n" for t in q15), expect="error",
          contains=("no columns found",))
    all_neg = [f"-{w:.1f}" for w in watts]
    write("all_negative.csv", table(q15, all_neg, "time,power_w"), expect="error",
          contains=("only 0 usable row(s)", "negative value"))
    quote = table(q15, w_text, "time,power_w").splitlines()
    quote[40] = quote[40].replace(",", ",\"")
    write("unmatched_quote.csv", "\n".join(quote) + "\n", energy=e15,
          contains=("unmatched quote character (first at row 41)",))

    (HERE / "manifest.json").write_text(json.dumps({"files": MANIFEST}, indent=1) + "\n")
    print(f"wrote {len(MANIFEST)} files to {HERE}")


if __name__ == "__main__":
    main()
