"""The what-if state: the page's controls as one frozen record, and the scenario they describe.

Pure functions, no Streamlit: the page reads widgets into :class:`Controls`, :func:`build_scenario` turns a base
scenario and the controls into a validated scenario, and :func:`scenario_download` writes that scenario as a file
that loads back to the same figures.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import hashlib
import re
import tomllib
from dataclasses import dataclass
from pathlib import Path

from core.analyses.options import EXPANSION_OPTIONS, OPTION_LABELS, Option, applicable_options, layout_of
from core.errors import InputError
from core.files import MAX_SCENARIO_BYTES, read_input_bytes, write_atomic
from core.scenario import PATH_KEYS, RandomOutages, Scenario, parse_scenario, scenario_to_dict
from explorer.uploads import MAX_UPLOAD_BYTES  # noqa: F401 - the one upload limit, used here

#: The options the explorer offers for the new panels (every option but the existing system). An *option* is how
#: the new panels join the system; an array's ``coupling`` is only "ac" or "dc" (see the glossary in DEVELOPERS.md).
OPTION_CHOICES = EXPANSION_OPTIONS
OPTION_CHOICE_LABELS = {k: OPTION_LABELS[k] for k in OPTION_CHOICES}
# Earlier names, kept so that code written against them keeps working.
COUPLINGS = OPTION_CHOICES
COUPLING_LABELS = OPTION_CHOICE_LABELS

OUTAGE_MODES = ("none", "scenario", "random")
OUTAGE_LABELS = {"none": "No outages", "scenario": "As in the scenario file", "random": "Random outages"}
DEFAULT_OUTAGES_PER_YEAR = 3.0
DEFAULT_OUTAGE_HOURS = 4.0



@dataclass(frozen=True)
class Controls:
    """Every what-if setting on the page, in the scenario's units."""

    option: str  # one of OPTION_CHOICES (an Option)
    count: int
    tilt_deg: float
    azimuth_deg: float
    module: str
    microinverter: str | None
    battery_kwh: float | None  # None: the system has no battery
    reserve_pct: float | None
    standing_draw_w: float
    export_allowed: bool
    export_limit_w: float
    limiter: bool  # microinverters curtailed by an export limiter ("limiter") or left to run ("none")
    outages: str  # one of OUTAGE_MODES
    outages_per_year: float
    outage_mean_hours: float
    # The DC-coupled option's string layout: the controller of new strings of their own, modules in series, and the
    # existing DC array re-wired with the new modules (None: new strings of their own). None keeps the file's.
    controller: str | None = None
    modules_per_string: int | None = None
    restring: str | None = None


def restring_choices(sc: Scenario, module: str) -> tuple[str, ...]:
    """Existing DC-coupled arrays the new modules could be re-wired with: those of the same module."""
    if module not in sc.modules:
        return ()
    return tuple(a.name for a in sc.arrays if a.coupling == "dc" and a.module_count > 0 and a.module in sc.modules
                 and sc.modules[a.module] == sc.modules[module])


def existing_modules(sc: Scenario, restring: str | None) -> int:
    """Modules of the array re-wired with the new ones (0 when none is)."""
    return next((a.module_count for a in sc.arrays if a.name == restring), 0) if restring else 0


def option_choices(sc: Scenario) -> tuple[str, ...]:
    """The options the scenario's ``[expansion]`` allows, in display order (plain strings, as widgets keep them)."""
    allowed = applicable_options(sc)
    return tuple(o.value for o in OPTION_CHOICES if o in allowed)


couplings = option_choices  # the earlier name


def outage_modes(sc: Scenario) -> tuple[str, ...]:
    """"As in the scenario file" is offered only when the file defines outages."""
    has = sc.grid.outages_path is not None or sc.grid.random_outages is not None
    return OUTAGE_MODES if has else ("none", "random")


def panel_count_max(sc: Scenario) -> int:
    """Upper end of the panel-count control: room to explore well past the planned count."""
    count = sc.expansion.count if sc.expansion else 0
    return int(max(12, 3 * count))


def default_option(sc: Scenario) -> str | None:
    """The option the page shows first: the scenario's own (``[expansion] coupling``), else the first allowed."""
    allowed = option_choices(sc)
    if sc.expansion is not None and sc.expansion.coupling in allowed:
        return sc.expansion.coupling
    return allowed[0] if allowed else None


