"""The scenario file (TOML, schema 1): validated, frozen dataclasses and a loader and saver.

One human-editable file describes a site, its existing system and the expansion being considered
(DESIGN.md §4). Units are in the key names. The schema is the dataclasses below: each field's type
and its ``metadata`` (range, choices) drive one general validator, so adding a key means adding a
field. Unknown keys are an error naming the key and the nearest valid one.
"""

from __future__ import annotations

import dataclasses
import difflib
import math
import os
import re
import tomllib
import types
import typing
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Literal

from core.errors import InputError
from core.timebase import standard_offset

SCHEMA = 1


def _num(lo: float | None = None, hi: float | None = None, *, lo_open: bool = False, unit: str = "",
         count: int | None = None, missing: float | None = None) -> dict:
    """Field metadata: the sensible range, the unit for messages, a list's length, a list's "no value" marker."""
    return {"lo": lo, "hi": hi, "lo_open": lo_open, "unit": unit, "count": count, "missing": missing}


MONTHS = 12


# --------------------------------------------------------------------------------------------- sections
@dataclass(frozen=True)
class Site:
    latitude: float = field(metadata=_num(-90, 90, unit="degrees north"))
    longitude: float = field(metadata=_num(-180, 180, unit="degrees east"))
    altitude_m: float = field(default=0.0, metadata=_num(-500, 9000))
    timezone: str | None = None  # IANA name; found from latitude/longitude when missing


@dataclass(frozen=True)
class Weather:
    source: Literal["file", "monthly"] = "file"
    path: str | None = None
    format: Literal["epw", "tmy3", "tmy2", "csv"] | None = None
    ghi_kwh_m2_day: tuple[float, ...] | None = field(default=None, metadata=_num(0, 12, unit="kWh/m²/day", count=MONTHS))
    temp_air_c: tuple[float, ...] | None = field(default=None, metadata=_num(-60, 50, count=MONTHS))
    seed: int = field(default=0, metadata=_num(0))  # numpy takes non-negative seeds only


@dataclass(frozen=True)
class Load:
    path: str | None = None
    column: str | None = None
    unit: Literal["W", "kW", "Wh", "kWh", "kWh_register"] | None = None
    timezone: str | None = None  # of naive timestamps in the file; defaults to the site's
    grid_only_path: str | None = None
    grid_only_column: str | None = None
    # Bill totals, January first; -1 marks a month with no bill (read as None).
    monthly_kwh: tuple[float | None, ...] | None = field(default=None, metadata=_num(0, 1e6, count=MONTHS, missing=-1))
    grid_only_monthly_kwh: tuple[float | None, ...] | None = field(
        default=None, metadata=_num(0, 1e6, count=MONTHS, missing=-1))


@dataclass(frozen=True)
class Module:
    pmax_w: float = field(metadata=_num(1, 1000, lo_open=True))
    vmp_v: float = field(metadata=_num(1, 200))
    imp_a: float = field(metadata=_num(0.1, 50))
    voc_v: float = field(metadata=_num(1, 250))
    isc_a: float = field(metadata=_num(0.1, 50))
    gamma_pmax_pct_per_c: float = field(default=-0.35, metadata=_num(-1.5, 0))
    beta_voc_pct_per_c: float = field(default=-0.27, metadata=_num(-1.5, 0))
    alpha_isc_pct_per_c: float = field(default=0.05, metadata=_num(0, 0.5))
    length_m: float = field(default=1.7, metadata=_num(0.2, 4))
    width_m: float = field(default=1.1, metadata=_num(0.2, 3))


