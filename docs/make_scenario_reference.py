"""Writes the scenario reference in ``docs/design.md`` from the schema's dataclasses.

Every key of every section is listed with its type, unit, default, sensible range and meaning. Types,
defaults and ranges come from ``core/scenario/schema.py``; the meanings are written here, one per key. A test
(``tests/test_docs.py``) fails when a field has no meaning here, when a meaning names a key the schema does not
have, or when ``docs/design.md`` is not what this script writes — run ``python docs/make_scenario_reference.py``
after adding a key.
"""

from __future__ import annotations

import dataclasses
import sys
import types
import typing
from pathlib import Path
from typing import Literal

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from core.scenario import schema  # noqa: E402  (after the path is set)

DESIGN = ROOT / "docs" / "design.md"
BEGIN = "<!-- scenario reference: written by docs/make_scenario_reference.py; edit the meanings there -->"
END = "<!-- end of scenario reference -->"

#: Sections in file order: (header as written in the file, dataclass, a line about the section).
SECTIONS: tuple[tuple[str, type, str], ...] = (
    ("(top level)", schema.Scenario, "Keys outside any section."),
    ("[site]", schema.Site, "Where the system stands."),
    ("[weather]", schema.Weather, "The weather of a typical year: a file, or twelve monthly figures."),
    ("[load]", schema.Load, "The measured load: backed-up loads, and optionally the grid-only loads apart."),
    ("[modules.NAME]", schema.Module, "One PV module type from its datasheet (STC values); any number of them."),
    ("[battery]", schema.Battery, "The battery bank (optional: without it, no DC-coupled arrays)."),
    ("[inverter_charger]", schema.InverterCharger, "The battery inverter-charger that forms the backed-up AC bus."),
    ("[controllers.NAME]", schema.Controller, "One MPPT charge controller; arrays name it."),
    ("[microinverters.NAME]", schema.Microinverter, "One microinverter type; AC-coupled arrays name it."),
    ("[[arrays]]", schema.Array, "The existing PV arrays, one table each."),
    ("[[faces]]", schema.Face, "Roof faces where modules are or may go (optional)."),
    ("[[faces.obstacles]]", schema.Obstacle, "Boxes near a face that may shade it (optional)."),
    ("[grid]", schema.Grid, "The connection: export rules, standing draw, metering, outages."),
    ("[grid.charge_window]", schema.ChargeWindow, "Grid charging by the clock (optional; an inline table)."),
    ("[grid.random_outages]", schema.RandomOutages, "Outages drawn at random (optional; an inline table)."),
    ("[expansion]", schema.Expansion, "The panels being considered, and what each way of adding them costs."),
    ("[design]", schema.Design, "What a design search may buy and where it may put it (optional)."),
    ("[measured]", schema.Measured, "The existing system's monitoring export, for calibration (optional)."),
    ("[tariff]", schema.Tariff, "Prices and the horizon of the economics."),
    ("[[tariff.periods]]", schema.TariffPeriod, "Time-of-use import prices; the first matching period wins."),
    ("[simulation]", schema.SimulationSettings, "How the year is simulated."),
)

#: Keys of the top-level dataclass that are sections (listed under their own header) or not read from the file.
NOT_KEYS = {"site", "weather", "modules", "inverter_charger", "load", "battery", "controllers", "microinverters",
            "arrays", "faces", "grid", "expansion", "design", "measured", "tariff", "simulation", "base_dir", "confine_to"}