default_coupling = default_option  # the earlier name


def controls_from_scenario(sc: Scenario, option: str | None = None) -> Controls:
    """The controls that reproduce the scenario as it is (``option`` defaults to the scenario's own coupling,
    else the first allowed one)."""
    if option not in option_choices(sc):
        option = default_option(sc) or Option.AC_BACKED_UP.value
    lay = layout_of(sc)
    e, b, g = sc.expansion, sc.battery, sc.grid
    random = g.random_outages
    return Controls(
        option=option, count=int(lay.count), tilt_deg=float(lay.tilt_deg), azimuth_deg=float(lay.azimuth_deg),
        module=e.module if e else next(iter(sc.modules)),
        microinverter=e.microinverter if e else None,
        battery_kwh=float(b.usable_kwh) if b else None, reserve_pct=float(b.reserve_pct) if b else None,
        standing_draw_w=float(g.standing_draw_w), export_allowed=bool(g.export_allowed),
        export_limit_w=float(g.export_limit_w), limiter=g.ac_control_mode == "limiter",
        outages="scenario" if "scenario" in outage_modes(sc) else "none",
        outages_per_year=float(random.per_year) if random else DEFAULT_OUTAGES_PER_YEAR,
        outage_mean_hours=float(random.mean_hours) if random else DEFAULT_OUTAGE_HOURS,
        controller=e.controller if e else None,
        modules_per_string=_per_string(sc),
        restring=e.restring if e else None,
    )


def _per_string(sc: Scenario) -> int | None:
    """The modules in series the file gives (the re-strung array's own length when it re-strings without one)."""
    e = sc.expansion
    if e is None:
        return None
    if e.modules_per_string:
        return int(e.modules_per_string)
    return next((a.modules_per_string for a in sc.arrays if a.name == e.restring), None) if e.restring else None


def check_controls(sc: Scenario, c: Controls) -> None:
    """Settings that cannot work together, named as the page names them."""
    if c.option not in option_choices(sc):
        raise InputError(f"the option {OPTION_CHOICE_LABELS.get(c.option, c.option)!r} needs more information in "
                         "the scenario's [expansion]", where="Coupling",
                         hint="AC-coupled options need a microinverter, the DC-coupled one a controller and a battery")
    if c.module not in sc.modules:
        raise InputError(f"no module named {c.module!r}", where="Module")
    if c.option in ("ac_backed_up", "ac_grid") and c.microinverter not in sc.microinverters:
        raise InputError(f"no microinverter named {c.microinverter!r}", where="Microinverter")
    if c.option == "dc" and c.controller is not None and c.controller not in sc.controllers:
        raise InputError(f"no controller named {c.controller!r}", where="Controller")
    if c.option == "dc" and c.restring is not None and c.restring not in restring_choices(sc, c.module):
        raise InputError(f"the new modules cannot be re-wired with {c.restring!r}", where="Re-string",
                         hint="only an existing DC-coupled array of the same module can be re-strung with them; "
                              "choose new strings of their own or the array's module")
    if c.export_allowed and c.export_limit_w <= 0:
        raise InputError("export is allowed but the export limit is 0 W", where="Export limit",
                         hint="set a limit above 0 W, or choose zero export")
    b = sc.battery
    if b is not None and c.reserve_pct is not None and c.reserve_pct < b.floor_pct:
        raise InputError(f"the outage reserve ({c.reserve_pct:.0f} %) is below the outage floor ({b.floor_pct:.0f} %)",
                         where="Outage reserve", hint="the reserve kept while the grid is up must be at least the floor")
    if c.outages == "scenario" and "scenario" not in outage_modes(sc):
        raise InputError("the scenario file defines no outages", where="Outages", hint="choose none or random")


