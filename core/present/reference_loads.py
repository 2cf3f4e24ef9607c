"""Which loads an option's AC-coupled output meets first, and their daytime base load.

The base-load view (page and report) compares the new panels' AC-coupled output with the loads that take it
first; which loads those are depends on the option and on where the zero-export controller measures.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from core.model.loads import base_load_w
from core.scenario import Scenario


def reference_loads_w(sc: Scenario, site, option: str) -> pd.Series:
    """The loads an option's AC-coupled output offsets directly (W per step).

    With site metering the controller sees every load, so all loads count; with inverter metering the
    backed-up side output meets the backed-up loads and the grid-side output the grid-only loads.
    """
    if sc.grid.metering == "site":
        values = site.load_backed_w + site.load_grid_only_w
    elif option == "ac_grid":
        values = site.load_grid_only_w
    else:
        values = site.load_backed_w
    return pd.Series(np.asarray(values, dtype=float), index=site.index)


def reference_label(sc: Scenario, option: str) -> str:
    """The loads of :func:`reference_loads_w` in words."""
    if sc.grid.metering == "site":
        return "all loads (the controller meters the whole site)"
    return "grid-only loads" if option == "ac_grid" else "backed-up loads"


def daytime_base_load_w(sc: Scenario, site, option: str) -> np.ndarray:
    """Twelve monthly daytime base loads (W), NaN where a month has too little data."""
    table = base_load_w(reference_loads_w(sc, site, option), latitude=sc.site.latitude,
                        longitude=sc.site.longitude)
    return table["day_w"].to_numpy(dtype=float)