#: What each key means, in our words: ``"[section] key"`` → text.
MEANINGS: dict[str, str] = {
    "(top level) name": "The scenario's name, shown on the page, in reports and in download names.",
    "(top level) schema": "The file format's version; always 1.",
    "[site] latitude": "Latitude, north positive.",
    "[site] longitude": "Longitude, east positive.",
    "[site] altitude_m": "Height above sea level (clear-sky model and air pressure).",
    "[site] timezone": "IANA time zone name (e.g. \"Europe/Lisbon\"); found from latitude and longitude when left out. "
                       "Only its standard offset is used: the simulation runs in standard time.",
    "[weather] source": "\"file\": a weather file (`path`); \"monthly\": a year generated from twelve monthly figures.",
    "[weather] path": "The weather file, relative to the scenario file (EPW, TMY3, TMY2 or a simple CSV).",
    "[weather] format": "The file's format; detected from the extension and first lines when left out.",
    "[weather] ghi_kwh_m2_day": "Mean daily global horizontal irradiation per month, January first (from a solar "
                                "atlas); needed with source = \"monthly\".",
    "[weather] temp_air_c": "Mean air temperature per month, January first; needed with source = \"monthly\".",
    "[weather] seed": "Seed of the random generator for the monthly weather: the same seed gives the same year.",
    "[load] path": "Measured load of the backed-up loads (or of everything), relative to the scenario file.",
    "[load] column": "The column to read; found by its name or unit when left out.",
    "[load] unit": "What the numbers are: mean power (W, kW), energy per interval (Wh, kWh) or a cumulative meter "
                   "register (kWh_register); guessed from the header when left out.",
    "[load] timezone": "Time zone of timestamps without an offset; the site's when left out.",
    "[load] grid_only_path": "Measured load of the grid-only loads (dropped in an outage), if metered apart.",
    "[load] grid_only_column": "The column to read from the grid-only file.",
    "[load] monthly_kwh": "Monthly bills of the backed-up loads (or of everything), January first; -1 for a month "
                          "without a bill. Used to build a year from a few weeks of readings.",
    "[load] grid_only_monthly_kwh": "Monthly bills of the grid-only loads, January first; -1 for a month without one.",
    "[modules.NAME] pmax_w": "Rated power at STC.",
    "[modules.NAME] vmp_v": "Voltage at the maximum power point, STC.",
    "[modules.NAME] imp_a": "Current at the maximum power point, STC.",
    "[modules.NAME] voc_v": "Open-circuit voltage, STC.",
    "[modules.NAME] isc_a": "Short-circuit current, STC.",
    "[modules.NAME] gamma_pmax_pct_per_c": "Temperature coefficient of the maximum power.",
    "[modules.NAME] beta_voc_pct_per_c": "Temperature coefficient of the open-circuit voltage (string voltage checks).",
    "[modules.NAME] alpha_isc_pct_per_c": "Temperature coefficient of the short-circuit current.",
    "[modules.NAME] length_m": "The module's long side (row spacing, roof layout).",
    "[modules.NAME] width_m": "The module's short side.",
    "[modules.NAME] price": "Price of one module, in the tariff's currency (design search).",
    "[battery] usable_kwh": "Usable energy between empty and full.",
    "[battery] nominal_v": "Nominal voltage of the DC bus; currents × this voltage give the power limits.",
    "[battery] max_charge_a": "Largest charge current.",
    "[battery] max_discharge_a": "Largest discharge current.",
    "[battery] roundtrip_efficiency": "Energy out / energy in over a full cycle; charge and discharge each take "
                                      "its square root.",
    "[battery] reserve_pct": "Outage reserve: the state of charge kept back while the grid is up.",
    "[battery] floor_pct": "Floor: the lowest state of charge in an outage (not above the reserve).",
    "[battery] initial_pct": "State of charge at the start of the year.",
    "[inverter_charger] rating_w": "Continuous AC output rating.",
    "[inverter_charger] efficiency": "Inverting efficiency: one number, or a part-load curve "
                                     "[[load_fraction, efficiency], …] with rising load fractions.",
    "[inverter_charger] charger_rating_w": "AC input rating of the charger; the inverter's rating when left out.",
    "[inverter_charger] charger_efficiency": "Efficiency from AC input to the DC bus when charging.",
    "[inverter_charger] idle_w": "Own consumption while switched on, drawn from the DC bus.",
    "[inverter_charger] islanded_max_hz": "Highest frequency it shifts its islanded output to, to hold back "
                                          "AC-coupled PV in an outage (frequency-watt check).",
    "[controllers.NAME] max_pv_voltage_v": "Highest PV input voltage the controller survives.",
    "[controllers.NAME] mppt_min_v": "Lower end of the MPPT voltage window.",
    "[controllers.NAME] mppt_max_v": "Upper end of the MPPT voltage window.",
    "[controllers.NAME] max_input_current_a": "Highest PV input current.",
    "[controllers.NAME] max_charge_current_a": "Rated output (charge) current; × the battery voltage gives the "
                                               "output limit above which PV is clipped.",
    "[controllers.NAME] efficiency": "Conversion efficiency from PV input to the DC bus.",
    "[controllers.NAME] battery_margin_v": "How far the PV voltage must exceed the battery's to charge.",
    "[controllers.NAME] price": "Price of one more such controller, paid only when a design adds one.",
    "[microinverters.NAME] ac_rating_w": "Continuous AC output rating; DC above it is clipped.",
    "[microinverters.NAME] max_dc_input_w": "Largest recommended DC input power per unit.",
    "[microinverters.NAME] mppt_min_v": "Lower end of the MPPT voltage window.",
    "[microinverters.NAME] mppt_max_v": "Upper end of the MPPT voltage window.",
    "[microinverters.NAME] max_input_voltage_v": "Highest DC input voltage.",
    "[microinverters.NAME] max_input_current_a": "Highest DC input current per input.",
    "[microinverters.NAME] efficiency": "Conversion efficiency from DC to AC.",
    "[microinverters.NAME] inputs": "Modules one unit takes.",
    "[microinverters.NAME] grid_code": "The grid code whose over-frequency defaults apply: IEEE 1547-2018 (60 Hz) "
                                       "or EN 50549-1 (50 Hz).",
    "[microinverters.NAME] fw_start_hz": "Frequency where the power reduction starts; the grid code's default when "
                                         "left out.",
    "[microinverters.NAME] fw_droop_pct": "Droop of the power reduction, in % of the nominal frequency for the whole "
                                          "output; the grid code's default when left out.",
    "[microinverters.NAME] trip_hz": "Over-frequency trip; the grid code's default when left out.",
    "[microinverters.NAME] price": "Price of one unit, in the tariff's currency (design search).",
    "[[arrays]] name": "The array's name, unique in the file.",
    "[[arrays]] coupling": "\"dc\": on a charge controller; \"ac\": on microinverters.",
    "[[arrays]] module": "The module type, a name under [modules].",
    "[[arrays]] tilt_deg": "Tilt from horizontal; required unless the array names its face.",
    "[[arrays]] azimuth_deg": "Direction the modules face (180 = south, 90 = east); required unless the array "
                              "names its face.",
    "[[arrays]] face": "The [[faces]] entry it lies on; the array then takes the face's tilt and azimuth.",
    "[[arrays]] mount": "\"rack\" (open rack, cooler) or \"flush\" (close to the roof, hotter).",
    "[[arrays]] losses_pct": "Array losses before conversion: soiling, wiring, mismatch, ageing.",
    "[[arrays]] row_pitch_m": "Distance between racked rows, front to front; shading by the row in front when set.",
    "[[arrays]] controller": "DC-coupled: the charge controller, a name under [controllers].",
    "[[arrays]] modules_per_string": "DC-coupled: modules in series per string.",
    "[[arrays]] strings": "DC-coupled: strings in parallel.",
    "[[arrays]] side": "AC-coupled: \"backed_up\" (on the inverter-charger's output) or \"grid\" (before it).",
    "[[arrays]] microinverter": "AC-coupled: the microinverter type, a name under [microinverters].",
    "[[arrays]] modules": "AC-coupled: the number of modules.",
    "[[faces]] name": "The face's name, unique in the file.",
    "[[faces]] tilt_deg": "Tilt from horizontal.",
    "[[faces]] azimuth_deg": "Direction the face looks (180 = south).",
    "[[faces]] mount": "\"rack\" or \"flush\", for modules put on it.",
    "[[faces]] losses_pct": "Array losses for modules put on it.",
    "[[faces]] max_modules": "Modules the face holds in all, existing ones included.",
    "[[faces]] row_pitch_m": "Distance between racked rows on the face, front to front.",
    "[[faces]] rows": "Rows of modules in the layout (shading).",
    "[[faces]] columns": "Modules per row in the layout (shading).",
    "[[faces]] module_orientation": "\"portrait\" or \"landscape\".",
    "[[faces]] bypass_diodes": "Bypass diodes per module.",
    "[[faces]] horizon": "The horizon seen from the face as [azimuth, elevation] points in degrees, interpolated; "
                         "empty = flat.",
    "[[faces]] obstacles": "Boxes near the face, see [[faces.obstacles]].",
    "[[faces.obstacles]] name": "The obstacle's name.",
    "[[faces.obstacles]] azimuth_deg": "Direction from the face's centre (180 = south).",
    "[[faces.obstacles]] distance_m": "Horizontal distance from the face's centre.",
    "[[faces.obstacles]] height_m": "Top of the box above the face's lowest edge.",
    "[[faces.obstacles]] width_m": "Width of the box across the line of sight.",
    "[[faces.obstacles]] depth_m": "Depth of the box along the line of sight.",
    "[grid] export_allowed": "Whether the connection allows any export.",
    "[grid] export_limit_w": "Largest allowed export when export is allowed.",
    "[grid] standing_draw_w": "Standing draw: the small import the control keeps at the metering point so that it "
                              "never exports by accident.",
    "[grid] metering": "Where the control measures: \"site\" (the whole house, grid-only loads included) or "
                       "\"inverter\" (the inverter-charger's input only).",
    "[grid] ac_export_control": "How AC-coupled output is held back when loads and battery cannot take it: \"none\" "
                                "(it flows into the grid: uncontrolled export) or \"limiter\" (it is curtailed).",
    "[grid] recharge_reserve_from_grid": "Whether the charger lifts the battery back to the outage reserve from the "
                                         "grid.",
    "[grid] outages_path": "A CSV of outages (start, end), relative to the scenario file.",
    "[grid] random_outages": "Outages drawn at random, see [grid.random_outages].",
    "[grid.random_outages] per_year": "Mean number of outages a year.",
    "[grid.random_outages] mean_hours": "Mean length of an outage.",
    "[grid.random_outages] seed": "Seed of the random draw: the same seed gives the same outages.",
    "[expansion] module": "The module type of the added panels, a name under [modules].",
    "[expansion] count": "Panels to add.",
    "[expansion] tilt_deg": "Tilt of the added panels.",
    "[expansion] azimuth_deg": "Direction the added panels face (180 = south).",
    "[expansion] mount": "\"rack\" or \"flush\".",
    "[expansion] losses_pct": "Array losses of the added panels.",
    "[expansion] row_pitch_m": "Distance between racked rows of the added panels.",
    "[expansion] microinverter": "The microinverter for the AC-coupled options; without it they are not compared.",
    "[expansion] controller": "The controller for the DC-coupled option: an existing array's (used by both) or one no "
                              "array uses (added); without it the DC option is not compared.",
    "[expansion] modules_per_string": "DC-coupled option: modules in series per string.",
    "[expansion] strings": "DC-coupled option: strings in parallel.",
    "[expansion] restring": "DC-coupled option: the name of an existing DC-coupled array of the same module whose "
                            "modules are re-wired with the new ones as `modules_per_string` in series, on that "
                            "array's controller and face.",
    "[expansion] cost_ac": "Cost of the whole AC-coupled expansion at `count` panels; scaled per panel for "
                           "other counts.",
    "[expansion] cost_dc": "Cost of the whole DC-coupled expansion at `count` panels; scaled per panel.",
    "[expansion] coupling": "The option looked at first (\"ac_backed_up\", \"ac_grid\" or \"dc\"); all are "
                            "compared anyway.",
    "[measured] path": "The monitoring export (CSV), relative to the scenario file.",
    "[measured] unit": "Unit of the PV, grid-import and load columns: W, kW (mean power), Wh, kWh (energy per "
                       "interval) or kWh_register (a cumulative meter register); decided from the header when absent.",
    "[measured] pv": "The PV column: one name for all existing DC-coupled arrays, or a table {array name = column}.",
    "[measured] grid_import": "The grid-import column (optional): fits the standing draw.",
    "[measured] load": "The load column (optional): fits the base load.",
    "[measured] soc": "The battery state-of-charge column in % (optional): marks curtailed periods.",
    "[measured] timezone": "IANA time zone of naive timestamps in the export; the site's when absent.",
    "[measured] weather_path": "Measured weather of the same period (optional): fits hour by hour instead of on "
                               "clear-sky days.",
    "[expansion] face": "The [[faces]] entry the new panels go on: they take its mount, losses, layout and "
                        "surroundings (shading per module and substring) while tilt_deg and azimuth_deg are the "
                        "face's and they fit its layout; turned another way or more than it holds (the explorer's "
                        "controls, a sweep) they stand free.",
    "[modules.NAME] cells_in_series": "Cells in series in one module (for its I-V curve); estimated from Voc when "
                                      "absent.",
    "[simulation] mppt_tracker": "How a charge controller finds a shaded string's maximum power point: 'global' "
                                 "(a scanning tracker) or 'local' (one that stops on the first peak).",
    "[simulation] sub_hourly_sun": "Irradiance inside each hour when the step is finer than the weather's: "
                                   "'synthetic' (stochastic minutes that keep each hour's mean) or 'smooth'.",
    "[battery] taper_start_pct": "SOC where charge acceptance starts to fall (constant voltage); 100 turns the taper off.",
    "[battery] taper_end_fraction": "Charge power at full, as a share of the full charge power.",
    "[battery] discharge_taper_pct": "SOC below which the discharge limit falls towards zero.",
    "[battery] model": "How charge acceptance is modelled: 'taper' (CC/CV knee) or 'kibam' (Manwell & McGowan 1993).",
    "[battery] kibam_c": "Kinetic battery model: the share of charge in the available well.",
    "[battery] kibam_k_per_h": "Kinetic battery model: the rate constant between the two wells, per hour.",
    "[inverter_charger] transfer_ms": "Time the inverter-charger takes to take over the backed-up loads when the grid fails, ms (against the loads' ride-through).",
    "[microinverters.NAME] reconnect_s": "Wait after the grid returns before producing, s; the grid code's default when absent (IEEE 1547-2018 300 s, EN 50549-1 60 s).",
    "[grid] ac_control": "How AC-coupled output is held back: 'none' (what is not absorbed leaks), 'limiter', 'islanded' (backed-up side off-grid by default) or 'relay' (opens on SOC).",
    "[grid] relay_open_pct": "'relay': SOC at or above which the relay opens the microinverter circuit.",
    "[grid] relay_close_pct": "'relay': SOC at or below which it closes again (hysteresis).",
    "[grid] islanded_limiter": "'islanded': while connected, an export limiter curtails (else the surplus leaks).",
    "[grid] charge_window": "Grid charging by the clock: {hours = [start, end], target_pct}.",
    "[grid] momentary_per_month": "Expected short interruptions (under 5 minutes) a month.",
    "[grid] restore_delay_s": "Delay before grid-only loads come back after an interruption, s.",
    "[grid.charge_window] hours": "[start, end) local clock hours in which the charger may lift the SOC from the grid.",
    "[grid.charge_window] target_pct": "SOC the charger lifts the battery to inside the window.",
    "[grid.random_outages] draws": "Independent outage years run for the statistics (P50, P90, worst).",
    "[grid.random_outages] month_weights": "Twelve relative weights of outages by month (seasonality); even when absent.",
    "[tariff] fixed_per_month": "Fixed charge a month, in the tariff's currency.",
    "[tariff] holidays": "Country code (holidays package) whose public holidays are priced as weekend days.",
    "[tariff] periods": "Time-of-use periods ([[tariff.periods]]); import_price_per_kwh applies outside them.",
    "[[tariff.periods]] name": "The period's name, in words.",
    "[[tariff.periods]] price_per_kwh": "Import price inside the period, per kWh.",
    "[[tariff.periods]] hours": "[start, end) local clock hours (daylight saving applies).",
    "[[tariff.periods]] days": "'all', 'weekdays' or 'weekends' (holidays count as weekend days).",
    "[[tariff.periods]] months": "Months the period applies in (1…12); all when absent.",
    "[weather] max_distance_km": "Farthest the weather file's own location may lie from the site, km, before it is "
                                 "refused (a warning from 50 km).",
    "[design] module": "The module type the design search may add.",
    "[design] new_modules_max": "Most modules the search may add.",
    "[design] faces": "Faces it may use; every face with room when left out.",
    "[design] controllers": "Controllers it may use or add; all when left out.",
    "[design] microinverters": "Microinverters it may use; all when left out.",
    "[design] export_controls": "Ways of holding AC output back it may choose from (see grid.ac_export_control); "
                                "all when left out.",
    "[design] cost_fixed_dc": "Fixed cost of any DC-coupled arrangement.",
    "[design] cost_fixed_ac": "Fixed cost of any AC-coupled arrangement.",
    "[design] cost_per_module": "Installation cost per added module, besides its price.",
    "[design] cost_restring": "Cost of re-stringing existing modules.",
    "[design] cost_limiter": "Cost of an export limiter.",
    "[tariff] currency": "Currency of every price and cost in the file (a code or a symbol).",
    "[tariff] import_price_per_kwh": "Price of energy bought from the grid.",
    "[tariff] export_price_per_kwh": "Price paid for allowed export.",
    "[tariff] escalation_pct": "Yearly rise of the energy prices.",
    "[tariff] discount_pct": "Discount rate for the net present value.",
    "[tariff] years": "Horizon of the economics.",
    "[tariff] degradation_pct_per_year": "Yearly loss of PV output.",
    "[simulation] step_s": "Simulation step; when left out, the weather's own step, or the finer of weather and load when both "
                           "are finer than an hour. Loads are averaged and weather interpolated to it; "
                           "never finer than a minute.",
    "[simulation] design_low_temp_c": "Coldest design temperature for string voltage checks; the weather's coldest "
                                      "hour less a margin when left out.",
    "[simulation] design_high_temp_c": "Hottest design air temperature for the MPPT window checks; the weather's "
                                       "hottest hour when left out.",
}