@dataclass(frozen=True)
class Battery:
    usable_kwh: float = field(metadata=_num(0, 2000))
    nominal_v: float = field(default=48.0, metadata=_num(6, 1500, lo_open=True))
    max_charge_a: float = field(default=100.0, metadata=_num(0, 10000))
    max_discharge_a: float = field(default=100.0, metadata=_num(0, 10000))
    roundtrip_efficiency: float = field(default=0.92, metadata=_num(0.3, 1, lo_open=True))
    reserve_pct: float = field(default=30.0, metadata=_num(0, 100))
    floor_pct: float = field(default=5.0, metadata=_num(0, 100))
    initial_pct: float = field(default=50.0, metadata=_num(0, 100))


@dataclass(frozen=True)
class InverterCharger:
    rating_w: float = field(metadata=_num(0, 1e6, lo_open=True))
    # A number, or a part-load curve [[load_fraction, efficiency], ...].
    efficiency: float | tuple[tuple[float, float], ...] = field(default=0.93, metadata=_num(0, 1, lo_open=True))
    charger_rating_w: float | None = field(default=None, metadata=_num(0, 1e6))  # AC input; None = rating_w
    charger_efficiency: float = field(default=0.92, metadata=_num(0.3, 1, lo_open=True))
    idle_w: float = field(default=25.0, metadata=_num(0, 1000))
    # Highest frequency the inverter-charger shifts its islanded output to, to curtail AC-coupled PV.
    islanded_max_hz: float | None = field(default=None, metadata=_num(45, 66))


@dataclass(frozen=True)
class Controller:
    max_pv_voltage_v: float = field(metadata=_num(10, 2000))
    mppt_min_v: float = field(metadata=_num(0, 2000))
    mppt_max_v: float = field(metadata=_num(0, 2000))
    max_input_current_a: float = field(metadata=_num(0, 500, lo_open=True))
    max_charge_current_a: float = field(metadata=_num(0, 1000, lo_open=True))
    efficiency: float = field(default=0.97, metadata=_num(0.3, 1, lo_open=True))
    battery_margin_v: float = field(default=5.0, metadata=_num(0, 100))  # PV must exceed battery V by this


@dataclass(frozen=True)
class Microinverter:
    ac_rating_w: float = field(metadata=_num(0, 10000, lo_open=True))
    max_dc_input_w: float = field(metadata=_num(0, 10000, lo_open=True))
    mppt_min_v: float = field(metadata=_num(0, 1000))
    mppt_max_v: float = field(metadata=_num(0, 1000))
    max_input_voltage_v: float = field(metadata=_num(0, 1000, lo_open=True))
    max_input_current_a: float = field(metadata=_num(0, 100, lo_open=True))
    efficiency: float = field(default=0.96, metadata=_num(0.3, 1, lo_open=True))
    inputs: int = field(default=1, metadata=_num(1, 8))
    grid_code: Literal["ieee1547_2018", "en50549_1"] = "ieee1547_2018"
    fw_start_hz: float | None = field(default=None, metadata=_num(45, 66))  # overrides the grid code's default
    fw_droop_pct: float | None = field(default=None, metadata=_num(0.5, 20))
    trip_hz: float | None = field(default=None, metadata=_num(45, 66))


@dataclass(frozen=True)
class Array:
    name: str
    coupling: Literal["dc", "ac"]
    module: str
    tilt_deg: float = field(metadata=_num(0, 90))
    azimuth_deg: float = field(metadata=_num(0, 360))
    mount: Literal["rack", "flush"] = "flush"
    losses_pct: float = field(default=10.0, metadata=_num(0, 99))
    row_pitch_m: float | None = field(default=None, metadata=_num(0, 100, lo_open=True))
    # DC-coupled
    controller: str | None = None
    modules_per_string: int | None = field(default=None, metadata=_num(1, 100))
    strings: int | None = field(default=None, metadata=_num(1, 100))
    # AC-coupled
    side: Literal["backed_up", "grid"] | None = None
    microinverter: str | None = None
    modules: int | None = field(default=None, metadata=_num(0, 1000))

    @property
    def module_count(self) -> int:
        if self.coupling == "dc":
            return (self.modules_per_string or 0) * (self.strings or 0)
        return self.modules or 0