def apply_controls(sc: Scenario, c: Controls) -> Scenario:
    """The scenario with the controls written into it (the expansion, battery, grid and outage settings)."""
    e = sc.expansion
    if e is not None:
        micro = c.microinverter if e.microinverter is not None and c.microinverter is not None else e.microinverter
        # cost_ac / cost_dc are for the file's count of panels: another count is priced per panel, so that the
        # saved file's costs match its count
        e = dataclasses.replace(e.priced_for(c.count), tilt_deg=float(c.tilt_deg), azimuth_deg=float(c.azimuth_deg),
                                module=c.module, microinverter=micro,
                                # written only when it says more than the default choice (so a file reloads equal)
                                coupling=c.option if e.coupling is not None or c.option != default_option(sc) else None)
        if c.option == "dc":  # the string layout belongs to the DC-coupled option; the AC ones leave it as it is
            e = dataclasses.replace(
                e, controller=c.controller if c.controller is not None else e.controller,
                modules_per_string=c.modules_per_string if c.modules_per_string is not None else e.modules_per_string,
                # the file's strings count is for its own count; with_option arranges the count asked
                strings=e.strings if c.modules_per_string in (None, e.modules_per_string) else None,
                restring=c.restring)
    b = sc.battery
    if b is not None and c.battery_kwh is not None:
        b = dataclasses.replace(b, usable_kwh=float(c.battery_kwh),
                                reserve_pct=float(c.reserve_pct if c.reserve_pct is not None else b.reserve_pct))
    mode = "limiter" if c.limiter else ("none" if sc.grid.ac_control_mode == "limiter" else sc.grid.ac_control_mode)
    g = dataclasses.replace(sc.grid.with_ac_control(mode), standing_draw_w=float(c.standing_draw_w),
                            export_allowed=bool(c.export_allowed),
                            export_limit_w=float(c.export_limit_w) if c.export_allowed else sc.grid.export_limit_w)
    if c.outages == "none":
        g = dataclasses.replace(g, outages_path=None, random_outages=None)
    elif c.outages == "random":
        seed = sc.grid.random_outages.seed if sc.grid.random_outages else 0
        g = dataclasses.replace(g, outages_path=None, random_outages=RandomOutages(
            per_year=float(c.outages_per_year), mean_hours=float(c.outage_mean_hours), seed=seed))
    return dataclasses.replace(sc, expansion=e, battery=b, grid=g)


def build_scenario(sc: Scenario, c: Controls) -> Scenario:
    """Apply the controls and validate the result as the scenario loader would (every cross-check)."""
    check_controls(sc, c)
    out = apply_controls(sc, c)
    import tomli_w

    text = tomli_w.dumps(scenario_to_dict(out))
    return parse_scenario(text, file="the page's settings", base_dir=sc.base_dir, confine_to=sc.confine_to)


# --------------------------------------------------------------------------------------------- files
def slug(text: str) -> str:
    """A file-name-safe form of a scenario's name."""
    s = re.sub(r"[^A-Za-z0-9]+", "-", text).strip("-").lower()
    return s or "scenario"


def download_name(sc: Scenario, suffix: str, today: dt.date | None = None) -> str:
    """``<scenario>_<date><suffix>``, e.g. ``maple-hollow_2025-06-01.toml``."""
    return f"{slug(sc.name)}_{(today or dt.date.today()).isoformat()}{suffix}"


def data_files(sc: Scenario) -> list[Path]:
    """The data files a scenario names (absolute)."""
    return list(sc.data_files().values())


def scenario_download(sc: Scenario, option: str, today: dt.date | None = None) -> str:
    """The scenario as TOML text for download, with data files named by their file names only.

    Loading it back (with those files in the same folder) gives the same scenario; the chosen coupling travels
    as ``[expansion] coupling``.
    """
    import tomli_w

    table = scenario_to_dict(sc)
    for section, key in PATH_KEYS:
        if section in table and key in table[section]:
            table[section][key] = Path(table[section][key]).name
    names = ", ".join(p.name for p in data_files(sc)) or "none"
    head = (f"# {sc.name}: saved from the secondroof explorer on {(today or dt.date.today()).isoformat()}.\n"
            f"# Keep it in one folder with the data files it names: {names}.\n")
    if "expansion" in table and option in OPTION_CHOICES:
        table["expansion"]["coupling"] = option
    return head + tomli_w.dumps(table)


def safe_upload_name(name: str) -> str:
    """The uploaded file's base name with anything but letters, digits, dot, dash and underscore replaced."""
    base = Path(name.replace("\\", "/")).name
    base = re.sub(r"[^A-Za-z0-9._-]+", "_", base).lstrip(".")
    return base or "upload"


