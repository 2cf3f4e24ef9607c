"""Design checks with cautions: is the expansion (and the system it joins) within its equipment's limits?

:func:`run_checks` applies every check to a scenario as given (its ``arrays``); :func:`check_options` runs them
for the existing system and for each expansion option, keeping for an option only what differs from the
existing system. Each :class:`Check` has an id, a status (pass / warn / fail), the value and the limit, one
plain sentence, its source, and — where the check concerns safety — its caution (docs/design.md §6).

One concern per file: :mod:`.strings` (DC strings on controllers), :mod:`.clipping` (controller output limit),
:mod:`.microinverter`, :mod:`.ac_coupling` (rating, battery absorption, uncontrolled export),
:mod:`.frequency_watt` (curtailment in an outage), :mod:`.spacing` (row gap and inter-row shading).
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from core.analyses.checks.ac_coupling import ac_coupling_checks
from core.analyses.checks.clipping import clipping_checks
from core.analyses.checks.common import (
    CAUTION_AC,
    CAUTION_BATTERY,
    CAUTION_DC,
    CAUTION_ESTIMATE,
    CAUTION_MICRO,
    CAUTION_STRUCTURE,
    Check,
    DesignTemperatures,
    design_temperatures,
    worst,
)
from core.analyses.checks.frequency_watt import frequency_watt_checks
from core.analyses.checks.microinverter import microinverter_checks
from core.analyses.checks.spacing import spacing_checks
from core.analyses.checks.strings import string_checks
from core.errors import InputError
from core.scenario import Scenario

__all__ = [
    "CAUTION_AC", "CAUTION_BATTERY", "CAUTION_DC", "CAUTION_ESTIMATE", "CAUTION_MICRO",
    "CAUTION_STRUCTURE", "Check", "DesignTemperatures", "check_options", "design_temperatures", "run_checks",
    "weather_temperatures", "worst",
]



def weather_temperatures(sc: Scenario) -> np.ndarray:
    """The air temperatures of the scenario's weather (°C per step), read without the rest of the site."""
    from core.simulate import load_weather

    return load_weather(sc).data["temp_air"].to_numpy(dtype=float)


def run_checks(sc: Scenario, sim=None, *, cache=None, option: str = "") -> list[Check]:
    """Every design check for the scenario's arrays as given.

    ``sim`` (a :class:`core.simulate.SimulationResult` of this scenario) adds the checks that need a year: clipping
    shares, the worst step's AC surplus, uncontrolled export, the annual inter-row shading loss; without it
    they fall back to nameplate figures or are left out. The design temperatures come from
    ``[simulation]`` when given, else from the simulation's weather, else from the weather file.
    ``cache`` (an OrientationCache) avoids recomputing module outputs.
    """
    if sim is not None:
        temp_air = sim.site.weather.data["temp_air"].to_numpy(dtype=float)
    elif sc.simulation.design_low_temp_c is not None and sc.simulation.design_high_temp_c is not None:
        temp_air = None
    else:
        temp_air = weather_temperatures(sc)
    try:
        temps = design_temperatures(sc, temp_air)
    except ValueError as exc:
        raise InputError(str(exc), where="simulation.design_low_temp_c",
                         hint="give design_low_temp_c and design_high_temp_c in [simulation]") from None
    per_array = None if sim is None else sim.sources.per_array_dc_w
    checks = [
        *string_checks(sc, temps),
        *clipping_checks(sc, sim, cache),
        *microinverter_checks(sc, temps, per_array),
        *ac_coupling_checks(sc, sim),
        *frequency_watt_checks(sc, sim),
        *spacing_checks(sc, sim),
    ]
    if option:
        import dataclasses

        checks = [dataclasses.replace(c, option=option) for c in checks]
    return checks


def same_check(a: Check, b: Check) -> bool:
    """Whether two checks found the same thing (an option's check equal to the existing system's is not its own)."""
    return (a.id, a.subject, a.status, a.value, a.limit, a.sentence) == (b.id, b.subject, b.status, b.value, b.limit,
                                                                         b.sentence)


_same = same_check


def check_options(sc: Scenario, *, layout=None, sims: dict | None = None, site=None, cache=None,
                  progress: Callable[[float, str], None] | None = None,
                  options: tuple[str, ...] | None = None) -> dict[str, list[Check]]:
    """Checks for the existing system (``"baseline"``) and each applicable expansion option.

    An option's list keeps only the checks that differ from the existing system's (the new panels' own checks,
    and system checks whose outcome they change). ``sims`` maps options to their simulations (for example from
    :func:`core.analyses.compare.compare`); missing ones are simulated here, sharing ``site`` and ``cache``.
    """
    from core.analyses.options import applicable_options, with_option
    from core.simulate import OrientationCache, prepare_site, simulate

    sims = dict(sims or {})
    options = ["baseline", *(o for o in (options or applicable_options(sc)) if o != "baseline")]
    cache = cache if cache is not None else OrientationCache()
    if any(o not in sims for o in options) and site is None:
        site = prepare_site(sc)
    out: dict[str, list[Check]] = {}
    for i, option in enumerate(options):
        if progress:
            progress(i / len(options), f"checks: {option}")
        sc_o = with_option(sc, option, layout)
        sim = sims.get(option) or simulate(sc_o, site, cache)
        checks = run_checks(sc_o, sim, cache=cache, option=option)
        if option != "baseline":
            base = out["baseline"]
            checks = [c for c in checks if not any(_same(c, b) for b in base)]
        out[option] = checks
    if progress:
        progress(1.0, "checks done")
    return out