#: Units read off a key's name, longest ending first.
SUFFIX_UNITS = (
    ("_kwh_m2_day", "kWh/m²/day"), ("_pct_per_year", "%/year"), ("_pct_per_c", "%/°C"), ("_per_kwh", "currency/kWh"),
    ("_kwh", "kWh"), ("_w", "W"), ("_v", "V"), ("_a", "A"), ("_c", "°C"), ("_deg", "°"), ("_pct", "%"), ("_m", "m"),
    ("_hz", "Hz"), ("_s", "s"), ("_hours", "h"),
)
NAME_UNITS = {"latitude": "°", "longitude": "°", "efficiency": "0…1", "roundtrip_efficiency": "0…1",
              "charger_efficiency": "0…1", "cost_ac": "currency", "cost_dc": "currency", "price": "currency",
              "per_year": "1/year", "years": "years"}


def unit_of(name: str) -> str:
    if name in NAME_UNITS:
        return NAME_UNITS[name]
    if name.startswith("cost_"):
        return "currency"
    return next((unit for suffix, unit in SUFFIX_UNITS if name.endswith(suffix)), "")


def type_of(tp: object, meta: typing.Mapping) -> str:
    origin, args = typing.get_origin(tp), typing.get_args(tp)
    if origin in (typing.Union, types.UnionType):
        options = [a for a in args if a is not type(None)]
        return " or ".join(type_of(a, meta) for a in options)
    if origin is Literal:
        return " \\| ".join(f'"{a}"' for a in args)
    if origin is tuple:
        if len(args) == 2 and args[1] is Ellipsis:
            count = meta.get("count")
            inner = type_of(args[0], {})
            if dataclasses.is_dataclass(args[0]):
                return "tables"
            return f"list of {count} {inner}s" if count else f"list of {inner}s"
        return "[" + ", ".join(type_of(a, {}) for a in args) + "]"
    if origin is dict:
        return "named tables"
    if dataclasses.is_dataclass(tp):
        return "table"
    return {bool: "true/false", str: "text", int: "whole number", float: "number"}.get(tp, str(tp))


