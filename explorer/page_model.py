"""The page model: everything the views draw, built once per rerun from the cached comparison.

Pure (no Streamlit): :func:`build_page_model` takes a validated scenario, the chosen option and the comparison
of every option (:func:`core.analyses.compare.compare`, cached at the page's edge) and returns one frozen
record. Every view is a function of it alone, so a view never recomputes what another already has.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from core.analyses.compare import Comparison
from core.analyses.options import Option, with_option
from core.present.figures import Headline, headline_figures, secondary_figures
from core.scenario import Scenario


@dataclass(frozen=True)
class PageModel:
    """One what-if setting on the page, computed."""

    scenario: Scenario  # the controls applied, without the new panels as an array
    option: str  # the sidebar's coupling: ac_backed_up, ac_grid or dc
    option_scenario: Scenario  # the scenario with the new panels added as that option
    comparison: Comparison  # of every applicable option
    headline: tuple[Headline, ...]
    more: tuple[Headline, ...]
    # The design checks compare already ran: those whose outcome the option changes (or adds), and the existing
    # system's own. Together they are every check of the option's scenario, none run twice.
    changed_checks: tuple
    existing_checks: tuple

    @property
    def chosen(self):
        """The chosen option's :class:`core.analyses.compare.OptionResult`."""
        return self.comparison.options[self.option]

    @property
    def sim(self):
        return self.chosen.simulation

    @property
    def baseline(self):
        return self.comparison.options["baseline"].simulation

    @property
    def label(self) -> str:
        return Option(self.option).label

    @property
    def count(self) -> int:
        return int(self.comparison.layout.count)


def build_page_model(sc: Scenario, option: str, comparison) -> PageModel:
    """The page's figures for ``option`` (a key of ``comparison.options``) of scenario ``sc``."""
    chosen = comparison.options[option]
    base = comparison.options["baseline"].simulation
    econ = chosen.economics
    payback = None
    if econ is not None and comparison.layout.count > 0:
        payback = econ.simple_payback_years if econ.simple_payback_years is not None else math.inf
    return PageModel(
        scenario=sc, option=option, option_scenario=with_option(sc, option), comparison=comparison,
        headline=tuple(headline_figures(chosen.simulation.results, base.results, payback_years=payback)),
        more=tuple(secondary_figures(chosen.simulation, base)), changed_checks=tuple(chosen.checks),
        existing_checks=tuple(comparison.options["baseline"].checks))