@dataclass(frozen=True)
class RandomOutages:
    per_year: float = field(default=4.0, metadata=_num(0, 365))
    mean_hours: float = field(default=3.0, metadata=_num(0, 24 * 30, lo_open=True))
    seed: int = field(default=0, metadata=_num(0))  # numpy takes non-negative seeds only


@dataclass(frozen=True)
class Grid:
    export_allowed: bool = False
    export_limit_w: float = field(default=0.0, metadata=_num(0, 1e6))
    standing_draw_w: float = field(default=30.0, metadata=_num(0, 10000))
    metering: Literal["site", "inverter"] = "site"
    ac_export_control: Literal["none", "limiter"] = "none"
    recharge_reserve_from_grid: bool = True
    outages_path: str | None = None
    random_outages: RandomOutages | None = None


@dataclass(frozen=True)
class Expansion:
    module: str
    count: int = field(default=2, metadata=_num(0, 1000))
    tilt_deg: float = field(default=30.0, metadata=_num(0, 90))
    azimuth_deg: float = field(default=180.0, metadata=_num(0, 360))
    mount: Literal["rack", "flush"] = "flush"
    losses_pct: float = field(default=10.0, metadata=_num(0, 99))
    row_pitch_m: float | None = field(default=None, metadata=_num(0, 100, lo_open=True))
    microinverter: str | None = None  # AC option
    controller: str | None = None  # DC option: an existing array's controller, or one used by none (added)
    modules_per_string: int | None = field(default=None, metadata=_num(1, 100))
    strings: int | None = field(default=None, metadata=_num(1, 100))
    # Costs of the whole expansion at ``count`` panels; another count is priced per panel (see priced_for).
    cost_ac: float = field(default=0.0, metadata=_num(0, 1e8))
    cost_dc: float = field(default=0.0, metadata=_num(0, 1e8))
    # The coupling being looked at first (the explorer's choice when the file was saved); all are compared anyway.
    coupling: Literal["ac_backed_up", "ac_grid", "dc"] | None = None

    def priced_for(self, count: int) -> Expansion:
        """The same expansion at another panel count, its costs scaled per panel (a count of 0 keeps them)."""
        scale = count / self.count if self.count > 0 and count > 0 else 1.0
        return dataclasses.replace(self, count=int(count), cost_ac=round(self.cost_ac * scale, 2),
                                   cost_dc=round(self.cost_dc * scale, 2))


@dataclass(frozen=True)
class Tariff:
    currency: str = "EUR"
    import_price_per_kwh: float = field(default=0.30, metadata=_num(0, 100))
    export_price_per_kwh: float = field(default=0.0, metadata=_num(0, 100))
    escalation_pct: float = field(default=2.0, metadata=_num(-50, 100))
    discount_pct: float = field(default=3.0, metadata=_num(-50, 100))
    years: int = field(default=20, metadata=_num(1, 60))
    degradation_pct_per_year: float = field(default=0.5, metadata=_num(0, 10))


@dataclass(frozen=True)
class Simulation:
    # None = the weather's own step. Finer than a minute is refused: a year at 1 s is 31.5 million steps.
    step_s: int | None = field(default=None, metadata=_num(60, 3600))
    design_low_temp_c: float | None = field(default=None, metadata=_num(-60, 40))
    design_high_temp_c: float | None = field(default=None, metadata=_num(0, 90))