def default_of(f: dataclasses.Field) -> str:
    if f.default is dataclasses.MISSING and f.default_factory is dataclasses.MISSING:
        return "required"
    if f.default_factory is not dataclasses.MISSING:
        return "see section"
    value = f.default
    if value is None:
        return "—"
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return f'"{value}"'
    if value == ():
        return "none"
    return f"{value:g}" if isinstance(value, float) else str(value)


def number(x: float) -> str:
    """A range limit as people write it: 1 000 000, not 1e+06; a minus sign, not a hyphen."""
    return format(x, ",.10g").replace(",", "\u202f").replace("-", "−")


def range_of(meta: typing.Mapping) -> str:
    lo, hi = meta.get("lo"), meta.get("hi")
    if lo is None and hi is None:
        return ""
    left = "" if lo is None else f"{'>' if meta.get('lo_open') else '≥'} {number(lo)}"
    right = "" if hi is None else f"≤ {number(hi)}"
    return ", ".join(part for part in (left, right) if part)


def keys_of(header: str, cls: type) -> list[tuple[str, dataclasses.Field, object]]:
    hints = typing.get_type_hints(cls)
    fields = [f for f in dataclasses.fields(cls) if f.init]
    if cls is schema.Scenario:
        fields = [f for f in fields if f.name not in NOT_KEYS]
    return [(f.name, f, hints[f.name]) for f in fields]


