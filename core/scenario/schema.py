"""The scenario file's schema (TOML, schema 1): one frozen dataclass per section.

Each field's type and its ``metadata`` (range, unit, list length) drive one general validator
(:mod:`core.scenario.reader`), so adding a key means adding a field. The keys and their meaning are
listed in ``docs/design.md`` (the scenario reference).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Literal

from core.errors import InputError
from core.scenario.equipment import Battery, Controller, InverterCharger, Microinverter, Module
from core.scenario.fields import _num

SCHEMA = 1
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
    # The farthest a weather file's own location may be from the site (km); beyond 50 km a warning is given.
    max_distance_km: float = field(default=500.0, metadata=_num(0, 20040, unit="km"))


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
class Measured:
    """The existing system's monitoring export, for calibration (``python -m core calibrate``).

    Columns are named as in the file's header. ``pv`` is one column for all existing DC-coupled arrays, or a
    table ``{array name = column}`` with one column per array. ``unit`` applies to the PV, grid-import and load
    columns (per-interval energy or mean power, as for [load]); ``soc`` is in percent.
    """

    path: str | None = None
    unit: Literal["W", "kW", "Wh", "kWh", "kWh_register"] | None = None
    pv: str | dict[str, str] | None = None
    grid_import: str | None = None
    load: str | None = None
    soc: str | None = None
    timezone: str | None = None  # of naive timestamps in the file; defaults to the site's
    weather_path: str | None = None  # measured weather of the same period (any format the weather reader takes)


@dataclass(frozen=True)
class Array:
    name: str
    coupling: Literal["dc", "ac"]
    module: str
    # Required unless the array names its face, whose orientation it then takes (filled in when read).
    tilt_deg: float = field(default=None, metadata=_num(0, 90))  # type: ignore[assignment]
    azimuth_deg: float = field(default=None, metadata=_num(0, 360))  # type: ignore[assignment]
    face: str | None = None  # the [[faces]] entry the array lies on
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
class Obstacle:
    """A box near a face (chimney, dormer, a neighbour's wall, a tree as a box), placed from the face's centre."""

    name: str
    azimuth_deg: float = field(metadata=_num(0, 360))  # direction from the face's centre (180 = south)
    distance_m: float = field(metadata=_num(0, 1000))  # horizontal distance from the face's centre
    height_m: float = field(metadata=_num(0, 500))  # top above the face's lowest edge
    width_m: float = field(default=1.0, metadata=_num(0, 1000, lo_open=True))
    depth_m: float = field(default=1.0, metadata=_num(0, 1000, lo_open=True))


@dataclass(frozen=True)
class Face:
    """A roof face where modules are or may go: its orientation, room, layout and surroundings."""

    name: str
    tilt_deg: float = field(metadata=_num(0, 90))
    azimuth_deg: float = field(metadata=_num(0, 360))
    mount: Literal["rack", "flush"] = "flush"
    losses_pct: float = field(default=10.0, metadata=_num(0, 99))
    max_modules: int = field(default=0, metadata=_num(0, 1000))  # all modules it holds, existing ones included
    row_pitch_m: float | None = field(default=None, metadata=_num(0, 100, lo_open=True))
    # Layout and surroundings (for shading): rows × columns of modules, their orientation and bypass diodes.
    rows: int | None = field(default=None, metadata=_num(1, 100))
    columns: int | None = field(default=None, metadata=_num(1, 200))
    module_orientation: Literal["portrait", "landscape"] = "portrait"
    bypass_diodes: int = field(default=3, metadata=_num(1, 12))
    horizon: tuple[tuple[float, float], ...] = ()  # (azimuth°, elevation°) points, interpolated; () = flat
    obstacles: tuple[Obstacle, ...] = ()


@dataclass(frozen=True)
class Design:
    """What the design search may buy and where it may put it; absent, it is built from [expansion]."""

    module: str
    new_modules_max: int = field(default=4, metadata=_num(1, 200))
    faces: tuple[str, ...] | None = None  # None = every face with room
    controllers: tuple[str, ...] | None = None  # None = all
    microinverters: tuple[str, ...] | None = None  # None = all
    export_controls: tuple[str, ...] | None = None  # None = every mode the engine supports
    cost_fixed_dc: float = field(default=0.0, metadata=_num(0, 1e7))
    cost_fixed_ac: float = field(default=0.0, metadata=_num(0, 1e7))
    cost_per_module: float = field(default=0.0, metadata=_num(0, 1e7))
    cost_restring: float = field(default=0.0, metadata=_num(0, 1e7))
    cost_limiter: float = field(default=0.0, metadata=_num(0, 1e7))


@dataclass(frozen=True)
class RandomOutages:
    per_year: float = field(default=4.0, metadata=_num(0, 365))
    mean_hours: float = field(default=3.0, metadata=_num(0, 24 * 30, lo_open=True))
    seed: int = field(default=0, metadata=_num(0))  # numpy takes non-negative seeds only
    # Independent outage years run together for the statistics (P50, P90, worst); the seed's first draw is the
    # year the rest of the results show.
    draws: int = field(default=200, metadata=_num(1, 10000))
    # Seasonality: twelve relative rates of outages starting in each month, January first; None = even.
    month_weights: tuple[float, ...] | None = field(default=None, metadata=_num(0, 1000, count=MONTHS))


#: How AC-coupled output is held back when the loads and battery cannot take it (``grid.ac_control``):
#: "none" — what is not absorbed leaks into the grid; "limiter" — an export limiter curtails the microinverters;
#: "islanded" — the inverter-charger runs the backed-up side off-grid and curtails its microinverters by
#: frequency-watt, connecting only to charge below the reserve or to cover what the battery cannot;
#: "relay" — a relay opens the microinverter circuit above an SOC and closes it below a lower one.
AC_CONTROL_MODES = ("none", "limiter", "islanded", "relay")
AcControl = Literal["none", "limiter", "islanded", "relay"]


@dataclass(frozen=True)
class ChargeWindow:
    """Grid charging by the clock: inside ``[start, end)`` local hours the charger lifts the SOC to the target."""

    hours: tuple[int, int] = field(default=(1, 5), metadata=_num(0, 24))
    target_pct: float = field(default=60.0, metadata=_num(0, 100))


@dataclass(frozen=True)
class Grid:
    export_allowed: bool = False
    export_limit_w: float = field(default=0.0, metadata=_num(0, 1e6))
    standing_draw_w: float = field(default=30.0, metadata=_num(0, 10000))
    metering: Literal["site", "inverter"] = "site"
    ac_export_control: AcControl | None = None  # the earlier name of ac_control, still read
    ac_control: AcControl | None = None  # None = ac_export_control, else "none"
    relay_open_pct: float = field(default=95.0, metadata=_num(0, 100))  # "relay": opens at or above this SOC …
    relay_close_pct: float = field(default=85.0, metadata=_num(0, 100))  # … and closes at or below this one
    islanded_limiter: bool = False  # "islanded": while connected, an export limiter curtails (else it leaks)
    recharge_reserve_from_grid: bool = True
    charge_window: ChargeWindow | None = None
    outages_path: str | None = None
    random_outages: RandomOutages | None = None
    momentary_per_month: float = field(default=0.0, metadata=_num(0, 100))  # interruptions shorter than 5 min
    restore_delay_s: float = field(default=0.0, metadata=_num(0, 3600))  # grid-only loads back after an interruption

    @property
    def ac_control_mode(self) -> AcControl:
        """The way AC-coupled output is held back, from ``ac_control`` or its earlier name."""
        return self.ac_control or self.ac_export_control or "none"

    def with_ac_control(self, mode: AcControl) -> Grid:
        """The same grid with another mode, written under the key the scenario already uses."""
        if self.ac_control is None and self.ac_export_control is not None:
            return dataclasses.replace(self, ac_export_control=mode)
        return dataclasses.replace(self, ac_control=mode)


@dataclass(frozen=True)
class Expansion:
    module: str
    count: int = field(default=2, metadata=_num(0, 1000))
    tilt_deg: float = field(default=30.0, metadata=_num(0, 90))
    azimuth_deg: float = field(default=180.0, metadata=_num(0, 360))
    mount: Literal["rack", "flush"] = "flush"
    losses_pct: float = field(default=10.0, metadata=_num(0, 99))
    row_pitch_m: float | None = field(default=None, metadata=_num(0, 100, lo_open=True))
    face: str | None = None  # the [[faces]] entry the new panels go on, while they keep its tilt and azimuth
    microinverter: str | None = None  # AC option
    controller: str | None = None  # DC option: an existing array's controller, or one used by none (added)
    modules_per_string: int | None = field(default=None, metadata=_num(1, 100))
    strings: int | None = field(default=None, metadata=_num(1, 100))
    # DC option: the existing DC-coupled array (by name) whose modules are re-wired together with the new ones as
    # ``modules_per_string`` in series on that array's controller and face (None: the new modules form their own
    # strings on ``controller``).
    restring: str | None = None
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
class TariffPeriod:
    """A time-of-use period: its import price applies inside ``[start, end)`` local clock hours (daylight
    saving applies) on the named days of the listed months. The first matching period wins."""

    name: str
    price_per_kwh: float = field(metadata=_num(0, 100))
    hours: tuple[int, int] = field(default=(0, 24), metadata=_num(0, 24))
    days: Literal["all", "weekdays", "weekends"] = "all"
    months: tuple[int, ...] = field(default=(1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12), metadata=_num(1, 12))


@dataclass(frozen=True)
class Tariff:
    currency: str = "EUR"
    import_price_per_kwh: float = field(default=0.30, metadata=_num(0, 100))
    fixed_per_month: float = field(default=0.0, metadata=_num(0, 1e5))
    holidays: str | None = None  # country code of the holidays package; holidays are priced as weekend days
    periods: tuple[TariffPeriod, ...] = ()
    export_price_per_kwh: float = field(default=0.0, metadata=_num(0, 100))
    escalation_pct: float = field(default=2.0, metadata=_num(-50, 100))
    discount_pct: float = field(default=3.0, metadata=_num(-50, 100))
    years: int = field(default=20, metadata=_num(1, 60))
    degradation_pct_per_year: float = field(default=0.5, metadata=_num(0, 10))


@dataclass(frozen=True)
class SimulationSettings:
    # None = the weather's own step. Finer than a minute is refused: a year at 1 s is 31.5 million steps.
    step_s: int | None = field(default=None, metadata=_num(60, 3600))
    design_low_temp_c: float | None = field(default=None, metadata=_num(-60, 40))
    design_high_temp_c: float | None = field(default=None, metadata=_num(0, 90))
    # Strings on a shaded face: a scanning tracker finds the global maximum; a hill-climbing one the first it meets.
    mppt_tracker: Literal["global", "local"] = "global"
    # Irradiance inside each hour of an hourly weather file at a finer step: synthetic minutes or a smooth curve.
    sub_hourly_sun: Literal["synthetic", "smooth"] = "synthetic"


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
    faces: tuple[Face, ...] = ()
    grid: Grid = field(default_factory=Grid)
    expansion: Expansion | None = None
    design: Design | None = None
    tariff: Tariff = field(default_factory=Tariff)
    simulation: SimulationSettings = field(default_factory=SimulationSettings)
    measured: Measured | None = None
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
                if (value := getattr(getattr(self, section), key, None))}

    def replace(self, **changes: Any) -> Scenario:
        return dataclasses.replace(self, **changes)


#: Where a scenario names data files: (section, key).
PATH_KEYS = (("weather", "path"), ("load", "path"), ("load", "grid_only_path"), ("grid", "outages_path"),
             ("measured", "path"), ("measured", "weather_path"))
