"""The design search reads the one definition of every year figure (core.model.metrics.year_totals and delta)."""

from __future__ import annotations

import pytest

from core.analyses.design import search
from core.model import metrics
from core.scenario import load_scenario
from core.simulate import OrientationCache, prepare_site, simulate
from tests.test_design import MANGROVE


def test_search_figures_equal_a_full_simulation_through_metrics_delta():
    # The reference is the full orchestrator (core.simulate.simulate, the per-step table summarised by
    # metrics.summarise) of the design written as a scenario, against the existing system's year.
    sc = load_scenario(MANGROVE)
    site, cache = prepare_site(sc), OrientationCache()
    result = search(sc, site=site, cache=cache)
    base = simulate(sc, site, cache).results
    for d in [result.best["overall"], result.best["dc"], result.best["ac"]]:
        sim = simulate(d.scenario, site, cache).results
        ref = metrics.delta(base, sim)
        # self-consumed = harvested − exported (Luthander et al. 2015), as compare reports it
        assert d.added["self_consumed_kwh"] == pytest.approx(ref["self_consumed_added_kwh"], rel=1e-9, abs=1e-6)
        assert d.added["grid_import_saved_kwh"] == pytest.approx(ref["grid_import_saved_kwh"], rel=1e-9, abs=1e-6)
        assert d.added["curtailed_kwh"] == pytest.approx(ref["curtailed_added_kwh"], rel=1e-9, abs=1e-6)
        assert d.added["unserved_kwh"] == pytest.approx(ref["unserved_added_kwh"], rel=1e-9, abs=1e-6)
        assert d.figures["uncontrolled_hours"] == pytest.approx(sim.hours["export_uncontrolled"])