def content_folder(folder: Path, *contents: bytes) -> Path:
    """A subfolder named after the contents: a new upload under an old name gets a new path, so nothing cached
    for the old file is reused."""
    digest = hashlib.sha256()
    for c in contents:
        digest.update(len(c).to_bytes(8, "little") + c)
    path = Path(folder) / digest.hexdigest()[:16]
    path.mkdir(parents=True, exist_ok=True)
    return path


def save_upload(folder: Path, name: str, data: bytes, *, limit_bytes: int = MAX_UPLOAD_BYTES) -> Path:
    """Store an uploaded file in the session's own folder (never next to the user's files)."""
    if len(data) > limit_bytes:
        raise InputError(f"the file is {len(data) / 2**20:.1f} MB, more than the {limit_bytes / 2**20:.0f} MB this "
                         "page accepts", file=name, hint="resample the data to 5 or 15 minutes, or trim it to one year")
    if not data:
        raise InputError("the file is empty", file=name)
    return write_atomic(Path(folder) / safe_upload_name(name), data)


def read_upload_scenario(folder: Path, name: str) -> tuple[Scenario, str | None]:
    """Parse an uploaded scenario from the session folder: paths resolve there and may not leave it."""
    path = Path(folder) / safe_upload_name(name)
    raw = read_input_bytes(path, kind="scenario file", max_bytes=MAX_SCENARIO_BYTES)
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError("the scenario file is not UTF-8 text", file=name, where=f"byte {exc.start}",
                         hint="save it as UTF-8") from exc
    sc = parse_scenario(text, file=name, base_dir=Path(folder), confine_to=Path(folder))
    return sc, sc.expansion.coupling if sc.expansion else None


def sample_sites(root: Path) -> dict[str, Path]:
    """Every folder under ``root`` with a scenario.toml, by the scenario's name (folder name as fallback)."""
    out: dict[str, Path] = {}
    for path in sorted(Path(root).glob("*/scenario.toml")):
        try:
            name = str(tomllib.loads(path.read_text("utf-8")).get("name") or path.parent.name)
        except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError, RecursionError):
            name = path.parent.name
        if name in out:
            name = f"{name} ({path.parent.name})"
        out[name] = path
    return out


# ------------------------------------------------------------------------------------- uploaded data files
LOAD_CHANNELS = {"backed_up": "Backed-up loads", "grid_only": "Grid-only loads"}


@dataclass(frozen=True)
class DataOverrides:
    """Data files uploaded on the page that replace the scenario's own (absolute paths in the session folder)."""

    load_path: str | None = None
    load_channel: str = "backed_up"
    load_column: str | None = None
    load_unit: str | None = None
    weather_path: str | None = None
    # Twelve monthly totals (kWh, None for a month without one) for ``load_channel``: they scale the filled days
    # of its record to the bills, and with all twelve a week of readings is enough to build the year.
    monthly_kwh: tuple[float | None, ...] | None = None


def apply_overrides(sc: Scenario, ov: DataOverrides) -> Scenario:
    """The scenario reading the uploaded files instead of its own. A replaced load channel drops the scenario's
    bill totals for it: they described the old record."""
    if ov.load_path:
        # The schema has one ``unit`` for both load channels: the page's choice (or None, decided from the
        # file) then applies to both.
        if ov.load_channel == "grid_only":
            load = dataclasses.replace(sc.load, grid_only_path=ov.load_path, grid_only_column=ov.load_column,
                                       grid_only_monthly_kwh=None, unit=ov.load_unit)
        else:
            load = dataclasses.replace(sc.load, path=ov.load_path, column=ov.load_column, monthly_kwh=None,
                                       unit=ov.load_unit)
        sc = dataclasses.replace(sc, load=load)
    if ov.monthly_kwh is not None:
        key = "grid_only_monthly_kwh" if ov.load_channel == "grid_only" else "monthly_kwh"
        sc = dataclasses.replace(sc, load=dataclasses.replace(sc.load, **{key: tuple(ov.monthly_kwh)}))
    if ov.weather_path:
        sc = dataclasses.replace(sc, weather=dataclasses.replace(sc.weather, source="file", path=ov.weather_path,
                                                                 format=None))
    return sc
