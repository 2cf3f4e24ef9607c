"""What every design check returns, the safety cautions they carry, and the design temperatures they use."""

from __future__ import annotations

from dataclasses import asdict, dataclass
from typing import Literal

import numpy as np

from core.scenario import Scenario

Status = Literal["pass", "warn", "fail"]
STATUSES: tuple[Status, ...] = ("pass", "warn", "fail")

#: The cautions of docs/design.md §6, one per kind of hazard; every check that concerns safety carries one.
CAUTION_DC = ("DC strings carry dangerous voltages and can arc: a string above the controller's voltage limit can "
              "destroy it and start a fire. Have the design checked and the work done by a qualified installer.")
CAUTION_AC = ("AC work and any grid-parallel generation must be done and signed off by a licensed electrician under "
              "local codes; many grid operators must be notified even of zero-export systems.")
CAUTION_MICRO = ("Microinverters must be certified for the local grid code, and AC work must be done and signed off "
                 "by a licensed electrician under local codes.")
CAUTION_BATTERY = ("Battery installation follows its maker's instructions and local fire rules; a battery pushed "
                   "past its charge limits is a fire risk.")
CAUTION_STRUCTURE = "Ballast and roof loads need a structural check."
CAUTION_ESTIMATE = "Results are estimates, not a design approval."

#: Margin below the weather's coldest hour for the design low temperature. A typical-year file (TMY) leaves
#: out the extreme cold nights that the NEC's design basis (ASHRAE extreme annual mean minimum dry-bulb,
#: NEC 690.7(A)(1) informational note) contains; 5 °C is our own conservative allowance.
DESIGN_LOW_MARGIN_C = 5.0
#: Irradiance and wind for the hot-cell design case: STC irradiance with a light breeze (common practice).
HOT_CELL_IRRADIANCE_W_M2 = 1000.0
HOT_CELL_WIND_M_S = 1.0


@dataclass(frozen=True)
class Check:
    """One design check.

    ``id`` names the rule (e.g. ``strings.voc_cold``), ``subject`` what it was applied to (a controller, an
    array, the system), ``value`` and ``limit`` the compared figures in ``unit``; ``sentence`` says in plain
    words what was found and what to do; ``source`` names the standard, or says "common practice" or "from
    memory"; ``caution`` is the safety caution (docs/design.md §6) for checks that concern safety; ``option`` is
    the expansion option the check was run for (empty for the scenario as given).
    """

    id: str
    status: Status
    value: float | None
    limit: float | None
    unit: str
    sentence: str
    source: str
    caution: str | None = None
    subject: str = ""
    option: str = ""

    def to_dict(self) -> dict:
        return asdict(self)


def worst(statuses) -> Status:
    """The worst of some statuses (fail > warn > pass); ``pass`` for none."""
    ranks = [STATUSES.index(s) for s in statuses]
    return STATUSES[max(ranks)] if ranks else "pass"


@dataclass(frozen=True)
class DesignTemperatures:
    """Air temperatures for the voltage checks, °C, and how each was found."""

    low_c: float
    high_air_c: float
    low_basis: str
    high_basis: str


def design_temperatures(sc: Scenario, temp_air_c: np.ndarray | None = None) -> DesignTemperatures:
    """The design low and high air temperatures.

    Low: ``simulation.design_low_temp_c`` when given, else the weather's coldest hour minus
    :data:`DESIGN_LOW_MARGIN_C`. High: ``simulation.design_high_temp_c`` when given, else the weather's hottest
    hour. Without either the weather (``temp_air_c``) or a given value, raises ValueError.
    """
    given_low, given_high = sc.simulation.design_low_temp_c, sc.simulation.design_high_temp_c
    t = None if temp_air_c is None else np.asarray(temp_air_c, dtype=float)
    if given_low is not None:
        low, low_basis = float(given_low), "given in the scenario (simulation.design_low_temp_c)"
    elif t is not None and t.size:
        coldest = float(np.nanmin(t))
        low = coldest - DESIGN_LOW_MARGIN_C
        low_basis = f"the weather's coldest hour ({coldest:.1f} °C) minus a {DESIGN_LOW_MARGIN_C:.0f} °C margin"
    else:
        raise ValueError("no design low temperature: give simulation.design_low_temp_c or the weather")
    if given_high is not None:
        high, high_basis = float(given_high), "given in the scenario (simulation.design_high_temp_c)"
    elif t is not None and t.size:
        high = float(np.nanmax(t))
        high_basis = "the weather's hottest hour"
    else:
        raise ValueError("no design high temperature: give simulation.design_high_temp_c or the weather")
    return DesignTemperatures(low_c=low, high_air_c=high, low_basis=low_basis, high_basis=high_basis)


def hot_cell_temperature_c(high_air_c: float, mount: str) -> float:
    """Cell temperature in full sun on the hottest hour: the SAPM model with the mount's parameters at
    1000 W/m² and 1 m/s wind (King et al., SAND2004-3535; the project's :func:`core.model.pv.cell_temperature`)."""
    from core.model.pv import cell_temperature

    return float(cell_temperature(np.array([HOT_CELL_IRRADIANCE_W_M2]), np.array([high_air_c]),
                                  np.array([HOT_CELL_WIND_M_S]), mount)[0])


def array_words(name: str) -> str:
    """An array as a check's sentence names it: the new panels (the option's added array, named "expansion" by
    :mod:`core.analyses.options`) in words, any other by its name."""
    return "The new panels" if name == "expansion" else f"Array '{name}'"
