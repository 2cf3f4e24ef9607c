"""Caching at the edge of the page: the expensive parts of a simulation, kept across reruns and sessions.

* the site (weather, sun, loads, outages) per site — :func:`core.simulate.prepare_site`;
* one module's output per orientation, in one :class:`core.simulate.OrientationCache` per site,
  so that a panel-count change never recomputes irradiance;
* finished simulations per full scenario, so that moving a control back is instant.

Keys are text built from the scenario sections that matter (TOML with absolute paths), never pickled content.
"""

from __future__ import annotations

import dataclasses
import json

import streamlit as st

from core.scenario import Scenario, scenario_to_dict
from core.simulate import OrientationCache, SimulationResult, SiteData, prepare_site


def _key(sc: Scenario, sections: tuple[str, ...], extra: dict | None = None) -> str:
    table = scenario_to_dict(sc)
    part = {s: table.get(s) for s in sections}
    part["base_dir"] = str(sc.base_dir)
    if extra:
        part.update(extra)
    return json.dumps(part, sort_keys=True, default=str)


def _stamps(sc: Scenario) -> dict:
    """Size and modification time of each data file, so that a file changed on disk is read again."""
    out: dict[str, tuple[int, int] | None] = {}
    for name, path in sc.data_files().items():
        try:
            st_ = path.stat()
            out[name] = (st_.st_size, st_.st_mtime_ns)
        except (OSError, ValueError):
            out[name] = None  # the reader will say what is wrong
    return out


def site_key(sc: Scenario) -> str:
    """What :func:`prepare_site` depends on: place, weather, loads, the outage definitions and the files."""
    g = sc.grid
    outages = {"outages_path": g.outages_path,
               "random_outages": dataclasses.asdict(g.random_outages) if g.random_outages else None}
    return _key(sc, ("site", "weather", "load", "simulation"), {"outages": outages, "files": _stamps(sc)})


@st.cache_resource(max_entries=12, show_spinner=False)
def _site(key: str, _sc: Scenario) -> SiteData:
    return prepare_site(_sc)


@st.cache_resource(max_entries=12, show_spinner=False)
def _orientations(key: str) -> OrientationCache:
    return OrientationCache()


def site_data(sc: Scenario) -> SiteData:
    return _site(site_key(sc), sc)


def orientation_cache(sc: Scenario) -> OrientationCache:
    """One per site: the time base can depend on the load's resolution, so the site's whole key is used."""
    return _orientations(site_key(sc))


@st.cache_data(max_entries=24, show_spinner=False)
def _base_load(key: str, reference: str, _sc: Scenario, option: str) -> list[float]:
    from core.present.reference_loads import daytime_base_load_w

    return [float(v) for v in daytime_base_load_w(_sc, site_data(_sc), option)]


def daytime_base_load(sc: Scenario, option: str) -> list[float]:
    """The monthly daytime base load (W) of the loads the option's AC-coupled output meets first."""
    from core.present.reference_loads import reference_label

    return _base_load(site_key(sc), reference_label(sc, option), sc, option)


@st.cache_resource(max_entries=48, show_spinner=False)
def _comparison(key: str, _sc: Scenario):
    from core.analyses.compare import compare

    return compare(_sc, site=site_data(_sc), cache=orientation_cache(_sc))


def comparison_key(sc: Scenario) -> str:
    """What a comparison depends on: the site and every section of the system, the expansion and the tariff."""
    return site_key(sc) + _key(sc, ("modules", "battery", "inverter_charger", "controllers", "microinverters",
                                    "arrays", "grid", "expansion", "tariff"))


def comparison(sc: Scenario):
    """Every applicable option of the scenario (its expansion's layout) against the existing system:
    :func:`core.analyses.compare.compare` on the cached site and orientations."""
    return _comparison(comparison_key(sc), sc)


@st.cache_resource(max_entries=96, show_spinner=False)
def _built(key: str, _base: Scenario, controls):
    from explorer.state import build_scenario

    return build_scenario(_base, controls)


def built_scenario(identity: str, base: Scenario, controls) -> Scenario:
    """:func:`explorer.state.build_scenario` once per base scenario (``identity``: the chosen scenario and the
    uploads in use) and setting of the controls."""
    return _built(identity, base, controls)


@st.cache_resource(max_entries=48, show_spinner=False)
def _page_model(key: str, option: str, _sc: Scenario):
    from explorer.page_model import build_page_model

    return build_page_model(_sc, option, _comparison(key, _sc))


def page_model(sc: Scenario, option: str):
    """The page's figures for the chosen option (:class:`explorer.page_model.PageModel`), built once per
    setting from the cached comparison."""
    return _page_model(comparison_key(sc), option, sc)


@st.cache_resource(max_entries=24, show_spinner=False)
def _outage_draws(key: str, _sim: SimulationResult):
    from core.analyses.outage_draws import outage_draws

    return outage_draws(_sim.scenario, _sim.site, _sim.sources)


def outage_draws(sim: SimulationResult):
    """The scenario's random outage years through the engine (None without random outages)."""
    sc = sim.scenario
    return _outage_draws(site_key(sc) + _key(sc, ("modules", "battery", "inverter_charger", "controllers",
                                                  "microinverters", "arrays", "grid")), sim)


@st.cache_data(max_entries=48, show_spinner=False)
def _money(key: str, _sim: SimulationResult) -> dict:
    from core.analyses.running_costs import money

    return money(_sim)


def money(sim: SimulationResult) -> dict:
    """The year's bill and what the standing and idle draws cost (see core.analyses.running_costs)."""
    sc = sim.scenario
    return _money(site_key(sc) + _key(sc, ("modules", "battery", "inverter_charger", "controllers",
                                           "microinverters", "arrays", "grid", "tariff")), sim)
