"""Which quantity a load column holds: mean power (W, kW), energy per interval (Wh, kWh) or a cumulative
energy register (readings that only go up, with resets) — from the caller, the header, or the values.

When neither the caller nor the header states a unit, the values decide: a column whose readings rise at
95 % of steps or more and are large against their steps is a register; otherwise the unit is the one that
puts the median mean power nearest a typical household's 500 W on a log scale (our own heuristic; the reason
is stated in the data-quality summary and a warning asks the user to confirm).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from core.errors import InputError

UNITS = ("W", "kW", "Wh", "kWh", "Wh_register", "kWh_register")
POWER_UNITS = ("W", "kW")
ENERGY_UNITS = ("Wh", "kWh")
REGISTER_UNITS = ("Wh_register", "kWh_register")
#: W per unit of the column's values (power) or Wh per unit (energy, register).
SCALE = {"W": 1.0, "kW": 1000.0, "Wh": 1.0, "kWh": 1000.0, "Wh_register": 1.0, "kWh_register": 1000.0}
TYPICAL_HOUSEHOLD_W = 500.0

_UNIT_WORDS = ((re.compile(r"kilo[\s_-]*watt[\s_-]*hours?"), "kWh"), (re.compile(r"watt[\s_-]*hours?"), "Wh"),
               (re.compile(r"kilo[\s_-]*watts?"), "kW"), (re.compile(r"watts?"), "W"))
_UNIT_TOKEN = re.compile(r"(?<![a-z])(kwh|wh|kw|w)(?![a-z])")
_ENERGY_WORDS = ("energy", "consumption", "usage", "energie", "verbrauch", "consommation", "consumo", "import")
_POWER_WORDS = ("power", "load", "demand", "leistung", "puissance", "potencia")


@dataclass(frozen=True)
class UnitDecision:
    unit: str
    reason: str
    warnings: tuple[str, ...] = ()


def normalise_unit(unit: str) -> str:
    """Canonical spelling of a unit given by the caller; InputError for anything else."""
    key = str(unit).strip().lower().replace(" ", "_").replace("-", "_")
    for canonical in UNITS:
        if key == canonical.lower():
            return canonical
    if key in ("kwh_cumulative", "kwh_meter", "register", "kwh_total"):
        return "kWh_register"
    raise InputError(f"unknown unit {unit!r}", where="load.unit",
                     hint="use one of " + ", ".join(UNITS) + " (W/kW: mean power; Wh/kWh: energy per "
                          "interval; *_register: cumulative meter readings)")


def header_unit(name: str) -> str | None:
    """'W', 'kW', 'Wh' or 'kWh' when the header names a unit (e.g. 'power_w', 'Load [kW]', 'energy kWh')."""
    lowered = name.lower()
    for pattern, unit in _UNIT_WORDS:
        if pattern.search(lowered):
            return unit
    match = _UNIT_TOKEN.search(lowered)
    return {"w": "W", "kw": "kW", "wh": "Wh", "kwh": "kWh"}[match.group(1)] if match else None


def looks_like_register(values: np.ndarray) -> tuple[bool, int]:
    """(readings rise at ≥ 95 % of steps and sit far above their steps, number of drops)."""
    finite = values[np.isfinite(values)]
    if finite.size < 5:
        return False, 0
    steps = np.diff(finite)
    drops = int((steps < 0).sum())
    rises = steps[steps > 0]
    if rises.size == 0 or drops > 0.05 * steps.size:
        return False, drops
    return bool(np.median(finite) > 20 * np.median(rises)), drops


def _nearest_typical(candidates: dict[str, float]) -> str:
    """The unit whose implied median power (W) is nearest the typical household figure on a log scale."""
    def distance(watts: float) -> float:
        return abs(np.log10(max(watts, 1e-9) / TYPICAL_HOUSEHOLD_W))
    return min(candidates, key=lambda unit: distance(candidates[unit]))


def _median_positive(values: np.ndarray) -> float:
    positive = values[np.isfinite(values) & (values > 0)]
    return float(np.median(positive)) if positive.size else 0.0


def decide_unit(name: str, values: np.ndarray, interval_s: float, *, explicit: str | None = None,
                suffix: str | None = None, file: str | None = None) -> UnitDecision:
    """Decide the unit of a load column; ``values`` are the usable readings in time order.

    Where neither the caller nor the header says whether the column holds mean power or energy per interval, and
    the interval is not one hour (where the two readings agree), the column is refused: a guess would be wrong
    by the number of intervals per hour, silently. The message shows what each reading would mean."""
    register, drops = looks_like_register(values)
    lowered = name.lower()
    if explicit is not None:
        unit = normalise_unit(explicit)
        warnings = []
        if unit in REGISTER_UNITS and not register and values.size >= 5:
            warnings.append(f"column {name!r}: unit {unit} was given but the readings often go down; check "
                            "that the column is a cumulative meter register")
        elif unit not in REGISTER_UNITS and register:
            warnings.append(f"column {name!r}: unit {unit} was given but the readings only go up like a "
                            "meter register; if so, give unit = 'kWh_register'")
        return UnitDecision(unit, "given by the caller", tuple(warnings))
    stated = suffix or header_unit(name)
    source = f"the values carry the unit {suffix!r}" if suffix else f"the column header {name!r} names {stated}"
    rises = np.diff(values[np.isfinite(values)])
    median_rise = _median_positive(rises)
    if stated in POWER_UNITS:
        return UnitDecision(stated, f"{source}: mean power")
    if stated in ENERGY_UNITS:
        if register:
            return UnitDecision(f"{stated}_register", f"{source} and the readings only go up (drops: {drops}): "
                                "cumulative meter register")
        return UnitDecision(stated, f"{source} and the readings go up and down: energy per interval")
    if register:
        per_interval_w = median_rise * 3600.0 / max(interval_s, 1.0)
        unit = _nearest_typical({"kWh_register": per_interval_w * 1000.0, "Wh_register": per_interval_w})
        reason = (f"no unit in the header {name!r}; the readings only go up (drops: {drops}), so a cumulative "
                  f"register; {unit.split('_')[0]} puts the median use nearest a household's typical "
                  f"{TYPICAL_HOUSEHOLD_W:.0f} W")
        return UnitDecision(unit, reason, (f"column {name!r}: no unit in the header; read as {unit} — give "
                                           "load.unit if that is wrong",))
    level = _median_positive(values)
    if any(w in lowered for w in _ENERGY_WORDS) and not any(w in lowered for w in _POWER_WORDS):
        per_interval_w = level * 3600.0 / max(interval_s, 1.0)
        unit = _nearest_typical({"kWh": per_interval_w * 1000.0, "Wh": per_interval_w})
        reason = (f"no unit in the header {name!r}, which names energy: energy per interval; {unit} puts the "
                  f"median use nearest a household's typical {TYPICAL_HOUSEHOLD_W:.0f} W")
    else:
        if not any(w in lowered for w in _POWER_WORDS):
            _refuse_power_or_energy(name, values, interval_s, file)
        unit = _nearest_typical({"kW": level * 1000.0, "W": level})
        reason = (f"no unit in the header {name!r}: taken as mean power; {unit} puts the median nearest a "
                  f"household's typical {TYPICAL_HOUSEHOLD_W:.0f} W")
    return UnitDecision(unit, reason, (f"column {name!r}: no unit in the header; read as {unit} — give "
                                       "load.unit if that is wrong",))


#: Intervals within this many seconds of an hour read the same as power and as energy per interval.
_HOUR_TOLERANCE_S = 1.0


def _refuse_power_or_energy(name: str, values: np.ndarray, interval_s: float, file: str | None) -> None:
    """Raise InputError when a neutral header at a sub-hourly or multi-hour interval leaves power and energy per
    interval both possible; the message gives the year's use under each reading."""
    if abs(interval_s - 3600.0) <= _HOUR_TOLERANCE_S:
        return
    finite = values[np.isfinite(values)]
    mean = float(finite.mean()) if finite.size else 0.0
    level = _median_positive(values)
    power_unit = _nearest_typical({"kW": level * 1000.0, "W": level})
    energy_unit = _nearest_typical({"kWh": level * 3600.0 / interval_s * 1000.0, "Wh": level * 3600.0 / interval_s})
    as_power_kwh = mean * SCALE[power_unit] * 8760.0 / 1000.0
    as_energy_kwh = mean * SCALE[energy_unit] * 3600.0 / interval_s * 8760.0 / 1000.0
    minutes = interval_s / 60.0
    raise InputError(
        "has no unit, and its header does not say whether it holds mean power or energy per "
        f"interval: as {power_unit}: {as_power_kwh:,.0f} kWh a year; as {energy_unit} per {minutes:g}-minute "
        f"interval: {as_energy_kwh:,.0f} kWh a year", file=file, where=f"column {name!r}",
        hint=f"set load.unit = '{power_unit}' (mean power) or '{energy_unit}' (energy per interval) in the "
             "scenario (or name the unit in the header, e.g. 'power_w' or 'energy_wh')")
