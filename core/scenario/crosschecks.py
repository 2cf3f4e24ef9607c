"""Rules of a scenario that involve more than one key: references between sections, ranges that
depend on each other."""

from __future__ import annotations

import dataclasses
import difflib

from core.errors import InputError
from core.scenario.reader import Reader
from core.scenario.schema import AC_CONTROL_MODES, Scenario
from core.timebase import standard_offset


def cross_check(sc: Scenario, r: Reader) -> None:
    """References between sections, and rules that involve more than one key."""
    def ref(name: str | None, table: dict, where: str, kind: str) -> None:
        if name is None:
            r.fail(where, f"a {kind} must be named here")
        if name not in table:
            near = difflib.get_close_matches(name, list(table), n=1, cutoff=0.3)
            hint = f"did you mean {near[0]!r}?" if near else (
                f"defined: {', '.join(table)}" if table else f"add a [{kind}s.{name}] section")
            r.fail(where, f"no {kind} named {name!r}", hint)

    zones = [("site.timezone", sc.site.timezone), ("load.timezone", sc.load.timezone)]
    if sc.measured is not None:
        zones.append(("measured.timezone", sc.measured.timezone))
    for where, zone in zones:
        if zone is not None:
            try:
                standard_offset(zone)
            except InputError as exc:
                r.fail(where, exc.message, exc.hint)
    if sc.weather.source == "file" and not sc.weather.path:
        r.fail("weather.path", "source = 'file' needs a path", "give the weather file's path, relative to the scenario")
    if sc.weather.source == "monthly" and (sc.weather.ghi_kwh_m2_day is None or sc.weather.temp_air_c is None):
        r.fail("weather", "source = 'monthly' needs ghi_kwh_m2_day and temp_air_c (12 values each)")
    faces = {}
    for i, f in enumerate(sc.faces):
        if f.name in faces:
            r.fail(f"faces[{i}].name", f"the name {f.name!r} is used twice", "give every face its own name")
        faces[f.name] = f
        for j, (az, el) in enumerate(f.horizon):
            if not (0 <= az <= 360 and 0 <= el < 90):
                r.fail(f"faces[{i}].horizon[{j}]", f"({az}, {el}) is not an (azimuth 0…360°, elevation 0…90°) point")
    names = set()
    for i, a in enumerate(sc.arrays):
        where = f"arrays[{i}]"
        if a.name in names:
            r.fail(f"{where}.name", f"the name {a.name!r} is used twice", "give every array its own name")
        names.add(a.name)
        ref(a.module, sc.modules, f"{where}.module", "module")
        if a.face is not None:
            ref(a.face, faces, f"{where}.face", "face")
            for key in ("tilt_deg", "azimuth_deg"):
                mine, theirs = getattr(a, key), getattr(faces[a.face], key)
                if mine is not None and mine != theirs:
                    r.fail(f"{where}.{key}", f"{key} = {mine} disagrees with face {a.face!r}'s {key} = {theirs}",
                           f"leave {key} out of the array (it takes the face's), or make the two agree")
        else:
            for key in ("tilt_deg", "azimuth_deg"):
                if getattr(a, key) is None:
                    r.fail(f"{where}.{key}", "required key is missing", f"add {key} = …, or name the array's face")
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
    for name, m in sc.modules.items():
        _check_datasheet(name, m, r)
    for name, mi in sc.microinverters.items():
        if mi.mppt_min_v >= mi.mppt_max_v:
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
    grid_checks(sc, r)
    d = sc.design
    if d is not None:
        ref(d.module, sc.modules, "design.module", "module")
        for key, table, kind in (("faces", faces, "face"), ("controllers", sc.controllers, "controller"),
                                 ("microinverters", sc.microinverters, "microinverter")):
            for j, name in enumerate(getattr(d, key) or ()):
                ref(name, table, f"design.{key}[{j}]", kind)
        for j, mode in enumerate(d.export_controls or ()):
            if mode not in AC_CONTROL_MODES:
                r.fail(f"design.export_controls[{j}]", f"{mode!r} is not one of {', '.join(map(repr, AC_CONTROL_MODES))}")
    e = sc.expansion
    if e is not None:
        ref(e.module, sc.modules, "expansion.module", "module")
        if e.microinverter is not None:
            ref(e.microinverter, sc.microinverters, "expansion.microinverter", "microinverter")
        if e.controller is not None:
            ref(e.controller, sc.controllers, "expansion.controller", "controller")
        if e.face is not None:
            ref(e.face, faces, "expansion.face", "face")
        if e.restring is not None:
            _check_restring(sc, e, r)
    check_measured(sc, r)


def _check_restring(sc: Scenario, e, r: Reader) -> None:
    """``[expansion] restring`` names an existing DC-coupled array of the expansion's module."""
    target = next((a for a in sc.arrays if a.name == e.restring), None)
    dc = [a.name for a in sc.arrays if a.coupling == "dc"]
    if target is None or target.coupling != "dc":
        r.fail("expansion.restring", f"{e.restring!r} is not a DC-coupled array of this scenario",
               hint=f"one of {', '.join(map(repr, dc))}" if dc else "remove the key: no array is DC-coupled")
    elif e.module in sc.modules and target.module in sc.modules and sc.modules[target.module] != sc.modules[e.module]:
        r.fail("expansion.restring", f"array {e.restring!r} has module {target.module!r}, the expansion "
               f"{e.module!r}: only modules of the same kind share a string (common practice)",
               hint="re-string with the same module, or remove the key")


