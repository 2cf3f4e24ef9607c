"""Resolution check: what an hourly model hides where the load is measured more finely.

AC-coupled output that exceeds the loads must go into the battery, be curtailed, or leak into the grid. Within an
hour a load switches on and off; an hourly mean smooths that away, and with it part of the surplus: for any
series, the mean of its positive part is at least the positive part of its mean (Jensen's inequality for the
convex function max(0, x)). So an hourly model can only understate the AC-coupled surplus, and with it export
and curtailment. This module runs the same option at the load's own step and hourly (two prepared sites:
weather, sun and loads at each step) and reports the difference.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import pandas as pd

from core.analyses.options import Layout, applicable_options, layout_of, with_option
from core.model import metrics
from core.model.metrics import Results
from core.scenario import Scenario
from core.simulate import OrientationCache, SimulationResult, SiteData, prepare_site, simulate
from core.timebase import MIN_STEP_S

HOUR_S = 3600


@dataclass(frozen=True)
class ResolutionCheck:
    """The same option at the native step and hourly; ``hidden`` = native minus hourly (kWh, h, W)."""

    option: str
    layout: Layout
    native_step_s: int
    applicable: bool  # False where the load is hourly or coarser (nothing is hidden)
    native: Results
    hourly: Results
    native_surplus: dict[str, float]
    hourly_surplus: dict[str, float]
    hidden: dict[str, float]
    sentence: str
    warnings: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        return {"option": self.option, "native_step_s": self.native_step_s, "applicable": self.applicable,
                "layout": dataclasses.asdict(self.layout), "native": self.native.to_dict(),
                "hourly": self.hourly.to_dict(), "native_surplus": self.native_surplus,
                "hourly_surplus": self.hourly_surplus, "hidden": self.hidden, "sentence": self.sentence}


def ac_surplus(steps: pd.DataFrame, dt_h: float) -> dict[str, float]:
    """AC-coupled output above the loads, before the battery or any curtailment takes it: the positive part of
    :func:`core.model.metrics.ac_surplus_w` (all loads; grid-side units stop in an outage) — energy (kWh), hours
    and the largest step mean (W)."""
    s = metrics.ac_surplus_w(steps["ac_backed_out_w"], steps["ac_grid_out_w"], steps["load_backed_w"],
                             steps["load_grid_only_w"], steps.get("grid_up"))
    pos = np.maximum(s, 0.0)
    return {"ac_surplus_kwh": float(pos.sum() * dt_h / 1000.0), "ac_surplus_hours": metrics.hours_with(pos, dt_h),
            "ac_surplus_peak_w": float(pos.max()) if pos.size else 0.0}


def _figures(sim: SimulationResult) -> dict[str, float]:
    e, h = sim.results.energy_kwh, sim.results.hours
    return {**ac_surplus(sim.steps, sim.site.dt_h), "exported_kwh": e["exported"],
            "exported_uncontrolled_kwh": e["exported_uncontrolled"], "export_hours": h["export"],
            "export_uncontrolled_hours": h["export_uncontrolled"], "curtailed_kwh": e["curtailed"],
            "grid_import_kwh": e["grid_import"], "battery_charge_kwh": e["battery_charge"], "load_kwh": e["load"]}


def _describe(native_step_s: int, hidden: dict[str, float], native: dict, hourly: dict, applicable: bool) -> str:
    if not applicable:
        return ("The load is hourly or coarser: an hourly model sees everything the data can show, and nothing is "
                "hidden.")
    minutes = native_step_s / 60.0
    step = f"{minutes:g}-minute" if minutes >= 1 else f"{native_step_s}-second"
    return (f"At the load's own {step} step the AC-coupled output exceeds the loads by {native['ac_surplus_kwh']:.0f} "
            f"kWh a year in {native['ac_surplus_hours']:.0f} hours (peak {native['ac_surplus_peak_w']:.0f} W); an hourly "
            f"model sees {hourly['ac_surplus_kwh']:.0f} kWh in {hourly['ac_surplus_hours']:.0f} hours. It hides "
            f"{hidden['ac_surplus_kwh']:.0f} kWh of surplus, {hidden['exported_kwh']:.1f} kWh of export "
            f"({hidden['exported_uncontrolled_kwh']:.1f} kWh uncontrolled, {hidden['export_uncontrolled_hours']:.0f} h); "
            f"curtailment differs by {hidden['curtailed_kwh']:+.0f} kWh.")


def compare_resolutions(sc_option: Scenario, native_site: SiteData, hourly_site: SiteData, *, option: str = "",
                        layout: Layout | None = None) -> ResolutionCheck:
    """Simulate one scenario (an option already applied) on two prepared sites and compare them.

    Each site gets its own OrientationCache: a cache holds module outputs for one time base only.
    """
    native = simulate(sc_option, native_site, OrientationCache())
    hourly = simulate(sc_option, hourly_site, OrientationCache()) if hourly_site is not native_site else native
    fn, fh = _figures(native), _figures(hourly)
    hidden = {k: fn[k] - fh[k] for k in fn}
    applicable = native_site.step_s < hourly_site.step_s
    return ResolutionCheck(option=option, layout=layout or layout_of(sc_option), native_step_s=native_site.step_s,
                           applicable=applicable, native=native.results, hourly=hourly.results, native_surplus=fn,
                           hourly_surplus=fh, hidden=hidden,
                           sentence=_describe(native_site.step_s, hidden, fn, fh, applicable))


def _with_step(sc: Scenario, step_s: int | None) -> Scenario:
    return dataclasses.replace(sc, simulation=dataclasses.replace(sc.simulation, step_s=step_s))


def resolution_check(sc: Scenario, option: str | None = None, layout: Layout | None = None, *,
                     native_step_s: int | None = None,
                     progress: Callable[[float, str], None] | None = None) -> ResolutionCheck:
    """The option (default: the first AC-coupled one that applies) at the native step and hourly.

    The native step is ``native_step_s`` if given, else ``[simulation] step_s``, else the measured load's own
    interval (read from the file), but never finer than a minute (``core.timebase.MIN_STEP_S``). Where it is an
    hour or more, the result says nothing is hidden.
    """
    if option is None:
        options = applicable_options(sc)
        option = next((o for o in ("ac_backed_up", "ac_grid", "dc") if o in options), "baseline")
    layout = layout or layout_of(sc)
    sc_option = with_option(sc, option, layout)
    if progress:
        progress(0.0, "hourly weather and loads")
    hourly_site = prepare_site(_with_step(sc, HOUR_S))
    if native_step_s is None:
        native_step_s = sc.simulation.step_s
    if native_step_s is None:
        quality = hourly_site.load_notes.get("backed_up", {}).get("quality")
        native_step_s = getattr(quality, "interval_s", None) or HOUR_S
    native_step_s = max(int(native_step_s), MIN_STEP_S)  # finer readings (e.g. 1 s) are averaged to a minute
    if native_step_s >= HOUR_S:
        native_site = hourly_site
    else:
        if progress:
            progress(0.3, f"{native_step_s} s weather and loads")
        native_site = prepare_site(_with_step(sc, native_step_s))
    if progress:
        progress(0.6, "simulating both")
    out = compare_resolutions(sc_option, native_site, hourly_site, option=option, layout=layout)
    if progress:
        progress(1.0, "done")
    # The importers' notes on the data (the same files at both steps), for the command line and the page.
    return dataclasses.replace(out, warnings=tuple(dict.fromkeys(native_site.warnings + hourly_site.warnings)))