@dataclass(frozen=True)
class Scenario:
    name: str
    site: Site
    weather: Weather
    modules: dict[str, Module]
    inverter_charger: InverterCharger
    load: Load = field(default_factory=Load)
    battery: Battery | None = None
    controllers: dict[str, Controller] = field(default_factory=dict)
    microinverters: dict[str, Microinverter] = field(default_factory=dict)
    arrays: tuple[Array, ...] = ()
    grid: Grid = field(default_factory=Grid)
    expansion: Expansion | None = None
    tariff: Tariff = field(default_factory=Tariff)
    simulation: Simulation = field(default_factory=Simulation)
    schema: int = SCHEMA
    # Where relative paths are resolved from; not part of the file and not compared.
    base_dir: Path = field(default=Path("."), compare=False, repr=False)
    # When set, every path must resolve inside this folder (uploads, shared machines).
    confine_to: Path | None = field(default=None, compare=False, repr=False)

    def resolve(self, relative: str, where: str = "path") -> Path:
        """The absolute path of a file named in the scenario, checked to stay inside ``confine_to``.

        Symbolic links are followed before the check, so a link inside the folder that points out of it is
        refused too.
        """
        if "\x00" in str(relative):
            raise InputError("the path contains a NUL character", where=where, hint="write a plain file name")
        try:
            path = (self.base_dir / relative).resolve()
        except (OSError, RuntimeError, ValueError) as exc:  # too long, a symlink loop, …
            raise InputError(f"path {relative!r} cannot be resolved ({exc})", where=where,
                             hint="check the path; keep data files in the scenario's folder") from None
        if self.confine_to is not None:
            root = Path(self.confine_to).resolve()
            if not path.is_relative_to(root):
                raise InputError(f"path {relative!r} points outside the scenario's folder", where=where,
                                 hint="keep data files in the same folder as the scenario file")
        return path

    def data_files(self) -> dict[str, Path]:
        """The data files the scenario names, as ``{"section.key": absolute path}``."""
        return {f"{section}.{key}": self.resolve(value, f"{section}.{key}") for section, key in PATH_KEYS
                if (value := getattr(getattr(self, section), key))}

    def replace(self, **changes: Any) -> Scenario:
        return dataclasses.replace(self, **changes)