def check_measured(sc: Scenario, r: Reader) -> None:
    """The [measured] monitoring export: a path, at least one column, PV columns named after DC-coupled arrays."""
    m = sc.measured
    if m is None:
        return
    if not m.path:
        r.fail("measured.path", "the [measured] section needs the monitoring export's path",
               "give the CSV file's path, relative to the scenario")
    if m.pv is None and m.grid_import is None and m.load is None:
        r.fail("measured", "no column is named", "name at least one of pv, grid_import or load")
    dc_arrays = [a.name for a in sc.arrays if a.coupling == "dc"]
    if m.pv is not None and not dc_arrays:
        r.fail("measured.pv", "the scenario has no DC-coupled array to compare the PV column with",
               "add the existing arrays as [[arrays]] with coupling = 'dc'")
    if isinstance(m.pv, dict):
        if not m.pv:
            r.fail("measured.pv", "the table of array columns is empty", 'write pv = { "ARRAY NAME" = "COLUMN" }')
        for name in m.pv:
            if name not in dc_arrays:
                near = difflib.get_close_matches(name, dc_arrays, n=1, cutoff=0.3)
                r.fail(f"measured.pv.{name}", f"no DC-coupled array named {name!r}",
                       f"did you mean {near[0]!r}?" if near else f"DC-coupled arrays: {', '.join(dc_arrays)}")


def with_face_orientations(sc: Scenario) -> Scenario:
    """Arrays that name their face take its tilt and azimuth (checked to agree by :func:`cross_check`)."""
    faces = {f.name: f for f in sc.faces}
    arrays = tuple(a if a.face is None else dataclasses.replace(a, tilt_deg=faces[a.face].tilt_deg,
                                                                azimuth_deg=faces[a.face].azimuth_deg)
                   for a in sc.arrays)
    return dataclasses.replace(sc, arrays=arrays) if arrays != sc.arrays else sc


def _hours(r: Reader, where: str, hours: tuple[int, int]) -> None:
    start, end = hours
    if not (0 <= start <= 23 and 1 <= end <= 24) or start == end:
        r.fail(where, f"{list(hours)} is not a [start, end) pair of clock hours",
               "write [start, end] with start 0…23 and end 1…24, e.g. [16, 21]; [22, 6] wraps past midnight")


def grid_checks(sc: Scenario, r: Reader) -> None:
    """How AC output is held back, the charge window and the tariff's time-of-use periods."""
    g = sc.grid
    if g.ac_control is not None and g.ac_export_control is not None and g.ac_control != g.ac_export_control:
        r.fail("grid.ac_control", f"grid.ac_control = {g.ac_control!r} disagrees with grid.ac_export_control = "
               f"{g.ac_export_control!r} (its earlier name)", "keep only grid.ac_control")
    if g.ac_control_mode == "relay" and g.relay_close_pct >= g.relay_open_pct:
        r.fail("grid.relay_close_pct", f"the relay closes at {g.relay_close_pct} % but opens at {g.relay_open_pct} %",
               "the closing SOC must be below the opening SOC (hysteresis)")
    if g.charge_window is not None:
        _hours(r, "grid.charge_window.hours", g.charge_window.hours)
        if sc.battery is None:
            r.fail("grid.charge_window", "grid charging needs a [battery]")
    ro = g.random_outages
    if ro is not None and ro.month_weights is not None and sum(ro.month_weights) <= 0:
        r.fail("grid.random_outages.month_weights", "every month has weight 0: no outage could start",
               "give the months their relative outage rates, e.g. 1 for most and 3 for the storm season")
    t = sc.tariff
    for i, period in enumerate(t.periods):
        _hours(r, f"tariff.periods[{i}].hours", period.hours)
    if t.holidays is not None:
        try:
            import holidays
        except ImportError:  # pragma: no cover - a declared dependency
            r.fail("tariff.holidays", "the holidays package is not installed", "pip install holidays")
        if t.holidays not in holidays.list_supported_countries():
            near = difflib.get_close_matches(t.holidays, list(holidays.list_supported_countries()), n=1, cutoff=0.3)
            r.fail("tariff.holidays", f"{t.holidays!r} is not a country code the holidays package knows",
                   f"did you mean {near[0]!r}?" if near else "use an ISO 3166 code such as 'US' or 'DE'")


#: Largest mismatch accepted between a datasheet's Pmax and Vmp x Imp. The three printed figures agree within a
#: percent or two (common practice; all but a handful of the CEC database's modules within 5 %); 10 % leaves room
#: for rounded or hand-copied figures and still catches a wrong column or a wrong module.
DATASHEET_POWER_TOLERANCE = 0.10


def _check_datasheet(name: str, m, r: Reader) -> None:
    """A module's STC figures must describe one I-V curve: Vmp below Voc, Imp below Isc, Pmax = Vmp x Imp."""
    where = f"modules.{name}"
    if m.vmp_v >= m.voc_v:
        r.fail(f"{where}.vmp_v", f"Vmp {m.vmp_v:g} V is not below Voc {m.voc_v:g} V; no module works like that",
               "copy vmp_v and voc_v from the datasheet's STC column (Vmp is the lower one)")
    if m.imp_a >= m.isc_a:
        r.fail(f"{where}.imp_a", f"Imp {m.imp_a:g} A is not below Isc {m.isc_a:g} A; no module works like that",
               "copy imp_a and isc_a from the datasheet's STC column (Imp is the lower one)")
    product = m.vmp_v * m.imp_a
    if abs(m.pmax_w / product - 1.0) > DATASHEET_POWER_TOLERANCE:
        r.fail(f"{where}.pmax_w", f"Pmax {m.pmax_w:g} W differs from Vmp x Imp = {product:.0f} W by "
               f"{(m.pmax_w / product - 1.0) * 100:+.0f} %", "the three come from the same STC column of the "
               "datasheet and agree within a few per cent; check each")
