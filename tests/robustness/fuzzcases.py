"""Generators of bad and awkward inputs, driven by a ``random.Random``.

The same generators serve two masters: the hypothesis tests hand them a ``Random`` from ``st.randoms()`` (so
hypothesis explores and shrinks), and the figures module hands them ``random.Random(seed)`` for a fixed,
repeatable set of cases. Each generator returns bytes or text; the checks that judge the outcome live with the
tests.
"""

from __future__ import annotations

import copy
import datetime as dt
import math
import random
import tomllib
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import tomli_w

# ------------------------------------------------------------------------------------------------ text and bytes
ENCODINGS = ("utf-8", "utf-8-sig", "utf-16", "utf-16-le", "utf-16-be", "latin-1")

#: Awkward characters that users' files do contain: accents, degree signs, no-break and narrow spaces, a BOM in
#: the middle, control characters, an emoji, quotes of several kinds.
ODD_TEXT = ("Zähler", "°C", "\u00a0", "\u202f", "\ufeff", "\x00", "\x07", "\x1b[31m", "😀", "«»", "\"", "'", "\\",
            "\r", "\t", "Ω", "ß", "–")


def random_text(rng: random.Random, max_len: int = 60) -> str:
    parts = []
    for _ in range(rng.randint(0, max_len // 6 + 1)):
        kind = rng.random()
        if kind < 0.5:
            parts.append("".join(chr(rng.randint(32, 126)) for _ in range(rng.randint(1, 8))))
        elif kind < 0.8:
            parts.append(rng.choice(ODD_TEXT))
        else:
            parts.append(chr(rng.randint(0, 0x2FFF)))
    return "".join(parts)[:max_len]


def random_bytes(rng: random.Random, max_len: int = 400) -> bytes:
    return bytes(rng.randrange(256) for _ in range(rng.randint(0, max_len)))


def encode(rng: random.Random, text: str) -> bytes:
    """``text`` in one of the encodings exporters use (characters an encoding lacks become '?')."""
    return text.encode(rng.choice(ENCODINGS), errors="replace")


# ------------------------------------------------------------------------------------------------ scenarios
TOML_KEYS = ("schema", "name", "latitude", "longitude", "timezone", "source", "path", "ghi_kwh_m2_day", "usable_kwh",
             "rating_w", "efficiency", "tilt_deg", "azimuth_deg", "coupling", "modules", "count", "step_s", "seed",
             "pmax_w", "monthly_kwh", "export_allowed", "random_outages", "zz_unknown")
TOML_SECTIONS = ("[site]", "[weather]", "[load]", "[battery]", "[inverter_charger]", "[modules.m]", "[[arrays]]",
                 "[grid]", "[expansion]", "[tariff]", "[simulation]", "[controllers.c]", "[microinverters.mi]",
                 "[site.inner]", "[[site]]", "[", "[]", "[[arrays]", "[arrays.0]")
TOML_VALUES = ("1", "0", "-1", "1e308", "-1e308", "nan", "+inf", "-inf", "0x10", "1_000", "true", "false", '"x"',
               '""', '"../../etc/passwd"', '"/abs/path.csv"', '"a\\u0000b"', "[1, 2]", "[]", "[[0.1, 0.9], [1.0, 0.95]]",
               "{ per_year = 3, mean_hours = 2, seed = 1 }", "{}", "1979-05-27", "07:32:00", '"""multi\nline"""',
               "'literal'", "[" + ", ".join(["5"] * 12) + "]", "[" + ", ".join(["nan"] * 12) + "]", "9" * 30)


def toml_like_text(rng: random.Random) -> str:
    """Lines built from scenario keys, sections and TOML values, some of it broken, plus stray text."""
    lines = []
    for _ in range(rng.randint(0, 25)):
        kind = rng.random()
        if kind < 0.2:
            lines.append(rng.choice(TOML_SECTIONS))
        elif kind < 0.85:
            lines.append(f"{rng.choice(TOML_KEYS)} = {rng.choice(TOML_VALUES)}")
        elif kind < 0.95:
            lines.append("# " + random_text(rng, 20))
        else:
            lines.append(random_text(rng, 30))
    return "\n".join(lines)


@dataclass(frozen=True)
class Mutation:
    """One change to a valid scenario table: ``op`` at ``path`` (written the way the loader names places)."""

    op: str           # nan, inf, -inf, wrong_type, out_of_range, delete, rename
    path: str         # e.g. "arrays[0].tilt_deg", "weather.ghi_kwh_m2_day[3]"
    keys: tuple       # how to reach it: dict keys and list indices
    named_entry: bool  # the key is the NAME of a module/controller/microinverter (renaming breaks references)


    def named_in(self, message: str) -> bool:
        """The message names the mutated key, a place inside it, or the list it sits in (a point of a curve out
        of range breaks the curve, and the curve's check names the curve)."""
        path = self.path
        while True:
            if any(f"{path}{after}" in message for after in (":", " ", "[", ".")):  # it, or a place inside it
                return True
            if not path.endswith("]"):
                return False
            path = path[: path.rindex("[")]


NAMED_TABLES = ("modules", "controllers", "microinverters")
OPS = ("nan", "inf", "-inf", "wrong_type", "out_of_range", "delete", "rename")


def leaf_paths(table: Any, keys: tuple = (), path: str = "") -> list[tuple[tuple, str]]:
    """Every key (tables included) and list item of a TOML table, with the loader's way of writing its place."""
    out = []
    items = table.items() if isinstance(table, dict) else enumerate(table) if isinstance(table, list) else ()
    for key, value in items:
        sub = f"{path}[{key}]" if isinstance(key, int) else (f"{path}.{key}" if path else key)
        out.append(((*keys, key), sub))
        out.extend(leaf_paths(value, (*keys, key), sub))
    return out


def mutate(rng: random.Random, table: dict) -> tuple[dict, Mutation]:
    """A copy of ``table`` with one mutation applied."""
    table = copy.deepcopy(table)
    paths = leaf_paths(table)
    keys, path = rng.choice(paths)
    parent = table
    for k in keys[:-1]:
        parent = parent[k]
    last = keys[-1]
    value = parent[last]
    numeric = isinstance(value, int | float) and not isinstance(value, bool)
    ops = list(OPS) if numeric else ["wrong_type", "delete", "rename"]
    if isinstance(parent, list):
        ops = [o for o in ops if o not in ("delete", "rename")]
    op = rng.choice(ops)
    named = len(keys) == 2 and keys[0] in NAMED_TABLES
    if op in ("nan", "inf", "-inf"):
        parent[last] = float(op)
    elif op == "out_of_range":
        parent[last] = rng.choice([1e12, -1e12, 10 ** 15, -(10 ** 15)])
    elif op == "wrong_type":
        if isinstance(value, str):
            parent[last] = rng.choice([7, 2.5, True, [1, 2], {"x": 1}])
        elif isinstance(value, bool):
            parent[last] = rng.choice(["yes", 1, [True]])
        elif numeric:
            parent[last] = rng.choice(["12 kW", "", True, [value], {"value": value}, "nan"])
        elif isinstance(value, list):
            parent[last] = rng.choice(["[1, 2]", 3, {"a": 1}, [[[]]]])
        else:  # a table
            parent[last] = rng.choice([1, "table", [1, 2], True])
    elif op == "delete":
        del parent[last]
    else:  # rename: a near miss of the key, as a typo would make it
        new = rng.choice([last + "s", last[:-1], last.upper(), last + "_x", last.replace("_", "")])
        if new == last or new in parent:
            new = last + "_extra"
        parent[new] = parent.pop(last)
        path = path[: len(path) - len(last)] + new
    return table, Mutation(op=op, path=path, keys=keys, named_entry=named)


def mutated_scenario_text(rng: random.Random, table: dict) -> tuple[str, Mutation]:
    mutated, mutation = mutate(rng, table)
    return tomli_w.dumps(mutated), mutation


def read_table(path: Path) -> dict:
    return tomllib.loads(path.read_text(encoding="utf-8"))


# ------------------------------------------------------------------------------------------------ load files
TIME_FORMATS = ("%Y-%m-%d %H:%M", "%d.%m.%Y %H:%M", "%m/%d/%Y %I:%M %p", "%Y-%m-%dT%H:%M:%S%z", "epoch",
                "%Y-%m-%d;%H:%M")
LOAD_HEADERS = ("time,power_w", "Zeitstempel;Leistung [kW]", "timestamp\tenergy_kwh", "date,time,kWh",
                "\"Time\",\"Consumption (W)\"", "ts|meter_kwh", "", "Datum;Zähler °C;Verbrauch kWh")
ODD_NUMBERS = ("nan", "inf", "-inf", "1e999", "", "-", "abc", "1.2.3", "0,5", "-3", "1e40", "12345678901234567890",
               "NaN", "Infinity", "--", "1 234,5", "\"2,5\"")


def load_csv_text(rng: random.Random) -> str:
    """A load export of random shape: separator, header, time format, interval, decimal mark, bad cells."""
    sep = rng.choice([",", ";", "\t", "|"])
    lines = []
    if rng.random() < 0.3:
        lines.append(rng.choice(["# exported by a meter", "Report", "sep=;", "Site: Zähler 3"]))
    header = rng.choice(LOAD_HEADERS)
    if header:
        lines.append(header.replace(",", sep) if sep != "," else header)
    fmt = rng.choice(TIME_FORMATS)
    step = rng.choice([1, 60, 300, 900, 3600, 7200])
    start = dt.datetime(rng.choice([2023, 2024]), rng.randint(1, 12), rng.randint(1, 28), tzinfo=dt.UTC)
    decimal_comma = sep == ";" and rng.random() < 0.7
    bad_share = rng.choice([0.0, 0.0, 0.05, 0.5, 1.0])
    for k in range(rng.choice([0, 1, 2, 5, 30, 300])):
        t = start + dt.timedelta(seconds=step * k)
        stamp = str(int(t.timestamp())) if fmt == "epoch" else t.strftime(fmt).replace(";", sep)
        if rng.random() < bad_share:
            value = rng.choice(ODD_NUMBERS)
        else:
            value = f"{abs(math.sin(k / 7.0)) * 900 + 80:.2f}"
            if decimal_comma:
                value = value.replace(".", ",")
        lines.append(f"{stamp}{sep}{value}")
        if rng.random() < 0.02:
            lines.append(random_text(rng, 30))
    return "\n".join(lines) + rng.choice(["", "\n", "\r\n"])


def load_csv_bytes(rng: random.Random) -> bytes:
    if rng.random() < 0.1:
        return random_bytes(rng)
    return encode(rng, load_csv_text(rng))


# ------------------------------------------------------------------------------------------------ weather files
WEATHER_COLUMNS = ("timestamp", "ghi", "dni", "dhi", "temp_air", "wind_speed", "pressure")
WEATHER_ODD = ("nan", "inf", "-inf", "", "abc", "-9900", "9999", "1e999", "-5", "2023-02-30 00:00", "24:00")


def weather_csv_text(rng: random.Random) -> str:
    """A generic weather CSV of random shape: columns, order, step, length, comment lines, a few bad cells."""
    columns = [c for c in WEATHER_COLUMNS if c in ("timestamp", "ghi") or rng.random() < 0.5]
    if ("dni" in columns) != ("dhi" in columns) and rng.random() < 0.8:  # mostly both or neither, as the format asks
        columns = [c for c in columns if c not in ("dni", "dhi")]
    if rng.random() < 0.2:
        columns.remove(rng.choice(columns))
    rng.shuffle(columns)
    if rng.random() < 0.2:
        columns = [c.upper() if rng.random() < 0.5 else f" {c} " for c in columns]
    comments = ["# latitude = 40", "# longitude = -80", "#", "# written by hand"]
    if rng.random() < 0.2:
        comments += ["# latitude = nan", "# altitude_m: 1e9", "# longitude = east"]
    lines = [rng.choice(comments) for _ in range(rng.choice([0, 0, 1, 2]))]
    lines.append(",".join(columns))
    step = rng.choice([3600, 3600, 3600, 1800, 60, 30, 7200])
    year = rng.choice([2023, 2023, 2024])
    days = 366 if year == 2024 else 365
    full = days * 86400 // step
    rows = rng.choice([full, full, 0, 1, 24, full - 1]) if step >= 1800 else rng.choice([0, 1, 24])
    start = dt.datetime(year, 1, 1)
    bad_rows = {rng.randrange(max(rows, 1)) for _ in range(rng.choice([0, 0, 0, 1, 3]))}
    typical = {"ghi": "120.5", "dni": "300", "dhi": "60", "temp_air": "11.5", "wind_speed": "2.1",
               "pressure": "98000"}
    for k in range(rows):
        t = start + dt.timedelta(seconds=step * k)
        cells = []
        for c in columns:
            name = c.strip().lower()
            if k in bad_rows and rng.random() < 0.5:
                cells.append(rng.choice(WEATHER_ODD))
            elif name == "timestamp":
                cells.append(t.strftime("%Y-%m-%d %H:%M"))
            else:
                cells.append(typical[name] if 7 <= t.hour <= 17 or name not in ("ghi", "dni", "dhi") else "0")
        lines.append(",".join(cells))
    return "\n".join(lines) + "\n"


def weather_csv_bytes(rng: random.Random) -> bytes:
    if rng.random() < 0.1:
        return random_bytes(rng)
    return encode(rng, weather_csv_text(rng))


# ------------------------------------------------------------------------------------------------ outage files
OUTAGE_CELLS = ("2023-07-04 13:00", "2023-07-04 16:30", "", "nan", "NaT", "2024-02-29 10:00", "2023-02-29 10:00",
                "abc", "2023-07-04T13:00+02:00", "0", "1e20", "9999-12-31", "1677-01-01", "2023-13-01 00:00")


def outages_csv_bytes(rng: random.Random) -> bytes:
    if rng.random() < 0.1:
        return random_bytes(rng)
    columns = [rng.choice(["start", "end", "Start", " END", "x"]) for _ in range(rng.randint(1, 3))]
    if rng.random() < 0.6:
        columns = ["start", "end"]
    lines = [",".join(columns)] + [",".join(rng.choice(OUTAGE_CELLS) for _ in columns)
                                   for _ in range(rng.randint(0, 5))]
    return encode(rng, "\n".join(lines) + "\n")


# ------------------------------------------------------------------------------------------------ command lines
NUMBERS = ("nan", "inf", "-inf", "1e308", "-1", "0", "abc", "", "99999999999999999999", "3", "-0", "1e-320", "0x10")


def cli_argv(rng: random.Random, files: dict[str, Path], outputs: Path) -> list[str]:
    """A command line of bad input. ``files`` are readable inputs (kind → path); every path an option might
    write to lies inside ``outputs`` (a fresh folder): a fuzzer must never aim a write at a real file."""
    def any_file() -> str:
        return str(rng.choice(list(files.values())))

    command = rng.choice(["simulate", "inspect-load", "compare", "check", "spacing", "bogus", "", "--json"])
    argv = [command] if command else []
    options = {
        "simulate": ["--json", "--steps-csv"], "inspect-load": ["--timezone", "--unit", "--column", "--json"],
        "compare": ["--count", "--tilt", "--azimuth", "--json"], "check": ["--json"],
        "spacing": ["--latitude", "--tilt", "--length", "--azimuth", "--window", "--json"],
    }.get(command, ["--json", "--verbose"])
    if command in ("simulate", "compare", "check"):
        argv.append(str(files["bad_scenario"]) if rng.random() < 0.8 else any_file())
    elif command == "inspect-load":
        argv.append(str(files["bad_load"]) if rng.random() < 0.8 else any_file())
    for _ in range(rng.randint(0, 4)):
        option = rng.choice(options)
        argv.append(option)
        if option == "--steps-csv":
            argv.append(str(outputs / rng.choice(["steps.csv", "sub/steps.csv", ".", "", "x" * 300])))
        elif option == "--timezone":
            argv.append(rng.choice(["Europe", "Mars/Base", "", "UTC", "x" * 300, "../../etc/localtime"]))
        elif option == "--unit":
            argv.append(rng.choice(["W", "kVA", "", "kWh_register", "nan"]))
        elif option == "--column":
            argv.append(rng.choice(["power_w", "0", "99", "", "nan"]))
        elif option == "--window":
            argv.append(rng.choice(["10-14", "14-10", "nan-14", "10", "-", "0-24", "inf-inf"]))
        elif option not in ("--json", "--verbose"):
            argv.append(rng.choice(NUMBERS))
    if rng.random() < 0.1:
        argv.insert(rng.randrange(len(argv) + 1), random_text(rng, 12).replace("\x00", ""))
    return argv
