"""Shared helpers of the robustness tests: the CLI run in-process, folder snapshots, small scenarios, sanity."""

from __future__ import annotations

import contextlib
import hashlib
import io
import json
import math
import re
import shutil
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pvlib

from core.cli import main

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = ROOT / "sample_sites"
MAPLE = SAMPLES / "maple_hollow"
LOAD_CORPUS = ROOT / "tests" / "data" / "loads"
SCENARIO_CORPUS = ROOT / "tests" / "data" / "scenarios"
#: Open datasets that pvlib ships in its data/ folder: NREL TMY3 for Greensboro NC and TMY2 for Miami FL.
PVLIB_DATA = Path(pvlib.__file__).resolve().parent / "data"
PVLIB_TMY3 = PVLIB_DATA / "723170TYA.CSV"
PVLIB_TMY2 = PVLIB_DATA / "12839.tm2"


# ------------------------------------------------------------------------------------------------ the CLI
@dataclass(frozen=True)
class CliRun:
    code: int
    stdout: str
    stderr: str

    @property
    def error_lines(self) -> list[str]:
        return [line for line in self.stderr.splitlines() if line.strip()]

    @property
    def traceback(self) -> bool:
        return "Traceback (most recent call last)" in self.stderr

    def bad_input_in_one_line(self) -> bool:
        """Exit 2, exactly one line on stderr, no traceback."""
        return self.code == 2 and len(self.stderr.splitlines()) == 1 and not self.traceback


def run_cli(argv: list[str]) -> CliRun:
    """``python -m core ARGV`` in this process, with stdout and stderr captured."""
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        try:
            code = main([str(a) for a in argv])
        except SystemExit as exc:  # argparse's --help prints and exits 0
            code = exc.code if isinstance(exc.code, int) else 1
    return CliRun(code=code, stdout=out.getvalue(), stderr=err.getvalue())


# ------------------------------------------------------------------------------------------------ files
def snapshot(folder: Path) -> dict[str, tuple[int, str]]:
    """Relative path → (size, sha256) of every file below ``folder``; folders and links are listed too."""
    out: dict[str, tuple[int, str]] = {}
    for entry in sorted(Path(folder).rglob("*")):
        rel = entry.relative_to(folder).as_posix()
        if entry.is_symlink():
            out[rel] = (-1, f"link to {entry.readlink()}")
        elif entry.is_file():
            out[rel] = (entry.stat().st_size, hashlib.sha256(entry.read_bytes()).hexdigest())
        else:
            out[rel] = (-2, "folder")
    return out


def files_changed(before: dict, after: dict) -> int:
    """How many entries were added, removed or changed between two snapshots."""
    return sum(before.get(k) != after.get(k) for k in set(before) | set(after))


def copy_site(name: str, dest: Path) -> Path:
    """A copy of a sample site in ``dest`` (tests that write never do it next to the repository's files)."""
    target = dest / name
    shutil.copytree(SAMPLES / name, target)
    return target


# ------------------------------------------------------------------------------------------------ scenarios
MODULE = """
[modules.m]
pmax_w = 400
vmp_v = 34.0
imp_a = 11.8
voc_v = 41.0
isc_a = 12.5
"""

MICRO = """
[microinverters.mi]
ac_rating_w = 350
max_dc_input_w = 450
mppt_min_v = 25
mppt_max_v = 48
max_input_voltage_v = 60
max_input_current_a = 14
"""

CONTROLLER = """
[controllers.c]
max_pv_voltage_v = 150
mppt_min_v = 60
mppt_max_v = 145
max_input_current_a = 50
max_charge_current_a = 60
"""


def monthly_ghi_for(latitude: float, clearness: float = 0.45) -> list[float]:
    """Twelve monthly mean daily GHI figures (kWh/m²/day) a sky at ``latitude`` can give: ``clearness`` times the
    month's mean extraterrestrial irradiation on a horizontal plane (Duffie & Beckman eq. 1.10.3, via the
    generator's own :func:`extraterrestrial_daily_wh_m2`). Polar-night months come out as zero."""
    from core.model.weather.monthly import extraterrestrial_daily_wh_m2

    lengths = (31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31)
    starts = np.cumsum((0, *lengths[:-1]))
    out = []
    for start, n in zip(starts, lengths, strict=True):
        h0 = float(extraterrestrial_daily_wh_m2(np.arange(start + 1, start + n + 1), latitude).mean()) / 1000.0
        out.append(round(clearness * h0, 3))
    return out