def reference() -> str:
    """The scenario reference as Markdown, between its two marker lines."""
    lines = [BEGIN, ""]
    for header, cls, about in SECTIONS:
        lines += [f"#### `{header}`" if header.startswith("[") else f"#### {header}", "", about, "",
                  "| key | type | unit | default | range | meaning |", "|---|---|---|---|---|---|"]
        for name, f, tp in keys_of(header, cls):
            meaning = MEANINGS.get(f"{header} {name}", "")
            cells = (f"`{name}`", type_of(tp, f.metadata), unit_of(name), default_of(f), range_of(f.metadata),
                     meaning)
            lines.append("| " + " | ".join(cells[:-1]) + " | " + meaning.replace("|", "\\|") + " |")
        lines.append("")
    lines.append(END)
    return "\n".join(lines)


def problems() -> list[str]:
    """Keys without a meaning and meanings without a key (empty when the reference is complete)."""
    keys = {f"{header} {name}" for header, cls, _ in SECTIONS for name, _, _ in keys_of(header, cls)}
    return ([f"no meaning for {k!r} in docs/make_scenario_reference.py" for k in sorted(keys - set(MEANINGS))]
            + [f"meaning for {k!r} names no key of the schema" for k in sorted(set(MEANINGS) - keys)])


def written(text: str) -> str:
    """``text`` (the design document) with its reference section replaced by the current one."""
    head, _, rest = text.partition(BEGIN)
    _, _, tail = rest.partition(END)
    return head + reference() + tail


def main() -> int:
    issues = problems()
    for line in issues:
        print(line, file=sys.stderr)
    text = DESIGN.read_text(encoding="utf-8")
    if BEGIN not in text or END not in text:
        print(f"{DESIGN} has no reference markers", file=sys.stderr)
        return 1
    DESIGN.write_text(written(text), encoding="utf-8")
    return 1 if issues else 0


if __name__ == "__main__":
    raise SystemExit(main())