# ----------------------------------------------------------------------------------------- validation
class _Reader:
    """Builds dataclasses from TOML tables, with errors that name the file and the key path."""

    def __init__(self, file: str | None) -> None:
        self.file = file

    def fail(self, where: str, message: str, hint: str | None = None) -> typing.NoReturn:
        raise InputError(message, file=self.file, where=where, hint=hint)

    def build(self, cls: type, table: Any, where: str) -> Any:
        if not isinstance(table, dict):
            header = f"[[{where[:where.rindex('[')]}]]" if where.endswith("]") else f"[{where}]"  # arrays[0]
            self.fail(where, f"expected a table, found {type(table).__name__}",
                      f"write it as {header} followed by key = value lines")
        hints = typing.get_type_hints(cls)
        fields = {f.name: f for f in dataclasses.fields(cls) if f.init and f.name not in ("base_dir", "confine_to")}
        for key in table:
            if key not in fields:
                near = difflib.get_close_matches(key, list(fields), n=1, cutoff=0.5)
                hint = f"did you mean {near[0]!r}?" if near else f"valid keys: {', '.join(fields)}"
                self.fail(f"{where}.{key}" if where else key, "unknown key", hint)
        values = {}
        for name, f in fields.items():
            path = f"{where}.{name}" if where else name
            if name in table:
                values[name] = self.value(hints[name], table[name], path, f.metadata)
            elif f.default is dataclasses.MISSING and f.default_factory is dataclasses.MISSING:
                self.fail(path, "required key is missing", f"add {name} = … to [{where or 'top level'}]")
        return cls(**values)

    def value(self, tp: Any, raw: Any, where: str, meta: Any) -> Any:
        origin = typing.get_origin(tp)
        args = typing.get_args(tp)
        if origin in (typing.Union, types.UnionType):
            options = [a for a in args if a is not type(None)]
            if len(options) == 1:
                return self.value(options[0], raw, where, meta)
            errors = []
            for option in options:  # e.g. a number or a curve
                try:
                    return self.value(option, raw, where, meta)
                except InputError as exc:
                    errors.append(exc)
            raise errors[-1]
        if origin is Literal:
            if raw not in args:
                near = difflib.get_close_matches(str(raw), [str(a) for a in args], n=1, cutoff=0.3)
                hint = f"did you mean {near[0]!r}?" if near else None
                self.fail(where, f"{raw!r} is not one of {', '.join(repr(a) for a in args)}", hint)
            return raw
        if origin is tuple:
            if not isinstance(raw, list):
                self.fail(where, f"expected a list, found {raw!r}")
            if len(args) == 2 and args[1] is Ellipsis:
                count = meta.get("count") if meta else None
                if count is not None and len(raw) != count:
                    self.fail(where, f"expected {count} values (one per month, January first), found {len(raw)}")
                missing = meta.get("missing") if meta else None
                return tuple(None if missing is not None and item == missing
                             else self.value(args[0], item, f"{where}[{i}]", meta) for i, item in enumerate(raw))
            if len(raw) != len(args):
                self.fail(where, f"expected {len(args)} values, found {len(raw)}")
            return tuple(self.value(a, item, f"{where}[{i}]", {}) for i, (a, item) in enumerate(zip(args, raw, strict=True)))
        if origin is dict:
            if not isinstance(raw, dict):
                self.fail(where, "expected a table of named entries", f"write [{where}.NAME] sections")
            return {name: self.build(args[1], sub, f"{where}.{name}") for name, sub in raw.items()}
        if dataclasses.is_dataclass(tp):
            return self.build(tp, raw, where)
        if tp is bool:
            if not isinstance(raw, bool):
                self.fail(where, f"expected true or false, found {raw!r}")
            return raw
        if tp is str:
            if not isinstance(raw, str):
                self.fail(where, f"expected text in quotes, found {raw!r}")
            return raw
        if tp is int or tp is float:
            if isinstance(raw, bool) or not isinstance(raw, int | float):
                unit = meta.get("unit") if meta else ""
                self.fail(where, f"expected a number{' in ' + unit if unit else ''}, found {raw!r}",
                          "units are part of the key name; write the bare number")
            if tp is int and (not float(raw).is_integer()):
                self.fail(where, f"expected a whole number, found {raw!r}")
            if not math.isfinite(raw):
                self.fail(where, f"{raw!r} is not a finite number")
            self.check_range(raw, where, meta)
            return int(raw) if tp is int else float(raw)
        if tp is Path:
            return Path(raw)
        raise TypeError(f"schema type {tp!r} is not handled")  # a programming error, not bad input

    def check_range(self, x: float, where: str, meta: Any) -> None:
        if not meta:
            return
        lo, hi = meta.get("lo"), meta.get("hi")
        if lo is not None and (x < lo or (meta.get("lo_open") and x == lo)):
            self.fail(where, f"{x!r} is {'not above' if meta.get('lo_open') else 'below'} the lowest sensible value {lo}",
                      "check the unit in the key name")
        if hi is not None and x > hi:
            self.fail(where, f"{x!r} is above the highest sensible value {hi}", "check the unit in the key name")