def scenario_text(*, latitude: float = 40.0, longitude: float = 0.0, timezone: str | None = None,
                  ghi: list[float] | None = None, temp: list[float] | None = None, body: str = "") -> str:
    """A small scenario on the monthly weather generator; ``body`` adds sections (arrays, battery, load …)."""
    ghi = ghi if ghi is not None else monthly_ghi_for(latitude)
    temp = temp if temp is not None else [2, 3, 7, 11, 15, 19, 22, 21, 17, 12, 7, 3]
    zone = f'timezone = "{timezone}"\n' if timezone else ""
    return (f'name = "robustness"\n[site]\nlatitude = {latitude}\nlongitude = {longitude}\n{zone}'
            f'[weather]\nsource = "monthly"\nghi_kwh_m2_day = {ghi}\ntemp_air_c = {temp}\nseed = 1\n'
            f"{MODULE}\n[inverter_charger]\nrating_w = 3000\n{body}")


def ac_array(*, modules: int, side: str = "backed_up", tilt: float = 30, azimuth: float = 180,
             name: str = "ac") -> str:
    return (f'{MICRO}\n[[arrays]]\nname = "{name}"\ncoupling = "ac"\nside = "{side}"\nmodule = "m"\n'
            f'tilt_deg = {tilt}\nazimuth_deg = {azimuth}\nmicroinverter = "mi"\nmodules = {modules}\n')


def dc_array(*, per_string: int = 3, strings: int = 2, tilt: float = 30, azimuth: float = 180) -> str:
    return (f'{CONTROLLER}\n[[arrays]]\nname = "dc"\ncoupling = "dc"\nmodule = "m"\ntilt_deg = {tilt}\n'
            f'azimuth_deg = {azimuth}\ncontroller = "c"\nmodules_per_string = {per_string}\nstrings = {strings}\n')


BATTERY = "\n[battery]\nusable_kwh = 10\n"
LOAD_300 = "\n[load]\nmonthly_kwh = [300, 300, 300, 300, 300, 300, 300, 300, 300, 300, 300, 300]\n"


# ------------------------------------------------------------------------------------------------ sanity
#: Energy figures that may be negative: the stored change, the balance error, and the loads supplied from PV net
#: of all grid import (below zero when the system's own losses draw more from the grid than PV gives the loads).
SIGNED = ("stored_change", "balance_error", "loads_from_pv")


def sanity_problems(result: dict) -> list[str]:
    """What is wrong with a simulated year's figures: NaN or infinity anywhere in the JSON, a negative energy, or
    an energy balance (docs/design.md §4) that does not close to 1e-6 relative when recomputed from its terms."""
    problems = []
    try:
        json.dumps(result, allow_nan=False)
    except ValueError as exc:
        problems.append(f"not valid JSON: {exc}")
    e = result["energy_kwh"]
    for key, value in e.items():
        if key not in SIGNED and value < -1e-9:
            problems.append(f"{key} = {value} kWh is negative")
    for month in result["months"]:
        for key, value in month.items():
            if key not in SIGNED and key != "month" and value < -1e-9:
                problems.append(f"month {month['month']}: {key} = {value} kWh is negative")
    inflow = e["pv_potential"] + e["grid_import"]
    outflow = (e["load_served"] + e["exported"] + e["curtailed"] + e["clipped"] + e["losses"] + e["stored_change"])
    if not math.isclose(inflow, outflow, rel_tol=1e-6, abs_tol=1e-6):
        problems.append(f"balance does not close: in {inflow} kWh, out {outflow} kWh")
    if e["load_served"] > e["load"] + 1e-6:
        problems.append("more load served than there is")
    if "loads_from_pv" in e and not math.isclose(e["loads_from_pv"], e["load_served"] - e["grid_import"],
                                                  rel_tol=1e-9, abs_tol=1e-6):
        problems.append("loads supplied from PV is not load served less grid import")
    for key in ("self_consumption", "pv_utilisation"):
        value = result["ratios"][key]
        if value is not None and not -1e-9 <= value <= 1 + 1e-9:
            problems.append(f"{key} = {value} is not a share")
    return problems


# ------------------------------------------------------------------------------------------------ outcomes


@dataclass(frozen=True)
class Outcome:
    """What a call made of its input: ``ok``, ``input_error`` (the project's own error) or ``escape`` (anything
    else: a crash that would reach the user as a traceback)."""

    kind: str
    error: BaseException | None = None

    @property
    def message(self) -> str:
        return "" if self.error is None else str(self.error)


def attempt(call) -> Outcome:
    from core.errors import InputError

    try:
        call()
    except InputError as exc:
        return Outcome("input_error", exc)
    except Exception as exc:  # noqa: BLE001 - counting escapes is the point
        return Outcome("escape", exc)
    return Outcome("ok")


#: Mistakes of a whole file, where the file's name is the place.
WHOLE_FILE = ("not found", "is empty", "is not a file", "cannot be opened", "MiB", "not UTF-8", "binary")


def names_place(error: BaseException, file_name: str) -> bool:
    """The message names the file, and a place in it (a key path, row, line, column or byte), or says what is
    wrong with the file as a whole."""
    text = str(error)
    if file_name not in text:
        return False
    return (bool(getattr(error, "where", None)) or re.search(r"\b(line|row|column|byte) \d+", text) is not None
            or any(w in text for w in WHOLE_FILE))
