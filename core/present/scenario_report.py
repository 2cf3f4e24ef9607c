"""The HTML report of a scenario file as it stands, without the page: what ``python -m core report`` writes.

It compares the existing system with every applicable option (:func:`core.analyses.compare.compare`), takes
the option the scenario looks at first (``[expansion] coupling``) or the one asked for, and fills the same
report the page downloads (:func:`core.present.report_html.report_html`).
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import pandas as pd

from core.analyses.checks import run_checks
from core.analyses.compare import Comparison, compare
from core.analyses.options import OPTION_LABELS, Layout, Option, with_option
from core.errors import InputError
from core.model.loads import base_load_w
from core.present.figures import headline_figures, secondary_figures
from core.present.formats import compass
from core.present.options_table import options_table
from core.present.report_html import report_html
from core.scenario import Scenario
from core.simulate import SimulationResult


@dataclass(frozen=True)
class ScenarioReport:
    html: str
    option: str
    simulation: SimulationResult  # the chosen option's year (for the steps CSV)
    comparison: Comparison


def chosen_option(sc: Scenario, comparison: Comparison, option: str | None) -> str:
    """The option asked for, else the scenario's own (``[expansion] coupling``), else the first one compared."""
    offered = [k for k in comparison.options if k != "baseline"]
    if option is not None:
        if option not in comparison.options:
            raise InputError(f"the option {option!r} cannot be built from this scenario", where="--option",
                             hint=f"options this scenario allows: {', '.join(offered) or 'none (no [expansion])'}")
        return option
    own = sc.expansion.coupling if sc.expansion is not None else None
    return own if own in comparison.options else (offered[0] if offered else "baseline")


def daytime_base_load_w(sc: Scenario, sim: SimulationResult, option: str) -> list[float]:
    """Twelve monthly daytime base loads (W) of the loads the option's AC-coupled output meets first: all loads
    with site metering; with inverter metering the grid-only loads for the grid side, else the backed-up ones."""
    site = sim.site
    if sc.grid.metering == "site":
        values = np.asarray(site.load_backed_w, float) + np.asarray(site.load_grid_only_w, float)
    elif option == "ac_grid":
        values = np.asarray(site.load_grid_only_w, float)
    else:
        values = np.asarray(site.load_backed_w, float)
    table = base_load_w(pd.Series(values, index=site.index), latitude=sc.site.latitude, longitude=sc.site.longitude)
    return [float(v) for v in table["day_w"].to_numpy(dtype=float)]


def settings_rows(sc: Scenario, option: str, layout: Layout) -> list[tuple[str, str]]:
    """The what-if in words: the option, the panels and the plant settings the figures depend on."""
    rows = [("Option", OPTION_LABELS[Option(option)])]
    e = sc.expansion
    if e is not None and option != "baseline":
        rows += [("Panels added", f"{layout.count} × {e.module} ({sc.modules[e.module].pmax_w:,.0f} W STC)"),
                 ("Tilt / azimuth",
                  f"{layout.tilt_deg:.0f}° / {layout.azimuth_deg:.0f}° ({compass(layout.azimuth_deg)})")]
        if option != "dc" and e.microinverter:
            rows.append(("Microinverter", e.microinverter))
        if option == "dc" and e.controller:
            rows.append(("Charge controller", e.controller))
    if sc.battery is not None:
        rows += [("Battery usable capacity", f"{sc.battery.usable_kwh:,.1f} kWh"),
                 ("Outage reserve / floor", f"{sc.battery.reserve_pct:.0f} % / {sc.battery.floor_pct:.0f} %")]
    g = sc.grid
    export = f"allowed up to {g.export_limit_w:,.0f} W" if g.export_allowed else "zero export"
    r = g.random_outages
    outages = ("Random outages: " + f"{r.per_year:g} per year, mean {r.mean_hours:g} h" if r is not None
               else "as in the scenario file" if g.outages_path else "none")
    rows += [("Standing draw", f"{g.standing_draw_w:,.0f} W"),
             ("Export", f"{export}; AC export control: {g.ac_control_mode}"),
             ("Outages", outages)]
    return rows


def scenario_report(sc: Scenario, *, option: str | None = None, layout: Layout | None = None,
                    progress: Callable[[float, str], None] | None = None,
                    today: dt.date | None = None) -> ScenarioReport:
    """Compare the options, pick one and write the report of it against the existing system."""
    comparison = compare(sc, layout, progress=progress)
    key = chosen_option(sc, comparison, option)
    chosen, baseline = comparison.options[key], comparison.options["baseline"].simulation
    sim, econ = chosen.simulation, chosen.economics
    payback = None
    if econ is not None and comparison.layout.count > 0:
        payback = econ.simple_payback_years if econ.simple_payback_years is not None else math.inf
    option_sc = with_option(sc, key, comparison.layout) if key != "baseline" else sc
    checks = run_checks(option_sc, sim, option=key)
    has_options = len(comparison.options) > 1
    text = report_html(sim, baseline, option_label=OPTION_LABELS[Option(key)],
                       headline=headline_figures(sim.results, baseline.results, payback_years=payback),
                       more=secondary_figures(sim, baseline), base_load_w=daytime_base_load_w(sc, sim, key),
                       options=options_table(comparison) if has_options else None,
                       verdict=comparison.verdict.text if has_options else None, checks=checks,
                       settings=settings_rows(sc, key, comparison.layout), today=today)
    return ScenarioReport(html=text, option=key, simulation=sim, comparison=comparison)