def _cross_check(sc: Scenario, r: _Reader) -> None:
    """References between sections, and rules that involve more than one key."""
    def ref(name: str | None, table: dict, where: str, kind: str) -> None:
        if name is None:
            r.fail(where, f"a {kind} must be named here")
        if name not in table:
            near = difflib.get_close_matches(name, list(table), n=1, cutoff=0.3)
            hint = f"did you mean {near[0]!r}?" if near else (
                f"defined: {', '.join(table)}" if table else f"add a [{kind}s.{name}] section")
            r.fail(where, f"no {kind} named {name!r}", hint)

    for where, zone in (("site.timezone", sc.site.timezone), ("load.timezone", sc.load.timezone)):
        if zone is not None:
            try:
                standard_offset(zone)
            except InputError as exc:
                r.fail(where, exc.message, exc.hint)
    if sc.weather.source == "file" and not sc.weather.path:
        r.fail("weather.path", "source = 'file' needs a path", "give the weather file's path, relative to the scenario")
    if sc.weather.source == "monthly" and (sc.weather.ghi_kwh_m2_day is None or sc.weather.temp_air_c is None):
        r.fail("weather", "source = 'monthly' needs ghi_kwh_m2_day and temp_air_c (12 values each)")
    names = set()
    for i, a in enumerate(sc.arrays):
        where = f"arrays[{i}]"
        if a.name in names:
            r.fail(f"{where}.name", f"the name {a.name!r} is used twice", "give every array its own name")
        names.add(a.name)
        ref(a.module, sc.modules, f"{where}.module", "module")
        if a.coupling == "dc":
            ref(a.controller, sc.controllers, f"{where}.controller", "controller")
            for key in ("modules_per_string", "strings"):
                if getattr(a, key) is None:
                    r.fail(f"{where}.{key}", "a DC-coupled array needs this key")
            if sc.battery is None:
                r.fail(f"{where}.coupling", "DC-coupled arrays charge a battery, but there is no [battery]")
        else:
            ref(a.microinverter, sc.microinverters, f"{where}.microinverter", "microinverter")
            if a.side is None:
                r.fail(f"{where}.side", "an AC-coupled array needs side = 'backed_up' or 'grid'")
            if a.modules is None:
                r.fail(f"{where}.modules", "an AC-coupled array needs a module count")
    b = sc.battery
    if b is not None and b.floor_pct > b.reserve_pct:
        r.fail("battery.floor_pct", f"the outage floor ({b.floor_pct} %) is above the reserve ({b.reserve_pct} %)",
               "the floor is the lowest SOC in an outage and must not exceed the reserve kept while the grid is up")
    for name, c in sc.controllers.items():
        if c.mppt_min_v >= c.mppt_max_v:
            r.fail(f"controllers.{name}.mppt_min_v", "the MPPT window is empty (min ≥ max)")
    for name, m in sc.microinverters.items():
        if m.mppt_min_v >= m.mppt_max_v:
            r.fail(f"microinverters.{name}.mppt_min_v", "the MPPT window is empty (min ≥ max)")
    eff = sc.inverter_charger.efficiency
    if isinstance(eff, tuple):
        fracs = [p[0] for p in eff]
        if len(eff) < 2 or any(b <= a for a, b in zip(fracs, fracs[1:], strict=False)):
            r.fail("inverter_charger.efficiency", "a part-load curve needs two or more points with rising load fractions")
        if any(not 0 < p[1] <= 1 for p in eff) or any(not 0 <= p[0] <= 1.5 for p in eff):
            r.fail("inverter_charger.efficiency", "curve points are [load_fraction 0…1, efficiency 0…1]")
    if sc.grid.export_allowed and sc.grid.export_limit_w <= 0:
        r.fail("grid.export_limit_w", "export is allowed but the export limit is 0 W",
               "set export_limit_w, or export_allowed = false for zero export")
    e = sc.expansion
    if e is not None:
        ref(e.module, sc.modules, "expansion.module", "module")
        if e.microinverter is not None:
            ref(e.microinverter, sc.microinverters, "expansion.microinverter", "microinverter")
        if e.controller is not None:
            ref(e.controller, sc.controllers, "expansion.controller", "controller")


# ---------------------------------------------------------------------------------------- load / save
def parse_scenario(text: str, *, file: str | None = None, base_dir: Path | None = None,
                   confine_to: Path | None = None) -> Scenario:
    """Parse and validate scenario TOML text."""
    r = _Reader(file)
    try:
        table = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        # tomllib says "(at line 3, column 9)" or "(at end of document)" in its text; make that the place.
        found = re.search(r"\s*\(at (line \d+, column \d+|end of document)\)", str(exc))
        where = f"line {text.count(chr(10)) + 1} (the end of the file)" if found is None or \
            found[1] == "end of document" else found[1]
        reason = str(exc) if found is None else str(exc).replace(found[0], "")
        r.fail(where, f"not valid TOML: {reason}", "check quotes, brackets and '=' signs on that line")
    schema = table.pop("schema", SCHEMA)
    if schema != SCHEMA:
        r.fail("schema", f"schema {schema!r} is not supported", f"this version reads schema = {SCHEMA}")
    for key in ("arrays",):
        if key in table and not isinstance(table[key], list):
            r.fail(key, "expected [[arrays]] entries")
    sc = r.build(Scenario, table, "")
    sc = dataclasses.replace(sc, base_dir=Path(base_dir or ".").resolve(), confine_to=confine_to)
    _cross_check(sc, r)
    try:
        return _absolute_paths(sc)
    except InputError as exc:  # name the scenario file in path errors too
        r.fail(exc.where or "", exc.message, exc.hint)


def _absolute_paths(sc: Scenario) -> Scenario:
    """Store every file path resolved (and confinement-checked), so equal scenarios compare equal
    wherever their files were saved."""
    sections = {}
    for section, key in PATH_KEYS:
        value = getattr(getattr(sc, section), key)
        if value is not None:
            resolved = str(sc.resolve(value, f"{section}.{key}"))
            sections.setdefault(section, {})[key] = resolved
    for section, changes in sections.items():
        sc = dataclasses.replace(sc, **{section: dataclasses.replace(getattr(sc, section), **changes)})
    return sc


def load_scenario(path: str | os.PathLike, *, confine_to: Path | None = None) -> Scenario:
    """Read a scenario file; relative paths in it are resolved from its folder."""
    path = Path(path)
    try:
        raw = path.read_bytes()
    except (OSError, ValueError) as exc:  # ValueError: a NUL character in the name
        raise InputError(f"cannot read the scenario file: {getattr(exc, 'strerror', None) or exc}", file=str(path),
                         hint="check the path") from exc
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError("the scenario file is not UTF-8 text", file=str(path),
                         where=f"byte {exc.start}", hint="save it as UTF-8") from exc
    return parse_scenario(text, file=str(path), base_dir=path.parent.resolve(), confine_to=confine_to)


#: Where a scenario names data files: (section, key).
PATH_KEYS = (("weather", "path"), ("load", "path"), ("load", "grid_only_path"), ("grid", "outages_path"))


def scenario_to_dict(sc: Scenario, *, relative_to: Path | None = None) -> dict:
    """A TOML-ready table (None dropped). Paths are rewritten relative to ``relative_to`` when given."""
    def plain(obj: Any, missing: float | None = None) -> Any:
        if dataclasses.is_dataclass(obj):
            return {f.name: plain(getattr(obj, f.name), f.metadata.get("missing")) for f in dataclasses.fields(obj)
                    if f.compare and getattr(obj, f.name) is not None}
        if isinstance(obj, dict):
            return {k: plain(v) for k, v in obj.items()}
        if isinstance(obj, tuple | list):
            return [missing if v is None else plain(v) for v in obj]
        return obj

    out = plain(sc)
    out = {"schema": out.pop("schema"), "name": out.pop("name"), **out}
    if relative_to is not None:
        for section, key in PATH_KEYS:
            if section in out and key in out[section]:
                target = (sc.base_dir / out[section][key]).resolve()
                out[section][key] = Path(os.path.relpath(target, Path(relative_to).resolve())).as_posix()
    return out


def scenario_to_toml(sc: Scenario, *, relative_to: Path | None = None) -> str:
    import tomli_w

    return tomli_w.dumps(scenario_to_dict(sc, relative_to=relative_to))


def save_scenario(sc: Scenario, path: str | os.PathLike) -> Path:
    """Write the scenario atomically (temporary file, then rename); it loads back equal."""
    from core.files import write_atomic

    path = Path(path)
    write_atomic(path, scenario_to_toml(sc, relative_to=path.parent).encode("utf-8"))
    return path
